import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { WebSocket } from 'ws';
import { createFrameEngine } from '../../src/core/frame-engine.js';
import { resolveThresholds } from '../../src/core/thresholds.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { readFrameFile } from '../../src/decode/read-frames.js';
import { startServeServer, type ServeServer, type ServeServerOptions } from '../../src/serve/server.js';
import { exampleAirframe } from '../helpers/airframes.js';

const servers: ServeServer[] = [];
const dirs: string[] = [];

afterEach(async () => {
  await Promise.all(servers.splice(0).map((s) => s.close()));
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

async function start(extra: Partial<ServeServerOptions> = {}): Promise<ServeServer> {
  const server = await startServeServer({
    aircraft: exampleAirframe(),
    host: '127.0.0.1',
    port: 0,
    margins: {},
    ...extra,
  });
  servers.push(server);
  return server;
}

/** A bench client: sends messages and collects the answers (parsed JSON) in arrival order. */
class Client {
  readonly ws: WebSocket;
  readonly answers: Array<Record<string, unknown>> = [];
  readonly opened: Promise<void>;
  readonly closed: Promise<{ code: number; reason: string }>;
  private waiters: Array<() => void> = [];

  constructor(url: string, options: { headers?: Record<string, string> } = {}) {
    this.ws = new WebSocket(url, options);
    this.opened = new Promise((resolve, reject) => {
      this.ws.once('open', () => resolve());
      this.ws.once('unexpected-response', (_req, res) => reject(new Error(`HTTP ${res.statusCode}`)));
      this.ws.once('error', reject);
    });
    this.opened.catch(() => undefined);
    this.closed = new Promise((resolve) =>
      this.ws.once('close', (code, reason) => resolve({ code, reason: reason.toString() })),
    );
    this.ws.on('message', (data) => {
      this.answers.push(JSON.parse(String(data)) as Record<string, unknown>);
      for (const w of this.waiters.splice(0)) w();
    });
  }

  /** Wait until `count` answers have arrived in all (bounded by the test timeout). */
  async until(count: number): Promise<Array<Record<string, unknown>>> {
    while (this.answers.length < count) await new Promise<void>((resolve) => this.waiters.push(resolve));
    return this.answers;
  }
}

function frameLine(tS: number, fields: Record<string, unknown> = {}): string {
  return JSON.stringify({ t_s: tS, tas_mps: 18, alt_m: 100, bank_deg: 30, ...fields });
}

/** The core's answers for the same lines, through one fresh frame engine (the server's per-connection state). */
function coreAnswers(lines: string[], smoothTauS?: number) {
  const tracker = createFrameEngine(exampleAirframe(), smoothTauS !== undefined ? { smoothTauS } : {});
  return lines.map((line) => {
    const verdict = parseFrameLine(line);
    if (!verdict.ok) throw new Error(verdict.reason);
    return JSON.parse(JSON.stringify(tracker.push(verdict.frame)!)) as Record<string, unknown>;
  });
}

describe('serve over a real websocket on 127.0.0.1', () => {
  it('answers each frame, in order, with the margin record the core computes', async () => {
    const server = await start();
    expect(server.url).toMatch(/^ws:\/\/127\.0\.0\.1:\d+$/);
    const lines = [0, 0.1, 0.2, 0.3].map((t, i) => frameLine(t, { bank_deg: 20 + 10 * i, tas_mps: 16 + i }));
    const client = new Client(server.url);
    await client.opened;
    client.ws.send(lines[0]!);
    client.ws.send(lines.slice(1).join('\n') + '\n'); // several lines in one message
    const answers = await client.until(4);
    expect(answers).toEqual(coreAnswers(lines));
    // The exact keys of the margin record are all there.
    for (const key of [
      't_s',
      'tas_mps',
      'eas_mps',
      'density_kg_m3',
      'n_measured',
      'n_stall',
      'n_thrust',
      'n_structural',
      'utilization',
      'bank_limit_deg',
      'bank_sustained_deg',
      'level',
      'alerts',
    ]) {
      expect(answers[0]).toHaveProperty(key);
    }
    expect(Object.keys(answers[0]!['utilization'] as object).sort()).toEqual(['speed', 'stall', 'structure', 'thrust']);
    // And by hand: n_stall = q·S·CLmax/W (accelerated-stall relation, Anderson ch. 6) with the ISA density at
    // 100 m (USSA 1976: 1.2133 kg/m³ from the published formulas), 16 m/s, S 0.55 m², CLmax 1.2, 3.2 kg.
    const q = 0.5 * 1.21328 * 16 * 16;
    expect(answers[0]!['n_stall'] as number).toBeCloseTo((q * 0.55 * 1.2) / (3.2 * G0_MPS2), 3);
    expect(answers.map((a) => a['t_s'])).toEqual([0, 0.1, 0.2, 0.3]);
  });

  it('answers a bad frame with an error and goes on with the next frame', async () => {
    const server = await start();
    const client = new Client(server.url);
    await client.opened;
    client.ws.send(frameLine(0));
    client.ws.send('{"t_s": 0.1, "tas_mps": "fast", "alt_m": 100, "bank_deg": 0}');
    client.ws.send(frameLine(0)); // time not increasing (same t_s as the first frame)
    client.ws.send('\u0000\u0001 line noise');
    client.ws.send(frameLine(0.2));
    const answers = await client.until(5);
    expect(answers[1]).toEqual({
      error: 'tas_mps must be a number from 0 to 300 m/s (got "fast")',
      code: 'wrong_type',
      line: 2,
      t_s: 0.1,
    });
    expect(answers[2]).toEqual({ error: 'time not increasing', code: 'time_not_increasing', line: 3, t_s: 0 });
    expect(answers[3]).toMatchObject({ error: expect.stringMatching(/noise/), code: 'binary_noise', line: 4 });
    expect(answers[4]).toMatchObject({ t_s: 0.2, level: 'normal' });
    expect(client.ws.readyState).toBe(WebSocket.OPEN);
  });

  it('refuses a message over 1 MiB with close code 1009 without harming other clients, and keeps accepting', async () => {
    const server = await start();
    const bystander = new Client(server.url);
    const big = new Client(server.url);
    await Promise.all([bystander.opened, big.opened]);
    big.ws.send('x'.repeat(1024 * 1024 + 1));
    expect((await big.closed).code).toBe(1009);
    bystander.ws.send(frameLine(0));
    expect((await bystander.until(1))[0]).toMatchObject({ t_s: 0 });
    const late = new Client(server.url);
    await late.opened;
    late.ws.send(frameLine(5));
    expect((await late.until(1))[0]).toMatchObject({ t_s: 5 });
    // Exactly 1 MiB is still accepted (answered as one bad line, cut at the 64 KiB line cap).
    late.ws.send('y'.repeat(1024 * 1024));
    expect((await late.until(2))[1]).toMatchObject({
      error: expect.stringMatching(/longer than 65536 bytes/),
      code: 'line_too_long',
    });
  });

  it('keeps smoothing and time order per connection when two clients interleave', async () => {
    const server = await start();
    const a = new Client(server.url);
    const b = new Client(server.url);
    await Promise.all([a.opened, b.opened]);
    const linesA = [0, 0.1, 0.2, 0.3, 0.4].map((t) => frameLine(t, { nz: 2.2 }));
    const linesB = [10, 10.1, 10.2, 10.3, 10.4].map((t) => frameLine(t, { nz: 1.0 }));
    for (let i = 0; i < linesA.length; i++) {
      a.ws.send(linesA[i]!);
      await a.until(i + 1);
      b.ws.send(linesB[i]!);
      await b.until(i + 1);
    }
    expect(a.answers).toEqual(coreAnswers(linesA));
    expect(b.answers).toEqual(coreAnswers(linesB));
    // B's earlier clock did not count as "time not increasing" for A, nor the other way round.
    expect([...a.answers, ...b.answers].every((x) => !('error' in x))).toBe(true);
  });

  it('applies the thresholds and smoothing it was started with', async () => {
    const thresholds = resolveThresholds({ stall_caution: 0.2, stall_warning: 0.95 });
    const server = await start({ margins: { thresholds, smoothTauS: 0 } });
    const client = new Client(server.url);
    await client.opened;
    client.ws.send([frameLine(0, { nz: 1 }), frameLine(0.1, { nz: 2 })].join('\n'));
    const [first, second] = await client.until(2);
    // Without smoothing n_measured is the raw nz of each frame.
    expect(first!['n_measured']).toBe(1);
    expect(second!['n_measured']).toBe(2);
    // At 18 m/s, 100 m the stall utilization 1/n_stall ≈ 0.24 is over the 0.2 caution set here (default 0.80).
    expect(first!['level']).toBe('caution');
    expect(first!['alerts']).toEqual([{ limit: 'stall', level: 'caution' }]);
  });

  it('serves ten clients at once, each with its own answers', async () => {
    const server = await start();
    const clients = Array.from({ length: 10 }, () => new Client(server.url));
    await Promise.all(clients.map((c) => c.opened));
    const linesOf = (k: number) =>
      Array.from({ length: 20 }, (_, i) => frameLine(i * 0.05, { nz: 1 + 0.1 * k + 0.01 * i, tas_mps: 15 + k }));
    // All clients send at once, one frame per message.
    clients.forEach((c, k) => linesOf(k).forEach((l) => c.ws.send(l)));
    await Promise.all(clients.map((c) => c.until(20)));
    clients.forEach((c, k) => expect(c.answers).toEqual(coreAnswers(linesOf(k))));
    expect(server.clientCount()).toBe(10);
  });

  it('requires the token when one is set: header or query, else HTTP 401', async () => {
    const server = await start({ token: 's3cret' });
    await expect(new Client(server.url).opened).rejects.toThrow('HTTP 401');
    await expect(new Client(`${server.url}/?token=wrong`).opened).rejects.toThrow('HTTP 401');
    const byHeader = new Client(server.url, { headers: { Authorization: 'Bearer s3cret' } });
    await byHeader.opened;
    const byQuery = new Client(`${server.url}/?token=s3cret`);
    await byQuery.opened;
    byHeader.ws.send(frameLine(0));
    byQuery.ws.send(frameLine(0));
    expect((await byHeader.until(1))[0]).toMatchObject({ t_s: 0 });
    expect((await byQuery.until(1))[0]).toMatchObject({ t_s: 0 });
  });

  it('records each connection in its own recording file that reads back as the same frames', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'serve-rec-'));
    dirs.push(dir);
    const server = await start({ recordDir: join(dir, 'rec') });
    const a = new Client(server.url);
    const b = new Client(server.url);
    await Promise.all([a.opened, b.opened]);
    const linesA = [frameLine(0), 'not json', frameLine(0.1)];
    a.ws.send(linesA.join('\n'));
    b.ws.send(frameLine(3));
    await Promise.all([a.until(3), b.until(1)]);
    const summary = await server.close();
    expect(summary.recordings).toHaveLength(2);
    expect(readdirSync(join(dir, 'rec')).sort()).toEqual(summary.recordings.map((p) => p.split(/[\\/]/).pop()).sort());
    const first = summary.recordings.find((p) => readFileSync(p, 'utf8').includes('not json'))!;
    const text = readFileSync(first, 'utf8');
    expect(text.startsWith('#turnmargin-recording 1\n')).toBe(true);
    for (const line of linesA) expect(text).toContain(`\t${line}\n`);
    const readBack = [];
    for await (const line of readFrameFile(first)) readBack.push(line);
    expect(readBack.map((l) => (l.verdict.ok ? l.verdict.frame.tS : l.verdict.reason))).toEqual([
      0,
      'invalid JSON',
      0.1,
    ]);
  });

  it('closes every client with 1001 on shutdown and reports what it served', async () => {
    const server = await start();
    const client = new Client(server.url);
    await client.opened;
    client.ws.send([frameLine(0), frameLine(0.1), 'bad'].join('\n'));
    await client.until(3);
    const summary = await server.close();
    expect((await client.closed).code).toBe(1001);
    expect(summary).toMatchObject({ connections: 1, lines: 3, answered: 2, errors: 1, refused: 0 });
  });

  it('answers an empty message with an error', async () => {
    const server = await start();
    const client = new Client(server.url);
    await client.opened;
    client.ws.send('');
    client.ws.send('\n\n');
    expect(await client.until(2)).toEqual([
      { error: 'empty message (no frame in it)', code: 'empty_message' },
      { error: 'empty message (no frame in it)', code: 'empty_message' },
    ]);
  });
});
