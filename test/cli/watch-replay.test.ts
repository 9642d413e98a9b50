import { spawn } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeEntry } from '../../src/recording/format.js';
import { frameLine, frameLines } from '../helpers/frames.js';
import { startFrameServer } from '../helpers/ws-server.js';

const ROOT = join(import.meta.dirname, '..', '..');
const CLI = join(ROOT, 'dist', 'src', 'cli', 'main.js');
const AIRFRAME = join(ROOT, 'test', 'fixtures', 'example-airframe.json');
const dir = mkdtempSync(join(tmpdir(), 'tm-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Run {
  code: number | null;
  stdout: string;
  stderr: string;
}

function startCli(args: string[]) {
  const child = spawn(process.execPath, [CLI, ...args], {
    stdio: ['ignore', 'pipe', 'pipe'],
    env: { ...process.env, NO_COLOR: '1' },
  });
  let stdout = '';
  let stderr = '';
  child.stdout.on('data', (d: Buffer) => (stdout += d.toString()));
  child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
  const done = new Promise<Run>((resolve) => child.on('close', (code) => resolve({ code, stdout, stderr })));
  return { child, done, out: () => stdout, err: () => stderr };
}

const runCli = (args: string[]): Promise<Run> => startCli(args).done;
const jsonLines = (text: string): Array<Record<string, unknown>> =>
  text
    .split('\n')
    .filter(Boolean)
    .map((l) => JSON.parse(l) as Record<string, unknown>);

describe.skipIf(!existsSync(CLI))('watch and replay, end to end (built CLI)', () => {
  it('replay --no-ui prints one margin record per accepted frame and each rejected line with its line number', async () => {
    const path = join(dir, 'flight.ndjson');
    writeFileSync(
      path,
      [
        frameLine({ t_s: 0 }),
        'oops',
        '',
        frameLine({ t_s: 0.1, tas_mps: 'fast' }),
        frameLine({ t_s: 0.2, bank_deg: 60 }),
      ].join('\n') + '\n',
    );
    const r = await runCli(['replay', path, '--aircraft', AIRFRAME, '--speed', '0', '--no-ui']);
    expect(r.code).toBe(0);
    const records = jsonLines(r.stdout);
    expect(records.map((rec) => rec['t_s'])).toEqual([0, 0.2]);
    for (const key of [
      't_s',
      'tas_mps',
      'density_kg_m3',
      'n_stall',
      'n_thrust',
      'n_structural',
      'utilization',
      'level',
      'alerts',
    ]) {
      expect(records[0]).toHaveProperty(key);
    }
    expect(r.stderr).toContain('rejected line 2 [invalid_json]: invalid JSON: "oops"');
    expect(r.stderr).toContain('rejected line 4 [wrong_type]: tas_mps must be a number from 0 to 300 m/s (got "fast")');
    expect(r.stderr).toMatch(/link summary — file .*flight\.ndjson: ended\n\s+lines 4, accepted 2, rejected 2/);
  });

  it('falls back to JSON lines with a note when stdout is not a terminal', async () => {
    const path = join(dir, 'short.ndjson');
    writeFileSync(path, frameLines(3).join('\n'));
    const r = await runCli(['replay', path, '--aircraft', AIRFRAME, '--speed', '0']);
    expect(r.code).toBe(0);
    expect(r.stderr).toContain('stdout is not a terminal');
    expect(jsonLines(r.stdout)).toHaveLength(3);
  });

  it('rejects unusable options and files with exit 2 and a clear message', async () => {
    const noLink = await runCli(['watch', '--aircraft', AIRFRAME, '--no-ui']);
    expect(noLink.code).toBe(2);
    expect(noLink.stderr).toContain('a telemetry link is required: --serial PATH or --ws URL');
    const badWs = await runCli(['watch', '--ws', 'http://x', '--aircraft', AIRFRAME, '--no-ui']);
    expect(badWs.stderr).toContain('--ws must start with ws:// or wss://');
    const missing = await runCli(['replay', join(dir, 'nope.ndjson'), '--aircraft', AIRFRAME, '--no-ui']);
    expect(missing.code).toBe(2);
    expect(missing.stderr).toMatch(/nope\.ndjson: cannot read the flight file \(no such file\)/);
    const existing = join(dir, 'existing.tmrec');
    writeFileSync(existing, 'keep me');
    const clobber = await runCli([
      'watch',
      '--ws',
      'ws://127.0.0.1:9',
      '--aircraft',
      AIRFRAME,
      '--record',
      existing,
      '--no-ui',
    ]);
    expect(clobber.code).toBe(2);
    expect(clobber.stderr).toContain('the recording file exists; choose another name or add --force');
    expect(readFileSync(existing, 'utf8')).toBe('keep me');
  });

  it('SIGTERM mid-stream: the recording holds every line received, and replaying it gives the same accepted frames', async () => {
    const server = await startFrameServer(0);
    const recordPath = join(dir, 'live.tmrec');
    const watch = startCli([
      'watch',
      '--ws',
      `ws://127.0.0.1:${server.port}`,
      '--aircraft',
      AIRFRAME,
      '--record',
      recordPath,
      '--no-ui',
    ]);
    let run: Run;
    try {
      await server.waitFor(/^connected/, 20_000);
      server.send('send 0 100');
      await server.waitFor(/^sent 100/);
      server.send('noise');
      server.send('send 100 3000'); // ~3 s of stream, cut short by SIGTERM
      await expect.poll(() => watch.out().split('\n').length, { timeout: 10_000 }).toBeGreaterThan(400);
      watch.child.kill('SIGTERM');
      run = await watch.done;
    } finally {
      watch.child.kill('SIGKILL');
      await server.kill();
    }
    expect(run.code).toBe(0);
    // live, or stale when a loaded machine delivered the whole stream over a second before the signal
    expect(run.stderr).toMatch(/link summary — websocket ws:\/\/127\.0\.0\.1:\d+\/: (live|stale)/);
    const accepted = jsonLines(run.stdout);
    const rejectedCount = run.stderr.split('\n').filter((l) => l.startsWith('turnmargin: rejected')).length;
    expect(accepted.length).toBeGreaterThanOrEqual(400); // the poll above saw at least 400 complete lines
    expect(accepted.length).toBeLessThan(3100);
    expect(rejectedCount).toBe(3);

    const records = readFileSync(recordPath)
      .subarray(0, -1)
      .toString('latin1')
      .split('\n')
      .map((r) => decodeEntry(Buffer.from(r, 'latin1')));
    const recorded = records.filter((e) => e.kind === 'line');
    expect(recorded).toHaveLength(accepted.length + rejectedCount);
    expect(recorded.some((e) => e.kind === 'line' && e.bytes.equals(Buffer.from([0x00, 0x01])))).toBe(true);

    const replay = await runCli(['replay', recordPath, '--aircraft', AIRFRAME, '--speed', '0', '--no-ui']);
    expect(replay.code).toBe(0);
    expect(replay.stdout).toBe(run.stdout);
    expect(
      replay.stderr
        .split('\n')
        .filter((l) => l.startsWith('turnmargin: rejected'))
        .map((l) => l.replace(/^.*?: .*?: /, '')),
    ).toHaveLength(3);
  });

  it('SIGINT during a real-time replay ends cleanly with the summary and exit 0', async () => {
    const path = join(dir, 'long.ndjson');
    writeFileSync(path, frameLines(2000, 0, 0.05).join('\n')); // 100 s at speed 1
    const replay = startCli(['replay', path, '--aircraft', AIRFRAME, '--no-ui']);
    await expect.poll(() => jsonLines(replay.out()).length, { timeout: 10_000 }).toBeGreaterThan(2);
    replay.child.kill('SIGINT');
    const r = await replay.done;
    expect(r.code).toBe(0);
    expect(r.stderr).toMatch(/link summary — file .*long\.ndjson: live/);
    expect(jsonLines(r.stdout).length).toBeLessThan(2000);
  });

  it('reports a recording write error (disk full) and keeps monitoring', async () => {
    if (!existsSync('/dev/full')) return; // Linux device whose writes fail with ENOSPC
    const server = await startFrameServer(0);
    const watch = startCli([
      'watch',
      '--ws',
      `ws://127.0.0.1:${server.port}`,
      '--aircraft',
      AIRFRAME,
      '--record',
      '/dev/full',
      '--force',
      '--no-ui',
    ]);
    let run: Run;
    try {
      await server.waitFor(/^connected/, 20_000);
      server.send('send 0 50');
      await expect
        .poll(() => watch.err(), { timeout: 10_000 })
        .toContain('recording write failed: disk full; the monitor keeps running');
      server.send('send 50 50');
      await expect.poll(() => jsonLines(watch.out()).length, { timeout: 10_000 }).toBe(100);
      watch.child.kill('SIGINT');
      run = await watch.done;
    } finally {
      watch.child.kill('SIGKILL');
      await server.kill();
    }
    expect(run.code).toBe(0);
    expect(run.stderr).toMatch(/recording \/dev\/full: \d+ bytes — recording write failed: disk full/);
  });

  it('SIGKILL loses at most the last second: lines received more than a second before the kill are in the recording', async () => {
    const server = await startFrameServer(0);
    const recordPath = join(dir, 'killed.tmrec');
    const watch = startCli([
      'watch',
      '--ws',
      `ws://127.0.0.1:${server.port}`,
      '--aircraft',
      AIRFRAME,
      '--record',
      recordPath,
      '--no-ui',
    ]);
    try {
      await server.waitFor(/^connected/, 20_000);
      server.send('send 0 200');
      await server.waitFor(/^sent 200/);
      await expect.poll(() => jsonLines(watch.out()).length, { timeout: 10_000 }).toBe(200);
      // Quiet for 1.5 s (the recorder flushes at least every second), then a hard kill: no chance to flush.
      await new Promise((r) => setTimeout(r, 1500));
      watch.child.kill('SIGKILL');
      await watch.done;
    } finally {
      await server.kill();
    }
    const lines = readFileSync(recordPath)
      .toString('utf8')
      .split('\n')
      .filter((l) => /^\d+\t/.test(l));
    expect(lines).toHaveLength(200);
  });
});
