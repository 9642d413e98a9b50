/**
 * The program as users run it (`bin`, `npm start`): the compiled modules of dist/src bundled into a few files in
 * dist/cli, so that start-up reads and links a handful of files instead of about 150. Start-up is part of every
 * run's cost: the bundle starts `review` about 50 ms sooner on one core.
 *
 * What loads lazily stays lazy: each dynamic import becomes a chunk of its own (splitting), and the review worker is
 * an entry of its own next to main.js (review-flights finds it as ./review-worker.js). The terminal, serial and
 * websocket libraries are CommonJS packages loaded only by the commands that open them: they stay outside, resolved
 * from node_modules as before. The tests run the modules of dist/src; test/cli/bundle.test.ts checks that the bundle
 * answers the same.
 */
import { build } from 'esbuild';
import { chmodSync, rmSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const outdir = join(root, 'dist/cli');
rmSync(outdir, { recursive: true, force: true });
await build({
  absWorkingDir: root,
  entryPoints: ['dist/src/cli/main.js', 'dist/src/cli/review-worker.js'],
  outdir,
  bundle: true,
  splitting: true,
  format: 'esm',
  platform: 'node',
  target: 'node20',
  external: ['blessed', 'blessed-contrib', 'serialport', '@serialport/*', 'ws'],
  logLevel: 'warning',
});
// The bin: runnable by its first line (which gives Node its options), as npm makes it when installed.
chmodSync(join(outdir, 'main.js'), 0o755);
