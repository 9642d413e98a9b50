import { describe, expect, it } from 'vitest';
import { createFrameDecoder } from '../../src/decode/frame-decoder.js';
import type { SourceStatus } from '../../src/sources/source.js';
import { createWebSocketSource } from '../../src/sources/websocket.js';
import { startFrameServer } from '../helpers/ws-server.js';

function collect(url: string) {
  const seqs: number[] = [];
  const rejected: string[] = [];
  const statuses: SourceStatus[] = [];
  const decoder = createFrameDecoder();
  const source = createWebSocketSource({ url });
  source.start({
    onLine: (line) => {
      const d = decoder.judgeLine(line);
      if (!d) return;
      if (d.verdict.ok) seqs.push(d.verdict.raw['seq'] as number);
      else rejected.push(d.verdict.reason);
    },
    onStatus: (s) => {
      statuses.push(s);
      if (s.kind === 'open') decoder.resetTime();
    },
  });
  const opens = (): number => statuses.filter((s) => s.kind === 'open').length;
  return { seqs, rejected, statuses, source, opens };
}

describe('websocket source against a real ws server on 127.0.0.1', () => {
  it('reconnects after the server is killed mid-stream and restarted on the same port; nothing sent after the reconnect is lost', async () => {
    let server = await startFrameServer(0);
    const port = server.port;
    const c = collect(`ws://127.0.0.1:${port}/telemetry`);
    try {
      await expect.poll(c.opens, { timeout: 5000 }).toBe(1);
      await server.waitFor(/^connected/);
      server.send('send 0 300');
      await expect.poll(() => c.seqs.length, { timeout: 10_000 }).toBe(300);
      server.send('send 300 300');
      await expect.poll(() => c.seqs.length, { timeout: 10_000 }).toBeGreaterThan(320);
      await server.kill(); // mid-stream
      await expect.poll(() => c.statuses.some((s) => s.kind === 'lost'), { timeout: 5000 }).toBe(true);

      server = await startFrameServer(port);
      await expect.poll(c.opens, { timeout: 5000 }).toBe(2);
      await server.waitFor(/^connected/);
      server.send('send 1000 300');
      await expect.poll(() => c.seqs.filter((s) => s >= 1000).length, { timeout: 10_000 }).toBe(300);
    } finally {
      await c.source.stop();
      await server.kill();
    }
    // In order, no duplicate; all before the kill's stream and all after the reconnect.
    for (let i = 1; i < c.seqs.length; i++) expect(c.seqs[i]!).toBeGreaterThan(c.seqs[i - 1]!);
    expect(c.seqs.slice(0, 300)).toEqual(Array.from({ length: 300 }, (_, i) => i));
    expect(c.seqs.filter((s) => s >= 1000)).toEqual(Array.from({ length: 300 }, (_, i) => 1000 + i));
    expect(c.statuses.find((s) => s.kind === 'lost')!.detail).toMatch(/connection closed \(1006\)/);
  });

  it('refuses a message over 1 MiB without harm, then carries on after reconnecting', async () => {
    const server = await startFrameServer(0);
    const c = collect(`ws://127.0.0.1:${server.port}`);
    try {
      await expect.poll(c.opens, { timeout: 5000 }).toBe(1);
      await server.waitFor(/^connected/);
      server.send('big');
      await expect
        .poll(() => c.statuses.find((s) => s.kind === 'lost')?.detail, { timeout: 5000 })
        .toBe('message larger than 1 MiB refused');
      await expect.poll(c.opens, { timeout: 5000 }).toBe(2);
      await server.waitFor(/^connected/);
      server.send('send 0 20');
      await expect.poll(() => c.seqs.length, { timeout: 5000 }).toBe(20);
    } finally {
      await c.source.stop();
      await server.kill();
    }
    expect(c.rejected).toEqual([]);
  });

  it('reports a refused connection as lost and retries', async () => {
    const server = await startFrameServer(0);
    const port = server.port;
    await server.kill();
    const statuses: SourceStatus[] = [];
    const source = createWebSocketSource({ url: `ws://127.0.0.1:${port}`, retryDelayMs: () => 20 });
    source.start({ onLine: () => undefined, onStatus: (s) => statuses.push(s) });
    await expect.poll(() => statuses.some((s) => s.kind === 'lost'), { timeout: 5000 }).toBe(true);
    await source.stop();
    expect(statuses.find((s) => s.kind === 'lost')!.detail).toBe('connection refused');
  });
});
