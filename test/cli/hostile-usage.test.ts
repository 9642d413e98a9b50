import { spawn } from 'node:child_process';
import { closeSync, existsSync, mkdtempSync, openSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_AIRFRAME_PATH, exampleAirframeJson } from '../helpers/airframes.js';
import { CLI_PATH, REPO_ROOT, runCli } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-hostile-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const DEMO_FLIGHT = join(REPO_ROOT, 'replays/demo-flight.ndjson');

/** Run the CLI with stdout on a given file descriptor (e.g. /dev/full) and collect stderr. */
function runWithStdoutFd(args: string[], stdoutPath: string): Promise<{ code: number | null; stderr: string }> {
  const fd = openSync(stdoutPath, 'w');
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CLI_PATH, ...args], {
      cwd: REPO_ROOT,
      stdio: ['ignore', fd, 'pipe'],
      env: { ...process.env, NO_COLOR: '1' },
    });
    let stderr = '';
    child.stderr!.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    child.on('error', reject);
    child.on('close', (code) => {
      closeSync(fd);
      resolve({ code, stderr });
    });
  });
}

/** Run the CLI and destroy its stdout after the first bytes, as `| head -c1` does. */
function runWithEarlyClosedStdout(args: string[]): Promise<{ code: number | null; stderr: string }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [CLI_PATH, ...args], { cwd: REPO_ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    child.stdout.once('data', () => child.stdout.destroy());
    child.on('error', reject);
    child.on('close', (code) => resolve({ code, stderr }));
  });
}

describe('output that cannot be written', () => {
  const full = existsSync('/dev/full'); // Linux device whose writes fail with ENOSPC

  it.runIf(full)('a full disk on stdout is one line and exit 2, never the 1 of a failed check', async () => {
    for (const args of [
      ['check', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH],
      ['envelope', '--aircraft', DEMO_AIRFRAME_PATH, '--format', 'csv'],
      ['review', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH],
      ['replay', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--speed', '0', '--no-ui'],
    ]) {
      const r = await runWithStdoutFd(args, '/dev/full');
      expect(r.code, args[0]).toBe(2);
      expect(r.stderr, args[0]).toMatch(/cannot write .*standard output \(disk full\)/);
      expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    }
  });

  it('a reader that goes away (| head) ends the program quietly with exit 0', async () => {
    for (const args of [
      [
        'envelope',
        '--aircraft',
        DEMO_AIRFRAME_PATH,
        '--from',
        '10',
        '--to',
        '30',
        '--step',
        '0.001',
        '--format',
        'csv',
      ],
      ['replay', DEMO_FLIGHT, '--aircraft', DEMO_AIRFRAME_PATH, '--speed', '0', '--no-ui'],
    ]) {
      const r = await runWithEarlyClosedStdout(args);
      expect(r.code, args[0]).toBe(0);
      expect(r.stderr).not.toMatch(/\n\s+at /);
    }
  });
});

describe('clumsy command lines', () => {
  it('refuses a serial path that can never be a port instead of retrying forever', async () => {
    const file = join(dir, 'not-a-port.txt');
    writeFileSync(file, 'x');
    for (const [path, why] of [
      [dir, 'is a directory'],
      [file, 'is not a device'],
      ['/dev/null', 'not a serial port'],
    ] as const) {
      const r = await runCli(['watch', '--serial', path, '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui'], {
        timeoutMs: 10_000,
      });
      expect(r.code, path).toBe(2);
      expect(r.stderr).toContain(why);
    }
  });

  it('says which option is unknown, missing its value or given twice, in plain words', async () => {
    const cases: Array<[string[], string]> = [
      [['envelope', '--bogus'], 'unknown option --bogus'],
      [['envelope', '--aircraft'], '--aircraft needs a value'],
      [
        ['envelope', '--aircraft', DEMO_AIRFRAME_PATH, '--aircraft', DEMO_AIRFRAME_PATH],
        '--aircraft is given more than once',
      ],
    ];
    for (const [args, message] of cases) {
      const r = await runCli(args);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toContain(message);
    }
  });

  it('will not record over the airframe file', async () => {
    const airframe = join(dir, 'af.json');
    writeFileSync(airframe, JSON.stringify(exampleAirframeJson()));
    const r = await runCli([
      'watch',
      '--ws',
      'ws://127.0.0.1:1',
      '--aircraft',
      airframe,
      '--record',
      airframe,
      '--force',
      '--no-ui',
    ]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('is the --aircraft file');
    expect(JSON.parse(readFileSync(airframe, 'utf8')).name).toBe('Example airframe');
  });

  it('caps a bank-limit schedule too large to print, with a message', async () => {
    const altitudes = Array.from({ length: 2000 }, (_, i) => i).join(',');
    const masses = Array.from({ length: 200 }, (_, i) => (3 + i * 0.01).toFixed(2)).join(',');
    const r = await runCli([
      'envelope',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--altitudes',
      altitudes,
      '--masses',
      masses,
    ]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('400000 conditions; at most 10000');
  });

  it('names an overflowing number in the airframe file as too large', async () => {
    const file = join(dir, 'huge.json');
    writeFileSync(file, JSON.stringify(exampleAirframeJson()).replace('"cl_max":1.2', '"cl_max":1e400'));
    const r = await runCli(['envelope', '--aircraft', file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('huge.json: cl_max must be a positive number (got Infinity (number too large))');
  });
});
