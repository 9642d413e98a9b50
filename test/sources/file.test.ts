import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createReplay as createFileSource, scanFlightLengthS } from '../../src/engine/replay.js';
import type { ReceivedLine, SourceStatus } from '../../src/sources/source.js';
import { frameLine, frameLines } from '../helpers/frames.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-file-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

function flight(name: string, lines: string[]): string {
  const path = join(dir, name);
  writeFileSync(path, lines.join('\n') + '\n');
  return path;
}

function play(path: string, speed: number) {
  const lines: ReceivedLine[] = [];
  const statuses: SourceStatus[] = [];
  const source = createFileSource({ path, speed, scanLength: true });
  source.start({ onLine: (l) => lines.push(l), onStatus: (s) => statuses.push(s) });
  const ended = (): boolean => statuses.some((s) => s.kind === 'ended');
  return { source, lines, statuses, ended };
}

const seqOf = (l: ReceivedLine): number | undefined =>
  l.decoded?.verdict.ok ? (l.decoded.verdict.raw['seq'] as number) : undefined;

describe('file source', () => {
  it('plays every line, judged, in file order at speed 0 and then ends', async () => {
    const path = flight('a.ndjson', [...frameLines(500, 0, 0.01), 'noise', frameLine({ t_s: 1 })]);
    const p = play(path, 0);
    await expect.poll(p.ended, { timeout: 5000 }).toBe(true);
    expect(p.lines).toHaveLength(502);
    expect(p.lines.slice(0, 500).map(seqOf)).toEqual(Array.from({ length: 500 }, (_, i) => i));
    expect(p.lines[500]!.decoded!.verdict).toEqual({ ok: false, reason: 'invalid JSON' });
    expect(p.lines[500]!.decoded!.lineNo).toBe(501);
    expect(p.source.state().positionS).toBeCloseTo(4.99, 9);
    await p.source.stop();
  });

  it('plays again from the target when sought back after the end of the file', async () => {
    const path = flight('after-end.ndjson', frameLines(1000, 0, 0.01)); // 9.99 s
    const p = play(path, 0);
    await expect.poll(p.ended, { timeout: 5000 }).toBe(true);
    expect(p.lines).toHaveLength(1000);
    p.source.seekBy(-5);
    await expect.poll(() => p.statuses.filter((s) => s.kind === 'ended').length, { timeout: 5000 }).toBe(2);
    const replayed = p.lines.slice(1000).map(seqOf);
    expect(replayed[0]).toBeGreaterThanOrEqual(499);
    expect(replayed[0]).toBeLessThanOrEqual(501);
    expect(replayed.at(-1)).toBe(999);
    await p.source.stop();
  });

  it('measures the flight length across a clock restart without counting the jump back', async () => {
    const path = flight('restart.ndjson', [...frameLines(11, 100, 0.1), ...frameLines(11, 0, 0.1)]);
    // 1.0 s before the restart; the 5th frame of the new run (t = 0.4) starts the new segment, then 0.6 s more.
    expect(await scanFlightLengthS(path)).toBeCloseTo(1.6, 9);
  });

  it('pauses and resumes, and seeks forward and back by flight time', async () => {
    const path = flight('seek.ndjson', frameLines(3000, 0, 0.01)); // 29.99 s
    const p = play(path, 1);
    expect(await p.source.length()).toBeCloseTo(29.99, 9);
    await expect.poll(() => p.lines.length, { timeout: 5000 }).toBeGreaterThan(3);
    p.source.pause();
    expect(p.source.state().paused).toBe(true);
    p.source.seekBy(20);
    await expect.poll(() => p.statuses.some((s) => s.kind === 'seek'), { timeout: 5000 }).toBe(true);
    p.source.resume();
    await expect.poll(() => seqOf(p.lines.at(-1)!) ?? 0, { timeout: 5000 }).toBeGreaterThanOrEqual(2000);
    const afterForward = p.lines.length;
    p.source.seekBy(-15);
    await expect.poll(() => p.statuses.filter((s) => s.kind === 'seek').length, { timeout: 5000 }).toBe(2);
    await expect.poll(() => p.lines.length, { timeout: 5000 }).toBeGreaterThan(afterForward + 1);
    const backSeq = seqOf(p.lines[afterForward]!)!;
    expect(backSeq).toBeGreaterThanOrEqual(500);
    expect(backSeq).toBeLessThan(1500);
    p.source.setSpeed(0);
    await expect.poll(p.ended, { timeout: 5000 }).toBe(true);
    expect(seqOf(p.lines.at(-1)!)).toBe(2999);
    await p.source.stop();
  });

  it('stops promptly while waiting for the next frame', async () => {
    const path = flight('slow.ndjson', [frameLine({ t_s: 0 }), frameLine({ t_s: 1000 })]);
    const p = play(path, 1);
    await expect.poll(() => p.lines.length, { timeout: 5000 }).toBe(1);
    await p.source.stop();
    expect(p.lines).toHaveLength(1);
  });

  it('loops back to the start when asked (the demo), restarting the time check', async () => {
    const path = flight('loop.ndjson', frameLines(10, 0, 0.1));
    const lines: ReceivedLine[] = [];
    const statuses: SourceStatus[] = [];
    const source = createFileSource({ path, speed: 0, loop: true });
    source.start({ onLine: (l) => lines.push(l), onStatus: (s) => statuses.push(s) });
    await expect.poll(() => lines.length, { timeout: 5000 }).toBeGreaterThanOrEqual(25);
    await source.stop();
    expect(lines.slice(0, 25).map(seqOf)).toEqual([...Array(10).keys(), ...Array(10).keys(), 0, 1, 2, 3, 4]);
    expect(lines.slice(0, 25).every((l) => l.decoded!.verdict.ok)).toBe(true);
    expect(statuses.filter((s) => s.kind === 'seek').length).toBeGreaterThanOrEqual(2);
    expect(statuses.some((s) => s.kind === 'ended')).toBe(false);
  });
});
