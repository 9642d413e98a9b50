/**
 * The bench server under abuse, on 127.0.0.1: a flooding client does not hold up a good one, a client that does not
 * read is cut off while it is being answered, a full disk is reported and counted exactly, idle and dead clients
 * give their slot back, and SIGHUP stops `serve` as cleanly as SIGTERM.
 */
import { spawn } from 'node:child_process';
import { once } from 'node:events';
import { ftruncateSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeSync } from 'node:fs';
import { connect } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, afterEach, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { decodeEntry } from '../../src/recording/format.js';
import type { RecorderIo } from '../../src/recording/recorder.js';
import { startServeServer, type ServeServer, type ServeServerOptions } from '../../src/serve/server.js';
import { EXAMPLE_AIRFRAME_PATH, exampleAirframe } from '../helpers/airframes.js';
import { CLI_PATH, REPO_ROOT } from '../helpers/run-cli.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-serve-abuse-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const servers: ServeServer[] = [];
const sockets: WebSocket[] = [];
afterEach(async () => {
  for (const ws of sockets.splice(0)) ws.terminate();
  await Promise.all(servers.splice(0).map((s) => s.close()));
});

async function start(extra: Partial<ServeServerOptions> = {}): Promise<{ server: ServeServer; log: string[] }> {
  const log: string[] = [];
  const server = await startServeServer({
    aircraft: exampleAirframe(),
    host: '127.0.0.1',
    port: 0,
    margins: {},
    log: (l) => log.push(l),
    ...extra,
  });
  servers.push(server);
  return { server, log };
}

async function client(url: string): Promise<{ ws: WebSocket; answers: Array<Record<string, unknown>> }> {
  const ws = new WebSocket(url);
  sockets.push(ws);
  const answers: Array<Record<string, unknown>> = [];
  ws.on('message', (d) => answers.push(JSON.parse(String(d)) as Record<string, unknown>));
  ws.on('error', () => undefined);
  await once(ws, 'open');
  return { ws, answers };
}

const frameLine = (tS: number): string => JSON.stringify({ t_s: tS, tas_mps: 18, alt_m: 100, bank_deg: 30 });
// 256 KiB of "{}\n" in one message: enough to show fairness in the suite; the 1 MiB flood of 8 clients is in
// `npm run soak` (bench/serve-flood.ts), where its time and memory are measured.
const JUNK_LINES = 87_381;
const junkMessage = '{}\n'.repeat(JUNK_LINES);

