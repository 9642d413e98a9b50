import { describe, expect, it } from 'vitest';
import { createLinkHealthTracker, formatLinkSummary, reasonKind } from '../../src/sources/link-health-tracker.js';

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

  it('counts gaps over 0.5 s, clock restarts and rejections grouped by reason', () => {
    const h = createLinkHealthTracker('test', 0);
    h.accepted(0, 0, false);
    h.accepted(0.5, 1, false);
    h.accepted(1.2, 2, false); // gap
    h.accepted(0.1, 3, true); // restart, not a gap
    h.rejected('tas_mps must be a finite number ≥ 0 (got "fast")');
    h.rejected('tas_mps must be a finite number ≥ 0 (got -2)');
    h.rejected('invalid JSON');
    const s = h.snapshot(4, { file: 'r.tmrec', bytes: 123, error: null });
    expect(s.gaps).toBe(1);
    expect(s.clockRestarts).toBe(1);
    expect(s.rejected).toBe(3);
    expect(s.rejectedByReason).toEqual({ 'tas_mps must be a finite number ≥ 0': 2, 'invalid JSON': 1 });
    expect(s.recordingFile).toBe('r.tmrec');
    expect(formatLinkSummary(s)).toContain('rejected 2× tas_mps must be a finite number ≥ 0');
  });

  it('groups reasons without the offending value', () => {
    expect(reasonKind('alt_m must be a number from -500 to 20000 m (got 25000)')).toBe(
      'alt_m must be a number from -500 to 20000 m',
    );
    expect(reasonKind('line longer than 65536 bytes (cut)')).toBe('line longer than 65536 bytes (cut)');
  });
});
