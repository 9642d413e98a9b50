import { createSocket } from 'node:dgram';
import { describe, expect, it } from 'vitest';
import { createLinkHealthTracker } from '../../src/sources/link-health-tracker.js';
import type { ReceivedLine, SourceStatus } from '../../src/sources/source.js';
import { createUdpSource, datagramLines } from '../../src/sources/udp.js';

/** A UDP source on 127.0.0.1 with a free port; resolves once it listens. */
async function listen() {
  const lines: ReceivedLine[] = [];
  const statuses: SourceStatus[] = [];
  let resolvePort!: (p: number) => void;
  const port = new Promise<number>((resolve) => (resolvePort = resolve));
  const source = createUdpSource({ host: '127.0.0.1', port: 0, onBound: resolvePort });
  source.start({ onLine: (l) => lines.push(l), onStatus: (s) => statuses.push(s) });
  return { source, lines, statuses, port: await port };
}

async function sendAll(port: number, datagrams: Buffer[]): Promise<void> {
  const socket = createSocket('udp4');
  for (const d of datagrams) {
    await new Promise<void>((resolve, reject) =>
      socket.send(d, port, '127.0.0.1', (err) => (err ? reject(err) : resolve())),
    );
  }
  await new Promise<void>((resolve) => socket.close(() => resolve()));
}

async function until(check: () => boolean, what: string): Promise<void> {
  for (let i = 0; i < 200 && !check(); i++) await new Promise((r) => setTimeout(r, 25));
  if (!check()) throw new Error(`timed out waiting for ${what}`);
}

const LINES = [
  '{"t_s":0,"tas_mps":18,"alt_m":100,"bank_deg":0}',
  '{"t_s":0.1,"tas_mps":18,"alt_m":100,"bank_deg":5}\r',
  'not json at all',
  '{"t_s":0.2,"tas_mps":18.5,"alt_m":101,"nz":1.1}',
  '',
  '{"t_s":0.3,"tas_mps":19,"alt_m":101,"bank_deg":10}',
];

describe('UDP source on 127.0.0.1', () => {
  it('a datagram is complete lines: its last line ends with it, CR kept byte for byte', () => {
    expect(datagramLines(Buffer.from('a\nb')).toString()).toBe('a\nb\n');
    expect(datagramLines(Buffer.from('a\r\nb\r')).toString()).toBe('a\r\nb\r\n');
    expect(datagramLines(Buffer.from('a\n')).toString()).toBe('a\n');
    expect(datagramLines(Buffer.alloc(0)).length).toBe(0);
  });

  it('delivers the same lines, in order, however the lines are grouped into datagrams (every grouping of six lines)', async () => {
    const expected = LINES.filter((l) => l !== ''); // empty lines are never delivered (source contract)
    const link = await listen();
    try {
      const groupings = 2 ** (LINES.length - 1);
      for (let mask = 0; mask < groupings; mask++) {
        // Bit i set: a datagram ends after line i. The last datagram may or may not end with LF.
        const datagrams: Buffer[] = [];
        let current: string[] = [];
        LINES.forEach((line, i) => {
          current.push(line);
          if (i === LINES.length - 1 || (mask >> i) & 1) {
            const text = current.join('\n') + (mask % 2 === 0 ? '\n' : '');
            datagrams.push(Buffer.from(text));
            current = [];
          }
        });
        const before = link.lines.length;
        await sendAll(link.port, datagrams);
        await until(() => link.lines.length >= before + expected.length, `grouping ${mask}`);
        const got = link.lines.slice(before).map((l) => l.bytes.toString('utf8'));
        expect(got, `grouping ${mask}`).toEqual(expected);
      }
    } finally {
      await link.source.stop();
    }
  });

  it('reports listening once bound, then live with the first datagram and stale when quiet (link health)', async () => {
    const link = await listen();
    try {
      const open = link.statuses.find((s) => s.kind === 'open');
      expect(open).toMatchObject({ listening: true, detail: `listening on 127.0.0.1:${link.port}` });
      const health = createLinkHealthTracker(link.source.label, 0);
      for (const s of link.statuses) health.status({ ...s, atMs: 0 });
      expect(health.snapshot(500).state).toBe('listening');
      expect(health.snapshot(5000).state).toBe('listening'); // no sender yet: waiting, not stale
      await sendAll(link.port, [Buffer.from(LINES[0]! + '\n')]);
      await until(() => link.lines.length === 1, 'the datagram');
      health.line(link.lines[0]!.bytes.length, 6000);
      health.accepted(0, 6000, false);
      expect(health.snapshot(6500).state).toBe('live');
      expect(health.snapshot(8000).state).toBe('stale'); // STALE_AFTER_MS (1 s) without a frame
    } finally {
      await link.source.stop();
    }
  });

  it('a port already in use is reported as a lost link with the reason, and retried', async () => {
    const first = await listen();
    const statuses: SourceStatus[] = [];
    const second = createUdpSource({ host: '127.0.0.1', port: first.port, retryDelayMs: () => 50 });
    second.start({ onLine: () => undefined, onStatus: (s) => statuses.push(s) });
    try {
      await until(() => statuses.some((s) => s.kind === 'lost'), 'the lost status');
      expect(statuses.find((s) => s.kind === 'lost')?.detail).toContain('address already in use');
    } finally {
      await second.stop();
      await first.source.stop();
    }
  });
});