describe('serve under abuse', () => {
  it('a client sending 256 KiB of junk lines does not hold up a good client: its answers arrive while the junk is still being answered', async () => {
    const { server } = await start();
    const flooder = await client(server.url);
    const good = await client(server.url);
    flooder.ws.send(junkMessage);
    // Wait until the flood is being worked on, then send frames one at a time.
    await expect.poll(() => flooder.answers.length, { timeout: 20_000, interval: 5 }).toBeGreaterThan(0);
    const answeredAtJunk: number[] = [];
    for (let i = 0; i < 5; i++) {
      const before = good.answers.length;
      good.ws.send(frameLine(i / 10));
      await expect.poll(() => good.answers.length, { timeout: 20_000, interval: 2 }).toBe(before + 1);
      answeredAtJunk.push(flooder.answers.length);
    }
    // Every good frame was answered before the flood was done (not after all the junk answers).
    expect(answeredAtJunk.at(-1)!).toBeLessThan(JUNK_LINES);
    expect(good.answers.map((a) => a['t_s'])).toEqual([0, 1, 2, 3, 4].map((i) => i / 10));
    // And the flood is answered in full, in order, one error per line.
    await expect.poll(() => flooder.answers.length, { timeout: 100_000, interval: 50 }).toBe(JUNK_LINES);
    expect(flooder.answers.at(-1)).toEqual({ error: 't_s is required', code: 'missing_key', line: JUNK_LINES });
  }, 150_000);

  it('cuts off a client that does not read its answers while answering it (1008), and drops its input at once', async () => {
    // A lower unread limit than the default 8 MiB keeps the test short; the rule is the same.
    const { server, log } = await start({ maxUnreadAnswerBytes: 64 * 1024 });
    const reader = await client(server.url);
    const sulker = await client(server.url);
    const closed = new Promise<number>((resolve) => sulker.ws.once('close', (code) => resolve(code)));
    sulker.ws.pause(); // never reads: its answers pile up in the server
    const badTime = '{"t_s":"x"}\n'.repeat(80_000); // each answered with an error of about 90 bytes
    for (let i = 0; i < 4; i++) sulker.ws.send(badTime);
    await expect
      .poll(() => log.some((l) => /client 2 closed \(\d+ answers not read\)/.test(l)), { timeout: 60_000 })
      .toBe(true);
    sulker.ws.resume();
    // 1008 was sent; a client that reads nothing may never see it, and then sees the connection cut (1006).
    expect([1008, 1006]).toContain(await closed);
    const line = log.find((l) => l.startsWith('client 2 closed'))!;
    const answered = Number(/(\d+) errors/.exec(line)![1]);
    // Stopped while answering, long before the 4 × 80 000 lines it sent were all "answered".
    expect(answered).toBeLessThan(2 * 80_000);
    reader.ws.send(frameLine(0));
    await expect.poll(() => reader.answers.length, { timeout: 10_000 }).toBe(1);
    expect(server.clientCount()).toBe(1);
  }, 90_000);

  it('with --record on a full disk: says so in its log and the client summary, counts exactly the lines not recorded, and keeps every record in the file whole', async () => {
    // A disk with room for 4 KiB per file: short writes, then ENOSPC.
    const io: RecorderIo = {
      write(fd, buffer, offset, length, position) {
        const room = Math.max(0, 4096 - (position ?? 0));
        if (room === 0) throw Object.assign(new Error('ENOSPC'), { code: 'ENOSPC' });
        return writeSync(fd, buffer, offset, Math.min(length, room), position);
      },
      truncate: (fd, length) => ftruncateSync(fd, length),
      isRegularFile: () => true,
    };
    const recordDir = join(dir, 'full');
    const { server, log } = await start({ recordDir, recorderIo: io });
    const c = await client(server.url);
    const lines = Array.from({ length: 3000 }, (_, i) => frameLine(i * 0.01));
    for (let i = 0; i < lines.length; i += 100) c.ws.send(lines.slice(i, i + 100).join('\n'));
    await expect.poll(() => c.answers.length, { timeout: 30_000 }).toBe(3000);
    await expect
      .poll(() => log.some((l) => /client 1: recording write failed: disk full/.test(l)), { timeout: 10_000 })
      .toBe(true);
    const summary = await server.close();
    const file = readdirSync(recordDir).map((f) => join(recordDir, f))[0]!;
    const records = readFileSync(file, 'latin1').split('\n');
    expect(records.pop()).toBe(''); // ends with a whole record
    const sent = new Set(lines);
    let kept = 0;
    for (const r of records) {
      const e = decodeEntry(Buffer.from(r, 'latin1'));
      if (e.kind === 'line') {
        expect(sent.has(e.bytes.toString('utf8'))).toBe(true);
        kept += 1;
      } else expect(['meta', 'link']).toContain(e.kind);
    }
    expect(kept).toBeGreaterThan(0);
    expect(summary.linesNotRecorded).toBe(3000 - kept);
    expect(log.find((l) => l.startsWith('client 1 closed'))).toContain(
      `recording: recording write failed: disk full; ${3000 - kept} lines not written`,
    );
  });

  it('cuts off a client that leaves two pings unanswered (a raw socket), and frees its slot', async () => {
    const { server, log } = await start({ maxClients: 1, pingIntervalMs: 100, idleTimeoutMs: 60_000 });
    // A hand-made websocket handshake on a raw socket that then sends a byte now and then but never a pong.
    const raw = connect(server.port, '127.0.0.1');
    await once(raw, 'connect');
    raw.write(
      'GET / HTTP/1.1\r\nHost: 127.0.0.1\r\nUpgrade: websocket\r\nConnection: Upgrade\r\n' +
        'Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==\r\nSec-WebSocket-Version: 13\r\n\r\n',
    );
    raw.on('error', () => undefined);
    await expect.poll(() => server.clientCount(), { timeout: 5000 }).toBe(1);
    const trickle = setInterval(() => raw.write(Buffer.from([0x81])), 30); // the start of a frame, never finished
    try {
      await expect.poll(() => server.clientCount(), { timeout: 5000 }).toBe(0);
    } finally {
      clearInterval(trickle);
      raw.destroy();
    }
    expect(log.some((l) => /client 1: two pings not answered/.test(l))).toBe(true);
    const next = await client(server.url);
    next.ws.send(frameLine(0));
    await expect.poll(() => next.answers.length, { timeout: 5000 }).toBe(1);
  });

  it('closes a client that answers pings but sends no complete message for the idle timeout (1001), and frees its slot', async () => {
    const { server, log } = await start({ maxClients: 1, pingIntervalMs: 50, idleTimeoutMs: 400 });
    const quiet = await client(server.url);
    const closed = new Promise<{ code: number; reason: string }>((resolve) =>
      quiet.ws.once('close', (code, reason) => resolve({ code, reason: String(reason) })),
    );
    quiet.ws.send(frameLine(0));
    expect(await closed).toEqual({ code: 1001, reason: 'idle for 0.4 s' });
    expect(quiet.answers).toHaveLength(1);
    expect(log.some((l) => /client 1: no complete message for 0.4 s; closing it/.test(l))).toBe(true);
    await expect.poll(() => server.clientCount(), { timeout: 5000 }).toBe(0);
    const next = await client(server.url);
    next.ws.send(frameLine(0));
    await expect.poll(() => next.answers.length, { timeout: 5000 }).toBe(1);
  });

  it('serve on SIGHUP: clients closed with 1001, recordings flushed, summary on stderr, exit 0', async () => {
    const recordDir = join(dir, 'hup');
    const child = spawn(
      process.execPath,
      [CLI_PATH, 'serve', '--aircraft', EXAMPLE_AIRFRAME_PATH, '--listen', '127.0.0.1:0', '--record', recordDir],
      { cwd: REPO_ROOT, env: { ...process.env, NO_COLOR: '1' } },
    );
    let stderr = '';
    child.stderr.setEncoding('utf8').on('data', (d: string) => (stderr += d));
    const exit = new Promise<number | null>((resolve) => child.on('close', (code) => resolve(code)));
    const kill = setTimeout(() => child.kill('SIGKILL'), 20_000);
    try {
      const first = await new Promise<string>((resolve) =>
        createInterface({ input: child.stdout }).once('line', resolve),
      );
      const c = await client(first.replace('listening on ', ''));
      const closed = new Promise<number>((resolve) => c.ws.once('close', (code) => resolve(code)));
      const lines = Array.from({ length: 500 }, (_, i) => frameLine(i * 0.01));
      for (const l of lines) c.ws.send(l);
      await expect.poll(() => c.answers.length, { timeout: 10_000 }).toBe(500);
      child.kill('SIGHUP');
      expect(await closed).toBe(1001);
      expect(await exit).toBe(0);
      expect(stderr).toMatch(/stopped; 1 connections, 500 frames answered, 0 errors, 0 refused/);
      const file = join(recordDir, readdirSync(recordDir)[0]!);
      const recorded = readFileSync(file, 'utf8')
        .split('\n')
        .filter((r) => /^\d/.test(r))
        .map((r) => r.slice(r.indexOf('\t') + 1));
      expect(recorded).toEqual(lines);
    } finally {
      clearTimeout(kill);
      child.kill('SIGKILL');
    }
  });
});
