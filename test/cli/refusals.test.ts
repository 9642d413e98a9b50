/**
 * Clear refusals instead of crashes or surprises: unreadable inputs, hostile configuration files, output paths that
 * would destroy an input or hang, empty paths; and the tidier command line (help, version, suggestions).
 */
import { spawn } from 'node:child_process';
import {
  chmodSync,
  existsSync,
  linkSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { execFileSync } from 'node:child_process';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_AIRFRAME_PATH, exampleAirframeJson } from '../helpers/airframes.js';
import { CLI_PATH, REPO_ROOT, runCli } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-refusals-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const DEMO_FLIGHT = join(REPO_ROOT, 'replays/demo-flight.ndjson');
const NO_STACK = /\n\s+at /;

function file(name: string, text: string): string {
  const path = join(dir, name);
  writeFileSync(path, text);
  return path;
}

const airframeText = JSON.stringify(exampleAirframeJson(), null, 2);
const plan = file(
  'plan.json',
  JSON.stringify({
    name: 'short',
    start: { alt_m: 100, tas_mps: 18 },
    segments: [{ type: 'straight', duration_s: 1 }],
  }),
);
const csv = file('log.csv', 't,speed,alt,bank\n0,18,100,0\n0.1,18,100,0\n');

describe('unusable inputs are refused with their name and exit 2, never a stack trace', () => {
  it('replay of a file that cannot be read exits 2 naming it, not 0 with "lines 0"', async () => {
    // /proc/self/mem opens but every read at offset 0 fails (EIO), even for root.
    const r = await runCli(['replay', '/proc/self/mem', '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui', '--speed', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('/proc/self/mem: cannot read the flight file');
    expect(r.stderr).not.toContain('lines 0');
  });

  it.runIf(process.getuid?.() !== 0)('replay of a file without read permission exits 2 naming it', async () => {
    const locked = file('locked.ndjson', readFileSync(DEMO_FLIGHT, 'utf8'));
    chmodSync(locked, 0o000);
    const r = await runCli(['replay', locked, '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui', '--speed', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`${locked}: cannot read the flight file (permission denied)`);
  });

  it('a mapping file with the key "constructor" (or "__proto__", "toString") gets a message', async () => {
    for (const key of ['constructor', '__proto__', 'toString']) {
      const mapping = file(`map-${key}.json`, `{"keys":{"${key}":{"column":"speed","unit":"m/s"}}}`);
      const r = await runCli(['review', csv, '--aircraft', DEMO_AIRFRAME_PATH, '--mapping', mapping]);
      expect(r.code, key).toBe(2);
      expect(r.stderr, key).not.toMatch(NO_STACK);
      // "__proto__" cannot survive as a key of a parsed object: that mapping maps nothing, and the log is refused.
      if (key !== '__proto__') expect(r.stderr, key).toContain(`keys.${key} is not a frame key`);
    }
  });

  it('configuration files nested 100 000 levels deep give a message naming the file, for every kind', async () => {
    const deep = file('deep.json', '['.repeat(100_000));
    const deepClosed = file('deep-closed.json', '['.repeat(100_000) + ']'.repeat(100_000));
    const runs: Array<[string[], string]> = [
      [['envelope', '--aircraft', deep], 'airframe'],
      [['envelope', '--aircraft', deepClosed], 'airframe'],
      [['replay', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--thresholds', deepClosed, '--no-ui'], 'thresholds'],
      [['simulate', '--aircraft', DEMO_AIRFRAME_PATH, '--plan', deepClosed], 'plan'],
      [['review', csv, '--aircraft', DEMO_AIRFRAME_PATH, '--mapping', deepClosed], 'mapping'],
    ];
    for (const [args, what] of runs) {
      const r = await runCli(args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).not.toMatch(NO_STACK);
      expect(r.stderr).toMatch(
        new RegExp(`deep(-closed)?\\.json: line 1, column 65: the ${what} file is nested more than 64 levels deep`),
      );
    }
  });

  it('a JSON error in a configuration file gives its line and column', async () => {
    const bad = file('trailing-comma.json', airframeText.replace(/\n}$/, ',\n}'));
    const r = await runCli(['envelope', '--aircraft', bad]);
    expect(r.code).toBe(2);
    const lines = airframeText.split('\n').length;
    expect(r.stderr).toContain(`trailing-comma.json: line ${lines}, column 1: the airframe file is not valid JSON`);
  });
});

describe('output files', () => {
  const airframe = file('af.json', airframeText);
  const symlinked = join(dir, 'af-symlink.json');
  symlinkSync(airframe, symlinked);
  const hardLinked = join(dir, 'af-hardlink.json');
  linkSync(airframe, hardLinked);

  it('--force never writes over an input, whether named as is, through a symlink or a hard link', async () => {
    for (const target of [airframe, symlinked, hardLinked]) {
      const runs = [
        ['watch', '--ws', 'ws://127.0.0.1:1', '--aircraft', airframe, '--record', target, '--force', '--no-ui'],
        ['simulate', '--aircraft', airframe, '--plan', plan, '--out', target, '--force'],
        ['review', DEMO_FLIGHT, '--aircraft', airframe, '--per-frame', target, '--force'],
      ];
      for (const args of runs) {
        const r = await runCli(args, { timeoutMs: 15_000 });
        expect(r.code, args.join(' ')).toBe(2);
        expect(r.stderr).toContain('is the --aircraft file');
        expect(r.stderr).toContain('--force does not allow that');
      }
    }
    expect(readFileSync(airframe, 'utf8')).toBe(airframeText);
  });

  it('--record refuses a FIFO at once (no hang waiting for a reader) and calls a directory a directory', async () => {
    const fifo = join(dir, 'record.fifo');
    execFileSync('mkfifo', [fifo]);
    const folder = join(dir, 'a-folder');
    mkdirSync(folder);
    for (const [target, why] of [
      [fifo, 'is a FIFO (named pipe)'],
      [folder, 'is a directory'],
    ] as const) {
      for (const force of [[], ['--force']]) {
        const r = await runCli(
          ['watch', '--ws', 'ws://127.0.0.1:1', '--aircraft', airframe, '--record', target, ...force, '--no-ui'],
          { timeoutMs: 15_000 },
        );
        expect(r.code, target).toBe(2);
        expect(r.stderr).toContain(`--record ${target}: ${why}`);
        expect(r.stderr).not.toContain('exists');
      }
    }
  });

  it('refuses empty paths instead of writing into the current directory', async () => {
    for (const args of [
      ['serve', '--aircraft', airframe, '--record', ''],
      ['watch', '--ws', 'ws://127.0.0.1:1', '--aircraft', airframe, '--record', '', '--no-ui'],
      ['review', DEMO_FLIGHT, '--aircraft', airframe, '--per-frame', ''],
      ['simulate', '--aircraft', airframe, '--plan', plan, '--out', ''],
    ]) {
      const r = await runCli(args, { timeoutMs: 15_000 });
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toMatch(/--(record|per-frame|out) \S+ must not be empty/);
    }
  });

  it('every output option refuses an existing file without --force and replaces it with --force', async () => {
    const existing = file('existing.svg', 'keep me');
    const existingNdjson = file('existing.ndjson', 'keep me');
    const runs = [
      ['review', DEMO_FLIGHT, '--aircraft', airframe, '--plot', existing],
      ['review', DEMO_FLIGHT, '--aircraft', airframe, '--per-frame', existingNdjson],
      ['simulate', '--aircraft', airframe, '--plan', plan, '--out', existingNdjson, '--quiet'],
      ['watch', '--ws', 'ws://127.0.0.1:1', '--aircraft', airframe, '--record', existingNdjson, '--no-ui'],
    ];
    for (const args of runs) {
      const r = await runCli(args, { timeoutMs: 15_000 });
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toMatch(/: the file exists; give --force to overwrite it/);
    }
    expect(readFileSync(existing, 'utf8')).toBe('keep me');
    expect(readFileSync(existingNdjson, 'utf8')).toBe('keep me');
    const forced = await runCli(['review', DEMO_FLIGHT, '--aircraft', airframe, '--plot', existing, '--force']);
    expect(forced.code, forced.stderr).toBe(0);
    expect(readFileSync(existing, 'utf8')).toMatch(/^<\?xml|^<svg/);
  });

  it('--plot refuses a name that does not end in .svg', async () => {
    const r = await runCli(['review', DEMO_FLIGHT, '--aircraft', airframe, '--plot', join(dir, 'plot.png')]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('the file name must end in .svg');
    expect(existsSync(join(dir, 'plot.png'))).toBe(false);
  });

  it('an interrupted --per-frame leaves no file under its name, and no temporary file either', async () => {
    // A long flight (invented frames): the review is still writing when it is interrupted.
    const lines: string[] = [];
    for (let i = 0; i < 300_000; i++) {
      lines.push(`{"t_s":${(i * 0.01).toFixed(2)},"tas_mps":18,"alt_m":100,"bank_deg":${(i % 600) / 20}}`);
    }
    const long = file('long.ndjson', lines.join('\n') + '\n');
    const out = join(dir, 'per-frame-out');
    mkdirSync(out);
    const target = join(out, 'records.ndjson');
    const child = spawn(process.execPath, [CLI_PATH, 'review', long, '--aircraft', airframe, '--per-frame', target], {
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
    // Interrupt once the work has begun (the temporary file is there), or give up after 20 s.
    for (let i = 0; i < 400 && readdirSync(out).length === 0 && child.exitCode === null; i++) {
      await new Promise((r) => setTimeout(r, 50));
    }
    expect(readdirSync(out).length, 'the review wrote nothing before finishing').toBeGreaterThan(0);
    expect(existsSync(target)).toBe(false);
    child.kill('SIGINT');
    expect(await exited).toBe(130);
    expect(stderr).not.toMatch(NO_STACK);
    expect(readdirSync(out)).toEqual([]);
  });
});

describe('a tidier command line', () => {
  it('turnmargin --help lists the commands one line each, the options stay in each command --help', async () => {
    const r = await runCli(['--help']);
    expect(r.code).toBe(0);
    const commands = ['envelope', 'watch', 'replay', 'review', 'fit', 'check', 'serve', 'card', 'simulate', 'demo'];
    for (const c of commands) expect(r.stdout.match(new RegExp(`^  ${c} +\\S`, 'gm'))?.length, c).toBe(1);
    expect(r.stdout).not.toContain('--aircraft');
    expect(r.stdout).toContain('turnmargin <command> --help');
    expect(r.stdout).toContain('not flight-critical');
    const watch = await runCli(['watch', '--help']);
    expect(watch.stdout).toContain('--udp [HOST:]PORT');
  });

  it('--version prints the version of package.json', async () => {
    const pkg = JSON.parse(readFileSync(join(REPO_ROOT, 'package.json'), 'utf8')) as { version: string };
    const r = await runCli(['--version']);
    expect(r.stdout).toBe(`turnmargin ${pkg.version}\n`);
  });

  it('an unknown option or command suggests the nearest one', async () => {
    const r = await runCli(['envelope', '--aircraft', DEMO_AIRFRAME_PATH, '--altitud', '100']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('unknown option --altitud (did you mean --altitude?)');
    const c = await runCli(['reveiw']);
    expect(c.code).toBe(2);
    expect(c.stderr).toContain('(did you mean review?)');
  });
});
