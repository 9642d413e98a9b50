/**
 * What each command loads before it does its work: start-up is part of every run's cost, so a command loads the
 * code only some of its runs need (the HTML report, the card, a link's driver, the dashboard) only in those runs.
 * Checked by the list of modules the built CLI loads (a module-loading hook, test/helpers/record-loads.mjs), not by
 * timing.
 */
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { describe, expect, it } from 'vitest';
import { DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';
import { frameLines } from '../helpers/frames.js';
import { runCli, REPO_ROOT } from '../helpers/run-cli.js';

const HOOK_URL = pathToFileURL(join(REPO_ROOT, 'test/helpers/record-loads.mjs')).href;

/** The modules a run of the CLI loaded, as paths relative to the repository (node: builtins as they are). */
async function modulesLoadedBy(args: string[]): Promise<{ code: number | null; modules: string[]; stderr: string }> {
  const dir = mkdtempSync(join(tmpdir(), 'turnmargin-loads-'));
  const log = join(dir, 'loads.txt');
  writeFileSync(log, '');
  const nodeOptions = [process.env['NODE_OPTIONS'], `--import ${HOOK_URL}`].filter(Boolean).join(' ');
  const r = await runCli(args, { env: { NODE_OPTIONS: nodeOptions, TURNMARGIN_LOAD_LOG: log } });
  const root = pathToFileURL(REPO_ROOT).href;
  const modules = readFileSync(log, 'utf8')
    .split('\n')
    .filter((line) => line.length > 0)
    .map((url) => (url.startsWith(root) ? url.slice(root.length) : url));
  return { code: r.code, modules, stderr: r.stderr };
}

function flightFile(): string {
  const dir = mkdtempSync(join(tmpdir(), 'turnmargin-loads-'));
  const path = join(dir, 'flight.ndjson');
  writeFileSync(path, frameLines(20, 0, 0.1).join('\n') + '\n');
  return path;
}

const TERMINAL_AND_LINK_LIBRARIES = ['/node_modules/blessed/', '/node_modules/blessed-contrib/', '/node_modules/ws/'];
const SERIAL_DRIVER = ['/node_modules/serialport/', '/node_modules/@serialport/'];

/** The modules of these packages (matched anywhere in the URL: node_modules may be a link elsewhere). */
function loadedAny(modules: string[], packages: string[]): string[] {
  return modules.filter((m) => packages.some((p) => m.includes(p)));
}

describe('start-up: what each command loads (built CLI)', () => {
  it('records the modules a run loads (the HTML report when a review asks for HTML)', async () => {
    const run = await modulesLoadedBy(['review', flightFile(), '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'html']);
    expect(run.code).toBe(0);
    expect(run.modules).toContain('dist/src/cli/main.js');
    expect(run.modules).toContain('dist/src/report/html-report.js');
    expect(run.modules).toContain('dist/src/report/nv-plot-svg.js');
  });

  it('a review of one file loads neither the HTML, plot, card nor several-flight report code, nor any terminal, websocket or serial library', async () => {
    const run = await modulesLoadedBy(['review', flightFile(), '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json']);
    expect(run.code).toBe(0);
    expect(run.modules).toContain('dist/src/cli/commands/review.js');
    for (const unused of [
      'dist/src/report/html-report.js',
      'dist/src/report/nv-plot-svg.js',
      'dist/src/report/card-report.js',
      'dist/src/report/multi-review-report.js',
      'dist/src/cli/commands/card.js',
      'dist/src/core/card.js',
    ])
      expect(run.modules).not.toContain(unused);
    expect(loadedAny(run.modules, [...TERMINAL_AND_LINK_LIBRARIES, ...SERIAL_DRIVER])).toEqual([]);
  });

  it('a review with a card loads the card code it needs', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'turnmargin-loads-'));
    const card = join(dir, 'card.json');
    const made = await runCli(['card', '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json', '--out', card]);
    expect(made.code).toBe(0);
    const run = await modulesLoadedBy(['review', flightFile(), '--aircraft', DEMO_AIRFRAME_PATH, '--card', card]);
    expect(run.code).toBe(0);
    expect(run.modules).toContain('dist/src/core/card.js');
    expect(run.modules).toContain('dist/src/report/card-report.js');
  });

  it('check loads neither the review nor the card command', async () => {
    const run = await modulesLoadedBy(['check', flightFile(), '--aircraft', DEMO_AIRFRAME_PATH]);
    expect(run.code).toBe(0);
    expect(run.modules).toContain('dist/src/cli/commands/check.js');
    expect(run.modules).not.toContain('dist/src/cli/commands/review.js');
    expect(run.modules).not.toContain('dist/src/cli/commands/card.js');
    expect(loadedAny(run.modules, [...TERMINAL_AND_LINK_LIBRARIES, ...SERIAL_DRIVER])).toEqual([]);
  });

  it('envelope loads no terminal, websocket or serial library', async () => {
    const run = await modulesLoadedBy(['envelope', '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'json']);
    expect(run.code).toBe(0);
    expect(run.modules).toContain('dist/src/cli/commands/envelope.js');
    expect(loadedAny(run.modules, [...TERMINAL_AND_LINK_LIBRARIES, ...SERIAL_DRIVER])).toEqual([]);
  });

  it('--help and --version load no command and no library', async () => {
    for (const flag of ['--help', '--version']) {
      const run = await modulesLoadedBy([flag]);
      expect(run.code).toBe(0);
      expect(run.modules).toContain('dist/src/cli/main.js');
      expect(run.modules.filter((m) => m.startsWith('dist/src/cli/commands/'))).toEqual([]);
      expect(run.modules.filter((m) => m.includes('node_modules/'))).toEqual([]);
    }
  });

  it('watch with a UDP link loads neither ws nor the serial driver', async () => {
    // A missing airframe stops the run after the link is set up, before anything listens.
    const run = await modulesLoadedBy(['watch', '--udp', '127.0.0.1:0', '--aircraft', 'no-such-airframe.json']);
    expect(run.code).toBe(2);
    expect(run.modules).toContain('dist/src/sources/udp.js');
    expect(run.stderr).toContain('no-such-airframe.json');
    expect(run.modules).toContain('dist/src/cli/commands/watch.js');
    expect(loadedAny(run.modules, ['node_modules/ws/', ...SERIAL_DRIVER])).toEqual([]);
  });

  it('simulate loads the serial driver only to write to a serial port', async () => {
    const run = await modulesLoadedBy(['simulate', '--help']);
    expect(run.code).toBe(0);
    expect(run.modules).toContain('dist/src/cli/commands/simulate.js');
    expect(loadedAny(run.modules, [...TERMINAL_AND_LINK_LIBRARIES, ...SERIAL_DRIVER])).toEqual([]);
  });
});
