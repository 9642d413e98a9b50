/**
 * Link faults during a stream, through the real live pipeline (source → recorder → decoder → margins):
 * a websocket relay that crashes and comes back on the same port 5 times, and a serial radio (a real
 * pseudo-terminal) unplugged and plugged back at the same path 5 times, mid-stream. After each reconnect no frame is
 * lost, nothing arrives twice or out of order, and the link states are reported in order.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createPipeline, type Pipeline } from '../../src/engine/pipeline.js';
import { decodeEntry } from '../../src/recording/format.js';
import { openRecorder } from '../../src/recording/recorder.js';
import type { LinkState } from '../../src/sources/link-health.js';
import { createSerialSource } from '../../src/sources/serial.js';
import type { SourceStatus, TelemetrySource } from '../../src/sources/source.js';
import { createWebSocketSource } from '../../src/sources/websocket.js';
import { exampleAirframe } from '../helpers/airframes.js';
import { createPacedRelay } from '../helpers/paced-ws-relay.js';
import { startPtyStream } from '../helpers/pty-stream.js';

const RESTARTS = 5;
const dir = mkdtempSync(join(tmpdir(), 'tm-fault-link-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

interface Monitored {
  pipeline: Pipeline;
  /** seq of each accepted frame, in arrival order, with the number of opens seen when it arrived. */
  frames: Array<{ seq: number; connection: number }>;
  rejected: string[];
  statuses: SourceStatus[];
  /** The link state (as the dashboard and the summary show it) right after each status change. */
  states: LinkState[];
  opens(): number;
  losts(): number;
  recordPath: string;
}

function monitor(source: TelemetrySource, name: string): Monitored {
  const recordPath = join(dir, `${name}.tmrec`);
  const frames: Monitored['frames'] = [];
  const rejected: string[] = [];
  const statuses: SourceStatus[] = [];
  const states: LinkState[] = [];
  const opens = (): number => statuses.filter((s) => s.kind === 'open').length;
  const pipeline: Pipeline = createPipeline({
    source,
    aircraft: exampleAirframe(),
    recorder: openRecorder({ path: recordPath, sourceLabel: source.label }),
    sinks: {
      record: (_rec, line) =>
        frames.push({ seq: line.verdict.ok ? (line.verdict.raw['seq'] as number) : -1, connection: opens() - 1 }),
      rejected: (_line, _where, reason) => rejected.push(reason),
      status: (s) => {
        statuses.push(s);
        states.push(pipeline.health().state);
      },
    },
  });
  return {
    pipeline,
    frames,
    rejected,
    statuses,
    states,
    opens,
    losts: () => statuses.filter((s) => s.kind === 'lost').length,
    recordPath,
  };
}

/** Consecutive repeats folded: the sequence of states an operator sees. */
function transitions(states: readonly LinkState[]): LinkState[] {
  return states.filter((s, i) => i === 0 || states[i - 1] !== s);
}

const expectedTransitions = (): LinkState[] => [
  'connecting',
  'live',
  ...Array.from({ length: RESTARTS }, () => ['lost', 'live'] as LinkState[]).flat(),
];

function recordedLinkStates(path: string): string[] {
  const entries = readFileSync(path)
    .subarray(0, -1)
    .toString('latin1')
    .split('\n')
    .map((r) => decodeEntry(Buffer.from(r, 'latin1')));
  return entries.flatMap((e) => (e.kind === 'link' ? [e.state] : []));
}

function expectStrictlyIncreasing(seqs: readonly number[]): void {
  const bad = seqs.findIndex((s, i) => i > 0 && s <= seqs[i - 1]!);
  expect(bad, `seq ${seqs[bad]} after ${seqs[bad - 1]}`).toBe(-1);
}

