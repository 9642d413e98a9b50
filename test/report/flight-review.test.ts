import { describe, expect, it } from 'vitest';
import { createDecimator, median } from '../../src/core/decimate.js';
import { createFlightReviewer, MAX_REJECTS_KEPT, PLOT_POINTS_PER_LEVEL } from '../../src/core/flight-review.js';
import type { Frame } from '../../src/core/frame.js';
import { INVALID_JSON } from '../../src/decode/rejections.js';
import { exampleAirframe } from '../helpers/airframes.js';

// The example airframe at 12 m/s TAS, sea level ISA: n_stall = q·S·CLmax/W = 1.85499 (hand computation from
// Anderson ch. 6's relation). nz 1.0 → stall utilization 0.539 (normal); nz 1.6 → 0.8625 (caution).
const f = (tS: number, nz: number, tas = 12): Frame => ({ tS, airspeedKind: 'tas', airspeedMps: tas, altM: 0, nz });

describe('flight review accumulation', () => {
  it('counts time in each level at the level of the frame that begins each interval', () => {
    const r = createFlightReviewer(exampleAirframe(), { smoothTauS: 0 });
    // utilization over the caution 1.0–1.5 (every 0.1 s); the caution stays shown through its 0.5 s clear
    // stretch (1.5–2.0) and goes off at 2.0; the event ends where the stretch began
    for (let i = 0; i <= 25; i++) r.accept(f(i / 10, i >= 10 && i < 15 ? 1.6 : 1.0));
    const review = r.finish();
    expect(review.timeInLevelS.normal).toBeCloseTo(1.5, 9);
    expect(review.timeInLevelS.caution).toBeCloseTo(1.0, 9);
    expect(review.timeInLevelS.warning).toBe(0);
    expect(review.durationS).toBeCloseTo(2.5, 9);
    expect(review.events).toHaveLength(1);
    expect(review.events[0]!.start_s).toBeCloseTo(1.0, 9);
    expect(review.events[0]!.end_s).toBeCloseTo(1.5, 9);
  });

  it('gives the same summary without the time history, which it then leaves out', () => {
    const feed = (timeHistory: boolean) => {
      const r = createFlightReviewer(exampleAirframe(), { smoothTauS: 0 }, {}, { timeHistory });
      for (let i = 0; i <= 40; i++) r.accept(f(i / 10 + (i > 20 ? 2 : 0), i >= 10 && i < 30 ? 1.6 : 1.0));
      return r.finish();
    };
    const withHistory = feed(true);
    const without = feed(false);
    expect(withHistory.timeHistory?.frames).toBe(41);
    expect(without.timeHistory).toBeNull();
    expect({ ...without, timeHistory: withHistory.timeHistory }).toEqual(withHistory);
  });

  it('keeps peaks per limit with their time', () => {
    const r = createFlightReviewer(exampleAirframe(), { smoothTauS: 0 });
    [1.0, 1.3, 1.6, 1.2].forEach((nz, i) => r.accept(f(i * 0.1, nz)));
    const review = r.finish();
    expect(review.peaks.stall.utilization!).toBeCloseTo(1.6 / 1.85499, 4);
    expect(review.peaks.stall.t_s).toBeCloseTo(0.2, 9);
    expect(review.peaks.structure.utilization!).toBeCloseTo(1.6 / 3.8, 9);
  });

  it('leaves gaps over 1 s out of the time in level and closes events across them', () => {
    const r = createFlightReviewer(exampleAirframe(), { smoothTauS: 0 });
    r.accept(f(0, 1.6));
    r.accept(f(0.1, 1.6));
    r.accept(f(3.1, 1.6)); // 3 s without data
    r.accept(f(3.2, 1.0));
    const review = r.finish();
    expect(review.conditions.gaps).toBe(1);
    expect(review.conditions.gapS).toBeCloseTo(3.0, 9);
    expect(review.timeInLevelS.caution).toBeCloseTo(0.2, 9);
    expect(review.durationS).toBeCloseTo(3.2, 9);
    expect(review.events.map((e) => [e.start_s, e.end_s])).toEqual([
      [0, 0.1],
      [3.1, 3.2],
    ]);
  });

  it('restarts the computation at a new segment (the sender clock restarted)', () => {
    const r = createFlightReviewer(exampleAirframe());
    r.accept(f(10, 1.0));
    r.accept(f(10.1, 1.0));
    // Clock restarts near 0: the filter starts afresh at the raw value
    const rec = r.accept(f(0.5, 1.6), { newSegment: true });
    expect(rec?.n_measured).toBe(1.6);
    const review = r.finish();
    expect(review.conditions.segments).toBe(2);
    expect(review.durationS).toBeCloseTo(0.1, 9);
  });

  it('keeps only the first 100 rejected lines but counts all', () => {
    const r = createFlightReviewer(exampleAirframe());
    for (let i = 1; i <= 250; i++) r.reject(i, INVALID_JSON);
    r.accept(f(0, 1));
    const review = r.finish();
    expect(review.rejected).toBe(250);
    expect(review.rejects).toHaveLength(MAX_REJECTS_KEPT);
    expect(review.rejects[99]).toEqual({ line: 100, reason: 'invalid JSON', code: 'invalid_json' });
    expect(review.frames).toBe(251);
  });

  it('holds a bounded sample of plot points however long the flight', () => {
    const r = createFlightReviewer(exampleAirframe(), { smoothTauS: 0 });
    for (let i = 0; i < 20_000; i++) r.accept(f(i * 0.01, i % 1000 === 0 ? 1.7 : 1.0));
    const review = r.finish();
    expect(review.plotPoints.length).toBeLessThanOrEqual(3 * PLOT_POINTS_PER_LEVEL);
    // 20 one-frame pulls, each warning held through its 0.5 s clear stretch (from the next frame): 51 frames each
    expect(review.plotPoints.filter((p) => p.level === 'warning').length).toBe(20 * 51);
    expect(review.plotPointsOf).toBe(20_000);
    expect(review.conditions.medianDensityKgM3!).toBeCloseTo(1.225, 4);
    expect(review.conditions.medianMassKg).toBe(3.2);
  });
});

describe('decimated sample', () => {
  it('stays within its capacity, in order, spread over the whole stream', () => {
    const d = createDecimator<number>(100);
    for (let i = 0; i < 10_000; i++) d.push(i);
    const items = d.items();
    expect(items.length).toBeLessThan(100);
    expect(items.length).toBeGreaterThanOrEqual(50);
    expect([...items].sort((a, b) => a - b)).toEqual(items);
    expect(items[0]).toBe(0);
    expect(items[items.length - 1]!).toBeGreaterThan(9_000);
    // evenly spaced
    const steps = new Set(items.slice(1).map((v, i) => v - items[i]!));
    expect(steps.size).toBe(1);
    expect(d.seen()).toBe(10_000);
  });

  it('gives the median of odd and even counts', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median([])).toBeNull();
  });
});
