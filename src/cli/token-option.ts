/** The token options of serve and watch --ws, apart from both so that neither loads the other. */
import { readFileSync } from 'node:fs';
import { stringOption, type ParsedArgs } from './args.js';
import { InputError, UsageError } from '../errors.js';

/** --token T or --token-file FILE (its first line); undefined when neither is given. Shared with `watch --ws`. */
export function readToken(args: ParsedArgs): string | undefined {
  const given = stringOption(args, 'token');
  const file = stringOption(args, 'token-file');
  if (given !== undefined && file !== undefined) throw new UsageError('give --token or --token-file, not both');
  let token = given;
  if (file !== undefined) {
    try {
      token = (readFileSync(file, 'utf8').split(/\r?\n/)[0] ?? '').trim();
    } catch (err) {
      throw new InputError([
        `--token-file ${file}: cannot read it (${(err as NodeJS.ErrnoException).code ?? (err as Error).message})`,
      ]);
    }
    if (token === '') throw new InputError([`--token-file ${file}: the first line is empty`]);
  }
  if (token !== undefined && token.length === 0) throw new UsageError('--token must not be empty');
  return token;
}
