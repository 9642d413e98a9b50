import { describe, expect, it } from 'vitest';
import { parseFrameLine } from '../../src/decode/frame-line.js';
import { INVALID_JSON, type Rejected } from '../../src/decode/rejections.js';
import { createLinkHealthTracker, formatLinkSummary } from '../../src/sources/link-health-tracker.js';

function rejectionOf(line: string): Rejected {
  const v = parseFrameLine(line);
  if (v.ok) throw new Error('expected a rejection');
  return v;
}

describe('link health tracker', () => {
  it('goes connecting → live → stale after 1 s without frames → lost → live again, counting reconnects', () => {
    const h = createLinkHealthTracker('test', 0);
    expect(h.snapshot(0).state).toBe('connecting');
    h.status({ kind: 'open', atMs: 100 });
    expect(h.snapshot(200).state).toBe('live');
    h.line(50, 300);
    h.accepted(0, 300, false);
    expect(h.snapshot(1300).state).toBe('live');
    expect(h.snapshot(1301).state).toBe('stale');
    expect(h.snapshot(1301).sinceLastFrameS).toBeCloseTo(1.001, 9);
    h.status({ kind: 'lost', atMs: 1400, detail: 'port disappeared' });
    h.status({ kind: 'connecting', atMs: 1700 });
    expect(h.snapshot(1700).state).toBe('lost');
    h.status({ kind: 'open', atMs: 2000 });
    const s = h.snapshot(2100);
    expect(s.state).toBe('live');
    expect(s.reconnects).toBe(1);
    h.status({ kind: 'ended', atMs: 3000 });
    expect(h.snapshot(9000).state).toBe('ended');
  });

  it('counts frames and bytes per second over the last second', () => {
    const h = createLinkHealthTracker('test', 0);
    h.status({ kind: 'open', atMs: 0 });
    for (let i = 0; i < 100; i++) {
      h.line(99, 1000 + i * 10);
      h.accepted(i * 0.01, 1000 + i * 10, false);
    }
    const s = h.snapshot(1990);
    expect(s.framesPerS).toBe(100);
    expect(s.bytesPerS).toBe(100 * 100); // 99 bytes + the newline
    expect(h.snapshot(5000).framesPerS).toBe(0);
  });

  it('reads a steady 10 Hz stream as 10 frames/s whatever the moment of the snapshot', () => {
    const h = createLinkHealthTracker('test', 0);
    h.status({ kind: 'open', atMs: 0 });
    for (let i = 0; i < 50; i++) {
      const atMs = i * 100 + 37;
      h.line(50, atMs);
      h.accepted(i * 0.1, atMs, false);
      // snapshots between this frame and the next, at several phases within the 100 ms buckets
      if (i >= 10)
        for (const phaseMs of [0, 13, 62, 99]) expect(h.snapshot(atMs + phaseMs).framesPerS).toBeCloseTo(10, 9);
    }
  });

  it('counts gaps over 0.5 s, clock restarts and rejections grouped by code and key, not by text', () => {
    const h = createLinkHealthTracker('test', 0);
    h.accepted(0, 0, false);
    h.accepted(0.5, 1, false);
    h.accepted(1.2, 2, false); // gap
    h.accepted(0.1, 3, true); // restart, not a gap
    h.rejected(rejectionOf('{"t_s":1,"tas_mps":400,"alt_m":0,"nz":1}'));
    h.rejected(rejectionOf('{"t_s":1,"tas_mps":-2,"alt_m":0,"nz":1}'));
    h.rejected(INVALID_JSON);
    const s = h.snapshot(4, { file: 'r.tmrec', bytes: 123, error: null });
    expect(s.gaps).toBe(1);
    expect(s.clockRestarts).toBe(1);
    expect(s.rejected).toBe(3);
    expect(s.rejectedByCode).toEqual([
      { code: 'out_of_range', key: 'tas_mps', count: 2, words: 'tas_mps must be a number from 0 to 300 m/s' },
      { code: 'invalid_json', key: null, count: 1, words: 'invalid JSON' },
    ]);
    expect(s.recordingFile).toBe('r.tmrec');
    expect(formatLinkSummary(s)).toContain('rejected 2× [out_of_range] tas_mps must be a number from 0 to 300 m/s');
  });

  it('counts the same code on different keys apart, and a wrong type apart from a value out of range', () => {
    const h = createLinkHealthTracker('test', 0);
    h.rejected(rejectionOf('{"t_s":1,"tas_mps":400,"alt_m":0,"nz":1}'));
    h.rejected(rejectionOf('{"t_s":1,"tas_mps":20,"alt_m":25000,"nz":1}'));
    h.rejected(rejectionOf('{"t_s":1,"tas_mps":"fast","alt_m":0,"nz":1}'));
    h.rejected(rejectionOf('{"t_s":1,"tas_mps":20,"alt_m":25001,"nz":1}'));
    expect(h.snapshot(1).rejectedByCode.map((g) => [g.code, g.key, g.count])).toEqual([
      ['out_of_range', 'alt_m', 2],
      ['out_of_range', 'tas_mps', 1],
      ['wrong_type', 'tas_mps', 1],
    ]);
  });
});
