// `npm run report:screenshot`: make the demo flight's HTML report from replays/ and photograph it with headless
// Chromium (Debian's `chromium` package; another binary through the CHROMIUM environment variable).
// Writes docs/demo-report.html and docs/demo-report.png. Run after `npm run build` (the npm script does it).
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const html = join(root, 'docs', 'demo-report.html');
const png = join(root, 'docs', 'demo-report.png');
const width = Number(process.env.SCREENSHOT_WIDTH ?? 1100);
const height = Number(process.env.SCREENSHOT_HEIGHT ?? 3400);

function run(command, args, quiet = false) {
  // Chromium logs harmless complaints (no D-Bus in a container): its stderr is shown only when it fails.
  const r = spawnSync(command, args, { cwd: root, stdio: ['ignore', 'inherit', quiet ? 'pipe' : 'inherit'] });
  if (r.error) {
    process.stderr.write(`report:screenshot: cannot run ${command} (${r.error.message})\n`);
    if (command !== process.execPath)
      process.stderr.write('install Chromium (Debian: apt-get install chromium) or set CHROMIUM to its path\n');
    process.exit(2);
  }
  if (r.status !== 0) {
    if (quiet && r.stderr) process.stderr.write(r.stderr);
    process.stderr.write(`report:screenshot: ${command} exited with ${r.status}\n`);
    process.exit(r.status ?? 1);
  }
}

run(process.execPath, [
  join(root, 'dist/src/cli/main.js'),
  'review',
  'replays/demo-flight.ndjson',
  '--aircraft',
  'replays/demo-airframe.json',
  '--format',
  'html',
  '--out',
  'docs/demo-report.html',
  '--force',
]);

const chromium = process.env.CHROMIUM ?? 'chromium';
const args = [
  '--headless',
  '--disable-gpu',
  '--hide-scrollbars',
  '--no-first-run',
  '--force-device-scale-factor=1',
  `--window-size=${width},${height}`,
  `--screenshot=${png}`,
  pathToFileURL(html).href,
];
// Chromium refuses to run as root with its sandbox on (containers, CI).
if (process.getuid?.() === 0) args.unshift('--no-sandbox');
run(chromium, args, true);
if (!existsSync(png)) {
  process.stderr.write('report:screenshot: Chromium wrote no picture\n');
  process.exit(1);
}
process.stdout.write(`written: docs/demo-report.html, docs/demo-report.png (${width}×${height})\n`);
