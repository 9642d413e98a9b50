/**
 * `watch --ws` under abuse, end to end with the built CLI against a websocket server in the test process on
 * 127.0.0.1: a message always ends its lines (one bad message never stops the link), the recording is flushed on
 * time while junk floods in faster than it can be decoded, and a token never shows (recording, stderr).
 */
import { once } from 'node:events';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import type { IncomingMessage } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { WebSocketServer, type WebSocket } from 'ws';
import { decodeEntry, type RecordingEntry } from '../../src/recording/format.js';
import { spawn } from 'node:child_process';
import { EXAMPLE_AIRFRAME_PATH } from '../helpers/airframes.js';
import { startCliProcess, type CliProcess } from '../helpers/cli-process.js';
import { createPacedRelay } from '../helpers/paced-ws-relay.js';
import { CLI_PATH, REPO_ROOT } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-watch-abuse-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

let cleanup: Array<() => unknown> = [];
afterEach(async () => {
  for (const f of cleanup.reverse()) await f();
  cleanup = [];
});

/** A relay with one client at a time; resolves the client's socket and the upgrade request when it connects. */
async function relay(): Promise<{ port: number; client: Promise<{ ws: WebSocket; req: IncomingMessage }> }> {
  const wss = new WebSocketServer({ host: '127.0.0.1', port: 0 });
  await once(wss, 'listening');
  const client = new Promise<{ ws: WebSocket; req: IncomingMessage }>((resolve) =>
    wss.once('connection', (ws, req) => {
      ws.on('error', () => undefined);
      resolve({ ws, req });
    }),
  );
  cleanup.push(() => {
    for (const c of wss.clients) c.terminate();
    return new Promise<void>((resolve) => wss.close(() => resolve()));
  });
  return { port: (wss.address() as { port: number }).port, client };
}