describe('link faults during a stream', () => {
  it('websocket relay crashed and restarted on the same port 5 times: every frame handed to the network arrives once, in order; states connecting → live → (lost → live) ×5', async () => {
    const relay = createPacedRelay({ rateHz: 500, noiseEvery: 200 });
    const port = await relay.listen(0);
    const m = monitor(createWebSocketSource({ url: `ws://127.0.0.1:${port}/telemetry` }), 'ws-restarts');
    m.pipeline.start();
    try {
      for (let k = 0; k <= RESTARTS; k++) {
        await expect.poll(m.opens, { timeout: 5000 }).toBe(k + 1);
        // Mid-stream: the relay keeps sending until it crashes.
        await expect
          .poll(() => m.frames.filter((f) => f.connection === k).length, { timeout: 10_000 })
          .toBeGreaterThanOrEqual(150);
        if (k === RESTARTS) break;
        await relay.crash();
        await expect.poll(m.losts, { timeout: 5000 }).toBe(k + 1);
        await new Promise((r) => setTimeout(r, 50 + 40 * k)); // down for a while, then back on the same port
        expect(await relay.listen(port)).toBe(port);
      }
      relay.pause();
      const confirmed = (): number[] => relay.sent.filter((f) => f.confirmed).map((f) => f.seq);
      const received = (): Set<number> => new Set(m.frames.map((f) => f.seq));
      await expect.poll(() => confirmed().every((s) => received().has(s)), { timeout: 5000 }).toBe(true);
    } finally {
      await m.pipeline.stop();
      await relay.close();
    }

    const seqs = m.frames.map((f) => f.seq);
    expectStrictlyIncreasing(seqs); // exactly once, in order
    const sentSeqs = new Set(relay.sent.map((f) => f.seq));
    expect(seqs.every((s) => sentSeqs.has(s))).toBe(true);
    const missing = relay.sent.filter((f) => f.confirmed && !seqs.includes(f.seq)).map((f) => f.seq);
    expect(missing).toEqual([]);
    // After each reconnect the frames start where the relay resumed: the first frame sent on connection k arrives.
    for (let k = 1; k <= RESTARTS; k++) {
      const firstSent = relay.sent.find((f) => f.connection === k)!;
      expect(m.frames.find((f) => f.connection === k)!.seq).toBe(firstSent.seq);
    }
    expect(relay.connections()).toBe(RESTARTS + 1);
    expect(transitions(m.states)).toEqual(expectedTransitions());
    expect(
      m.statuses
        .filter((s) => s.kind === 'lost')
        .every((s) => /connection closed \(1006\)|connection refused/.test(s.detail ?? '')),
    ).toBe(true);
    expect(m.pipeline.health().reconnects).toBe(RESTARTS);
    expect(m.rejected.length).toBeGreaterThan(0);
    expect(
      m.rejected.every((r) => r === 'binary noise (control or invalid bytes)' || r.startsWith('invalid JSON')),
    ).toBe(true);
    expect(recordedLinkStates(m.recordPath)).toEqual([
      'open',
      ...Array.from({ length: RESTARTS }, () => ['lost', 'open']).flat(),
      'ended',
    ]);
  });

  it('serial radio unplugged mid-stream and plugged back at the same path 5 times: each connection carries an unbroken run from its first frame; states connecting → live → (lost → live) ×5', async () => {
    const link = startPtyStream();
    const portPath = join(dir, 'radio0');
    const m = monitor(createSerialSource({ path: portPath, baudRate: 115200 }), 'serial-replugs');
    const written: Array<{ first: number; last: number }> = [];
    let nextSeq = 0;
    try {
      expect(await link.command(`plug ${portPath}`)).toMatch(/^plugged \/dev\/pts\//);
      m.pipeline.start();
      for (let k = 0; k <= RESTARTS; k++) {
        await expect.poll(m.opens, { timeout: 5000 }).toBe(k + 1);
        expect(await link.command(`stream ${nextSeq} 500`)).toBe('streaming');
        await expect
          .poll(() => m.frames.filter((f) => f.connection === k).length, { timeout: 10_000 })
          .toBeGreaterThanOrEqual(150);
        if (k === RESTARTS) {
          // The last connection stays: once the sender stops, everything it wrote must arrive.
          const last = Number((await link.command('pause')).split(' ')[1]);
          written.push({ first: nextSeq, last });
          await expect.poll(() => m.frames.at(-1)?.seq, { timeout: 5000 }).toBe(last);
          break;
        }
        const last = Number((await link.command('unplug')).split(' ')[1]); // pulled out while streaming
        written.push({ first: nextSeq, last });
        nextSeq = last + 1;
        await expect.poll(m.losts, { timeout: 5000 }).toBe(k + 1);
        expect(await link.command(`plug ${portPath}`)).toMatch(/^plugged/);
      }
    } finally {
      await m.pipeline.stop();
      await link.close();
    }

    const seqs = m.frames.map((f) => f.seq);
    expectStrictlyIncreasing(seqs);
    for (let k = 0; k <= RESTARTS; k++) {
      const got = m.frames.filter((f) => f.connection === k).map((f) => f.seq);
      const { first, last } = written[k]!;
      // From the first frame written after the port opened, without a hole; only frames still in the line when it
      // was pulled out can be missing at the end.
      expect(got[0]).toBe(first);
      expect(got.at(-1)!).toBeLessThanOrEqual(last);
      expect(got).toEqual(Array.from({ length: got.length }, (_, i) => first + i));
      if (k === RESTARTS) expect(got.at(-1)).toBe(last);
    }
    expect(transitions(m.states)).toEqual(expectedTransitions());
    expect(m.pipeline.health().reconnects).toBe(RESTARTS);
    expect(m.rejected.filter((r) => r === 'binary noise (control or invalid bytes)').length).toBeGreaterThan(0);
    expect(
      m.rejected.every((r) => r === 'binary noise (control or invalid bytes)' || r.startsWith('invalid JSON')),
    ).toBe(true);
    expect(recordedLinkStates(m.recordPath)).toEqual([
      'open',
      ...Array.from({ length: RESTARTS }, () => ['lost', 'open']).flat(),
      'ended',
    ]);
  });
});
