/**
 * The live links end to end with the built CLI: UDP (watch --udp, simulate --udp), the simulator's normal end over a
 * websocket, its pseudo-terminal (waits for a reader, quiet on Ctrl-C) and a serial path that does not exist yet.
 * Loopback only, bounded in time.
 */
import { spawn } from 'node:child_process';
import { createSocket } from 'node:dgram';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';
import { startCliProcess, type CliProcess } from '../helpers/cli-process.js';
import { CLI_PATH, REPO_ROOT, runCli } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-links-live-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const plan = join(dir, 'plan.json');
writeFileSync(
  plan,
  JSON.stringify({
    name: 'short',
    start: { alt_m: 120, tas_mps: 18 },
    segments: [
      { type: 'straight', duration_s: 1, label: 'level' },
      { type: 'turn', bank_deg: 40, duration_s: 1, label: 'turn' },
    ],
  }),
);

async function until(check: () => boolean, what: string, timeoutMs = 20_000): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!check() && Date.now() < end) await new Promise((r) => setTimeout(r, 25));
  if (!check()) throw new Error(`timed out waiting for ${what}`);
}

function stopped(p: CliProcess, timeoutMs = 20_000) {
  const timer = setTimeout(() => p.child.kill('SIGKILL'), timeoutMs);
  return p.done.finally(() => clearTimeout(timer));
}

