// Loaded with `node --import` by test/cli/startup-loads.test.ts: appends the URL of every module the program loads
// (ESM files, node: builtins, the entry file of a CommonJS package) to the file named by TURNMARGIN_LOAD_LOG.
import { appendFileSync } from 'node:fs';
import { register } from 'node:module';
import { isMainThread } from 'node:worker_threads';

const log = process.env.TURNMARGIN_LOAD_LOG;
// The hooks below run in a thread of their own; register them from the program's main thread only.
if (isMainThread && log) register(import.meta.url);

export async function load(url, context, next) {
  if (log) appendFileSync(log, `${url}\n`);
  return next(url, context);
}
