/** Placeholder until its issue lands: the command exists in the table but is not implemented yet. */
import type { CommandSpec, ParsedArgs } from '../args.js';

export const spec: CommandSpec = {
  name: 'simulate',
  summary: 'not implemented yet',
  usage: 'turnmargin simulate',
  options: [],
};

export async function run(_args: ParsedArgs): Promise<number> {
  process.stderr.write('turnmargin: simulate is not implemented yet\n');
  return 2;
}