function watch(args: string[]): CliProcess {
  const p = startCliProcess(['watch', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--no-ui', ...args]);
  cleanup.push(() => p.child.kill('SIGKILL'));
  return p;
}

/** The complete records of a recording (a hard kill may leave a last record without its LF: it is left out). */
function readRecording(path: string): RecordingEntry[] {
  const bytes = readFileSync(path);
  const end = bytes.lastIndexOf(0x0a);
  if (end < 0) return [];
  return bytes
    .subarray(0, end)
    .toString('latin1')
    .split('\n')
    .map((r) => decodeEntry(Buffer.from(r, 'latin1')));
}

const lineEntries = (entries: RecordingEntry[]) =>
  entries.filter((e): e is Extract<RecordingEntry, { kind: 'line' }> => e.kind === 'line');

const frame = (seq: number): string =>
  JSON.stringify({ t_s: Number((seq * 0.01).toFixed(2)), tas_mps: 20, alt_m: 100, bank_deg: 30, seq });

describe('watch --ws under abuse', () => {
  it('a 1-byte message then 3000 frames, one per message without newline: all 3000 accepted, the link stays live, the recording keeps every byte', async () => {
    const server = await relay();
    const recordPath = join(dir, 'one-bad-message.tmrec');
    const w = watch(['--ws', `ws://127.0.0.1:${server.port}`, '--record', recordPath]);
    const { ws } = await server.client;
    ws.send('x');
    const sent = ['x'];
    for (let i = 0; i < 3000; i++) {
      sent.push(frame(i));
      ws.send(frame(i));
      if (i % 200 === 199) await new Promise((r) => setTimeout(r, 5));
    }
    await expect.poll(() => w.stdout().split('\n').filter(Boolean).length, { timeout: 20_000 }).toBe(3000);
    w.child.kill('SIGTERM');
    expect((await w.done).code).toBe(0);
    const stderr = w.stderr();
    expect(stderr.match(/rejected line/g)).toHaveLength(1);
    expect(stderr).toMatch(/rejected line 1 at .*: "x"/);
    expect(stderr).not.toMatch(/link lost|cut|65536/);
    expect(stderr).toMatch(/lines 3001, accepted 3000, rejected 1/);
    const recorded = lineEntries(readRecording(recordPath));
    expect(recorded.map((l) => l.bytes.toString('utf8'))).toEqual(sent);
    expect(recorded.every((l) => !l.cut)).toBe(true);
  });

  it('keeps a CR byte for byte at the end of a message and at the start of the next', async () => {
    const server = await relay();
    const recordPath = join(dir, 'cr.tmrec');
    const w = watch(['--ws', `ws://127.0.0.1:${server.port}`, '--record', recordPath]);
    const { ws } = await server.client;
    ws.send(`${frame(0)}\r`); // the message ends the line: its CR stays in it
    ws.send(`\r\n${frame(1)}\r\n${frame(2)}`); // a lone CR line carries nothing and is skipped, as on a stream
    ws.send(`${frame(3)}\r\n\r`);
    await expect.poll(() => w.stdout().split('\n').filter(Boolean).length, { timeout: 10_000 }).toBe(4);
    w.child.kill('SIGTERM');
    expect((await w.done).code).toBe(0);
    const recorded = lineEntries(readRecording(recordPath)).map((l) => l.bytes.toString('latin1'));
    expect(recorded).toEqual([`${frame(0)}\r`, `${frame(1)}\r`, frame(2), `${frame(3)}\r`]);
  });

  it('under a flood of junk lines arriving faster than they can be decoded, the recording is flushed on time: SIGKILL loses at most the last second', async () => {
    const server = await relay();
    const recordPath = join(dir, 'flood.tmrec');
    const w = watch(['--ws', `ws://127.0.0.1:${server.port}`, '--record', recordPath]);
    const { ws } = await server.client;
    // Junk in messages of about 0.9 MiB (60 000 lines), numbered so that the recording can be checked as a prefix of what was sent.
    const JUNK_PER_MESSAGE = 60_000;
    let next = 0;
    const junkMessage = (): string => {
      let text = '';
      for (let i = 0; i < JUNK_PER_MESSAGE; i++) text += `{"junk":${next++}}\n`;
      return text;
    };
    // Keep the socket full: send whenever ws has handed the last messages to the system.
    let flooding = true;
    const pump = (): void => {
      while (flooding && ws.bufferedAmount < 4 * 1024 * 1024) ws.send(junkMessage());
      if (flooding) setTimeout(pump, 5);
    };
    pump();
    cleanup.push(() => (flooding = false));
    const start = Date.now();
    // Samples of the file while the flood goes on: (time, complete junk lines in the file).
    const samples: Array<[number, number]> = [];
    const count = (): number => lineEntries(readRecording(recordPath)).length;
    while (Date.now() - start < 4000) {
      await new Promise((r) => setTimeout(r, 250));
      samples.push([Date.now(), count()]);
    }
    // Still flooding (the monitor is behind), and the recording grew all along rather than sitting at its header.
    expect(next - count()).toBeGreaterThan(10_000);
    // (At least half the quarter-second samples: on a heavily loaded machine a flush may slip past one sample.)
    const grew = samples.filter(([, n], i) => i > 0 && n > samples[i - 1]![1]).length;
    expect(grew).toBeGreaterThanOrEqual(Math.floor(samples.length / 2));
    const beforeLastSecond = samples.filter(([t]) => t <= Date.now() - 1000).at(-1)![1];
    w.child.kill('SIGKILL');
    expect((await w.done).signal).toBe('SIGKILL');
    flooding = false;
    const recorded = lineEntries(readRecording(recordPath));
    // What had reached the file more than a second before the kill is all there; the file is a prefix of the
    // stream, in order, every record whole.
    expect(recorded.length).toBeGreaterThanOrEqual(beforeLastSecond);
    expect(recorded.map((l) => l.bytes.toString('utf8'))).toEqual(
      Array.from({ length: recorded.length }, (_, i) => `{"junk":${i}}`),
    );
    // The monitor printed its rejections as it went (it was not stuck on one huge backlog).
    expect(w.stderr()).toMatch(/rejected line \d+/);
  });

  it('sends --token as a bearer header and never shows a token: not in the recording, not on stderr', async () => {
    const server = await relay();
    const recordPath = join(dir, 'token.tmrec');
    const tokenFile = join(dir, 'token.txt');
    writeFileSync(tokenFile, 'hunter2-file\n');
    const w = watch([
      '--ws',
      `ws://127.0.0.1:${server.port}/feed?token=hunter2-url&vehicle=7`,
      '--token-file',
      tokenFile,
      '--record',
      recordPath,
    ]);
    const { ws, req } = await server.client;
    expect(req.headers['authorization']).toBe('Bearer hunter2-file');
    ws.send(frame(0));
    ws.terminate(); // a loss and a reconnect: more link lines with the URL in them
    await expect.poll(() => w.stderr(), { timeout: 10_000 }).toMatch(/link lost/);
    w.child.kill('SIGTERM');
    expect((await w.done).code).toBe(0);
    const recording = readFileSync(recordPath, 'utf8');
    const everything = recording + w.stderr() + w.stdout();
    expect(everything).not.toContain('hunter2');
    expect(recording).toContain(`#source websocket ws://127.0.0.1:${server.port}/feed?token=***&vehicle=7`);
    expect(w.stderr()).toContain('token=***');
  });

  it('with a stdout reader that stops reading: pending output stays bounded, records beyond it are counted on stderr, the recording keeps everything, and SIGTERM still exits promptly', async () => {
    const relay = createPacedRelay({ rateHz: 2000 });
    const port = await relay.listen(0);
    cleanup.push(() => relay.close());
    const recordPath = join(dir, 'slow-stdout.tmrec');
    // A small bound (64 KiB instead of 16 MiB) so that the test needs seconds, not minutes.
    const child = spawn(
      process.execPath,
      [
        CLI_PATH,
        'watch',
        '--ws',
        `ws://127.0.0.1:${port}`,
        '--aircraft',
        EXAMPLE_AIRFRAME_PATH,
        '--no-ui',
        '--record',
        recordPath,
      ],
      { cwd: REPO_ROOT, env: { ...process.env, NO_COLOR: '1', TURNMARGIN_MAX_PENDING_STDOUT_BYTES: '65536' } },
    );
    cleanup.push(() => child.kill('SIGKILL'));
    child.stdout.pause(); // nobody reads stdout
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    await expect.poll(() => stderr, { timeout: 20_000 }).toMatch(/stdout too slow: margin records are not printed/);
    await new Promise((r) => setTimeout(r, 1000));
    const signalledAt = Date.now();
    child.kill('SIGTERM');
    const code = await exited;
    const tookMs = Date.now() - signalledAt;
    expect(code).toBe(0);
    // The 2 s bound by design (1.5 s for the reader, then exit); generous here for a loaded test machine.
    expect(tookMs).toBeLessThan(10_000);
    const notPrinted = Number(/stdout too slow: (\d+) records not printed\n/.exec(stderr)?.[1]);
    expect(notPrinted).toBeGreaterThan(0);
    const accepted = Number(/accepted (\d+)/.exec(stderr)![1]);
    expect(notPrinted).toBeLessThanOrEqual(accepted);
    // The recording holds every line received, printed or not.
    const recorded = lineEntries(readRecording(recordPath));
    expect(recorded.length).toBe(Number(/lines (\d+), accepted/.exec(stderr)![1]));
    expect(recorded.length).toBeGreaterThanOrEqual(accepted);
  }, 60_000);

  it('a SIGTERM while a headless replay that has ended waits for a stopped stdout reader still gives the summary and the count not printed, exit 0', async () => {
    const flight = join(dir, 'ended-replay.ndjson');
    const frames: string[] = [];
    for (let i = 0; i < 3000; i++)
      frames.push(JSON.stringify({ t_s: i * 0.01, tas_mps: 20, alt_m: 150, bank_deg: 30 }));
    writeFileSync(flight, frames.join('\n') + '\n');
    const child = spawn(
      process.execPath,
      [CLI_PATH, 'replay', flight, '--aircraft', EXAMPLE_AIRFRAME_PATH, '--speed', '0', '--no-ui'],
      { cwd: REPO_ROOT, env: { ...process.env, NO_COLOR: '1', TURNMARGIN_MAX_PENDING_STDOUT_BYTES: '65536' } },
    );
    cleanup.push(() => child.kill('SIGKILL'));
    child.stdout.pause(); // nobody reads stdout
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
    await expect.poll(() => stderr, { timeout: 20_000 }).toMatch(/stdout too slow: margin records are not printed/);
    // The 3000 frames are judged in well under a second: the replay has ended and gives the reader its last 1.5 s.
    await new Promise((r) => setTimeout(r, 500));
    child.kill('SIGTERM');
    expect(await exited).toBe(0);
    expect(stderr).toMatch(/link summary — file .*ended-replay\.ndjson: ended/);
    expect(Number(/stdout too slow: (\d+) records not printed\n/.exec(stderr)?.[1])).toBeGreaterThan(0);
  }, 30_000);
});