describe('watch --udp', () => {
  it('gives the same margin records as replaying the same bytes from a file', async () => {
    const flight = join(dir, 'udp-flight.ndjson');
    const made = await runCli([
      'simulate',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--plan',
      plan,
      '--out',
      flight,
      '--quiet',
    ]);
    expect(made.code, made.stderr).toBe(0);
    const lines = readFileSync(flight, 'utf8').trimEnd().split('\n');
    const replayed = await runCli(['replay', flight, '--aircraft', DEMO_AIRFRAME_PATH, '--speed', '0', '--no-ui']);
    expect(replayed.code).toBe(0);

    const watch = startCliProcess(['watch', '--udp', '0', '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui']);
    let port = 0;
    try {
      await until(() => /listening on 127\.0\.0\.1:\d+/.test(watch.stderr()), 'the watch to listen');
      port = Number(/listening on 127\.0\.0\.1:(\d+)/.exec(watch.stderr())![1]);
      // Datagrams of one, two or three complete lines, the last one without its LF.
      const socket = createSocket('udp4');
      for (let i = 0; i < lines.length;) {
        const n = 1 + (i % 3);
        const group = lines.slice(i, i + n);
        i += n;
        const text = group.join('\n') + (i < lines.length ? '\n' : '');
        await new Promise<void>((resolve, reject) =>
          socket.send(text, port, '127.0.0.1', (err) => (err ? reject(err) : resolve())),
        );
      }
      socket.close();
      await until(() => watch.stdout().split('\n').length > lines.length, 'every record');
    } finally {
      watch.child.kill('SIGTERM');
    }
    expect((await stopped(watch)).code).toBe(0);
    expect(watch.stdout()).toBe(replayed.stdout);
    // The link is named by the port the system gave, the one to send to.
    expect(watch.stderr()).toMatch(new RegExp(`link summary — udp 127\\.0\\.0\\.1:${port}: (live|stale)`));
  });

  it('simulate --udp flies the plan to watch --udp', async () => {
    const watch = startCliProcess(['watch', '--udp', '127.0.0.1:0', '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui']);
    try {
      await until(() => /listening on 127\.0\.0\.1:\d+/.test(watch.stderr()), 'the watch to listen');
      const port = /listening on 127\.0\.0\.1:(\d+)/.exec(watch.stderr())![1]!;
      const sim = await runCli(
        ['simulate', '--aircraft', DEMO_AIRFRAME_PATH, '--plan', plan, '--udp', `127.0.0.1:${port}`, '--speed', '10'],
        { timeoutMs: 20_000 },
      );
      expect(sim.code, sim.stderr).toBe(0);
      expect(sim.stderr).toContain(`sent 21 frames to udp 127.0.0.1:${port}`);
      await until(() => watch.stdout().split('\n').length > 21, 'the 21 records');
    } finally {
      watch.child.kill('SIGTERM');
    }
    await stopped(watch);
    const records = watch
      .stdout()
      .trimEnd()
      .split('\n')
      .map((l) => JSON.parse(l) as { t_s: number });
    expect(records.map((r) => r.t_s)).toEqual(Array.from({ length: 21 }, (_, i) => Math.round(i * 10) / 100));
  });

  it('listens on another address only with --allow-remote', async () => {
    const r = await runCli(['watch', '--udp', '0.0.0.0:0', '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--udp 0.0.0.0 is not a loopback address; give --allow-remote');
  });
});

describe('the simulator as a live source', () => {
  it('a normal end over websocket closes 1000 "end of flight" and watch --ws shows the link ended, no retry', async () => {
    const sim = startCliProcess([
      'simulate',
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--plan',
      plan,
      '--ws-listen',
      '127.0.0.1:0',
      '--speed',
      '10',
      '--quiet',
    ]);
    await until(() => /listening on ws:\/\/127\.0\.0\.1:\d+/.test(sim.stdout()), 'the simulator to listen');
    const url = /listening on (ws:\/\/127\.0\.0\.1:\d+)/.exec(sim.stdout())![1]!;
    const recording = join(dir, 'ws-end.rec');
    const watch = startCliProcess([
      'watch',
      '--ws',
      url,
      '--aircraft',
      DEMO_AIRFRAME_PATH,
      '--no-ui',
      '--record',
      recording,
    ]);
    // The monitor ends by itself: the link ended, nothing will come.
    expect((await stopped(watch)).code).toBe(0);
    expect((await stopped(sim)).code).toBe(0);
    expect(watch.stdout().trimEnd().split('\n')).toHaveLength(21);
    expect(watch.stderr()).toContain(': ended');
    expect(watch.stderr()).not.toContain('link lost');
    expect(readFileSync(recording, 'utf8')).toMatch(/^#link \d+ ended end of flight$/m);
  });

  it('--pty starts flying only when a reader opens the port, and Ctrl-C ends it quietly (no traceback)', async () => {
    // Its own process group, so that SIGINT reaches the simulator and its helper as Ctrl-C in a terminal does.
    const child = spawn(
      process.execPath,
      [CLI_PATH, 'simulate', '--aircraft', DEMO_AIRFRAME_PATH, '--plan', plan, '--pty', '--loop', '--rate', '20'],
      { cwd: REPO_ROOT, detached: true, stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let stdout = '';
    let stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d: string) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
    const killer = setTimeout(() => process.kill(-child.pid!, 'SIGKILL'), 30_000);
    try {
      await until(() => /^pseudo-terminal (\S+)$/m.test(stdout), 'the pseudo-terminal');
      const path = /^pseudo-terminal (\S+)$/m.exec(stdout)![1]!;
      await until(() => stderr.includes('waiting for a program to open'), 'the wait note');
      // Nobody reads for a while: nothing may be flown meanwhile.
      await new Promise((r) => setTimeout(r, 1500));
      const { SerialPort, ReadlineParser } = await import('serialport');
      const port = new SerialPort({ path, baudRate: 57600 });
      const first = await new Promise<string>((resolve, reject) => {
        port.on('error', reject);
        port.pipe(new ReadlineParser({ delimiter: '\n' })).once('data', (l: string) => resolve(l));
      });
      await new Promise<void>((resolve) => port.close(() => resolve()));
      // The first frame read is the plan's first: the flight began when the port was opened.
      expect((JSON.parse(first) as { t_s: number }).t_s).toBe(0);
      process.kill(-child.pid!, 'SIGINT');
      expect(await exited).toBe(0);
    } finally {
      clearTimeout(killer);
    }
    expect(stderr).not.toContain('Traceback');
    expect(stderr).not.toContain('KeyboardInterrupt');
    expect(stderr).toMatch(/sent \d+ frames to pseudo-terminal .* \(interrupted\)/);
  });

  it('--start-delay S starts the flight after S seconds without a reader', async () => {
    const r = await runCli(
      [
        'simulate',
        '--aircraft',
        DEMO_AIRFRAME_PATH,
        '--plan',
        plan,
        '--ws-listen',
        '127.0.0.1:0',
        '--start-delay',
        '0.2',
        '--speed',
        '20',
      ],
      { timeoutMs: 20_000 },
    );
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toContain('(at most 0.2 s)');
    expect(r.stderr).toMatch(/sent 21 frames to websocket ws:\/\/127\.0\.0\.1:\d+\n/);
  });
});

describe('watch --serial PATH that does not exist', () => {
  it('says so at once and keeps waiting for it to appear', async () => {
    const missing = join(dir, 'ttyUSB-not-plugged');
    const watch = startCliProcess(['watch', '--serial', missing, '--aircraft', DEMO_AIRFRAME_PATH, '--no-ui']);
    try {
      await until(() => watch.stderr().includes(`${missing}: no such port yet; waiting for it to appear`), 'the note');
      // The monitor is up and retrying (its own words carry the same reason), not ended.
      await until(() => /link lost \(.*no such port yet/.test(watch.stderr()), 'the monitor to retry');
      expect(watch.child.exitCode).toBeNull();
    } finally {
      watch.child.kill('SIGTERM');
    }
    expect((await stopped(watch)).code).toBe(0);
  });
});
