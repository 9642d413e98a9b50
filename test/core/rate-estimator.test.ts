import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  createEnergyRateTracker,
  createRateEstimator,
  createSharedRateWindows,
  leastSquaresSlope,
} from '../../src/core/rate-estimator.js';

/** A seeded normal generator (Box–Muller over a 32-bit LCG; Numerical Recipes constants), for reproducible noise. */
function gaussian(seed: number): () => number {
  let s = seed >>> 0;
  const uniform = () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s + 0.5) / 2 ** 32;
  };
  return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
}

describe('the rate estimator', () => {
  it('gives the exact slope of a straight line, at any rate and at large times', () => {
    // A straight line y = a + b·t has least-squares slope b exactly (normal equations of linear regression).
    for (const [hz, t0, a, b] of [
      [10, 0, 0, 2.5],
      [50, 1e6, 1500, -0.75],
      [1000, 86_400, 25, 3],
    ] as const) {
      const est = createRateEstimator(1.0);
      let last: number | null;
      for (let i = 0; i < hz * 5; i++) {
        const t = t0 + i / hz;
        last = est.push(t, a + b * (t - t0));
        if (i / hz >= 0.5 + 1e-9) expect(last, `${hz} Hz at ${t}`).not.toBeNull();
        if (last !== null) expect(Math.abs(last - b), `${hz} Hz at ${t}`).toBeLessThan(1e-9 * Math.max(1, Math.abs(b)));
      }
    }
  });

  it('puts the slope of a noisy line within three standard errors of the true slope', () => {
    // Standard error of the least-squares slope: σ/√Σ(t − t̄)² (any regression text). With 50 Hz and W = 1 s there
    // are 51 samples; the test checks every window of a long run, so about 0.3 % may fall outside 3 SE by chance.
    const sigma = 0.5;
    const slope = -1.2;
    const hz = 50;
    const noise = gaussian(7);
    const est = createRateEstimator(1.0);
    const ts: number[] = [];
    let outside = 0;
    let checked = 0;
    for (let i = 0; i < hz * 120; i++) {
      const t = 1000 + i / hz;
      ts.push(t);
      const r = est.push(t, 300 + slope * t + sigma * noise());
      const window = ts.filter((x) => x >= t - 1.0);
      if (r === null || window.length < 40) continue;
      const mean = window.reduce((p, x) => p + x, 0) / window.length;
      const se = sigma / Math.sqrt(window.reduce((p, x) => p + (x - mean) ** 2, 0));
      checked++;
      if (Math.abs(r - slope) > 3 * se) outside++;
    }
    expect(checked).toBeGreaterThan(5000);
    expect(outside / checked).toBeLessThan(0.01);
  });

  it('agrees with a direct least-squares fit over the same window (running sums do not drift)', () => {
    const noise = gaussian(3);
    const est = createRateEstimator(0.8);
    const ts: number[] = [];
    const ys: number[] = [];
    for (let i = 0; i < 20_000; i++) {
      const t = 5e5 + i * 0.013 + (i % 7) * 0.001;
      const y = 1200 + 40 * Math.sin(t / 3) + noise();
      ts.push(t);
      ys.push(y);
      const r = est.push(t, y);
      if (i % 997 !== 0 || r === null) continue;
      const keep = ts.map((x, k) => [x, ys[k]!] as const).filter(([x]) => x >= t - 0.8);
      const direct = leastSquaresSlope(
        keep.map((p) => p[0]),
        keep.map((p) => p[1]),
      )!;
      expect(Math.abs(r - direct)).toBeLessThan(1e-6 * Math.max(1, Math.abs(direct)));
    }
  });

  it('gives null until the window holds 3 frames spanning half of it', () => {
    const est = createRateEstimator(1.0);
    expect(est.push(0, 0)).toBeNull();
    expect(est.push(0.2, 1)).toBeNull(); // 2 frames
    expect(est.push(0.4, 2)).toBeNull(); // 3 frames over 0.4 s < 0.5 s
    expect(est.push(0.5, 2.5)).toBeCloseTo(5, 9); // 4 frames over 0.5 s
  });

  it('gives null after a long gap leaves too few frames in the window, and after a reset', () => {
    const est = createRateEstimator(1.0);
    for (let i = 0; i <= 10; i++) est.push(i * 0.1, i);
    expect(est.push(1.1, 11)).toBeCloseTo(10, 9);
    expect(est.push(5, 50)).toBeNull(); // alone in [4, 5]
    for (let i = 1; i <= 10; i++) est.push(5 + i * 0.1, 50 + i);
    expect(est.count).toBe(11);
    est.reset();
    expect(est.count).toBe(0);
    expect(est.push(6.1, 0)).toBeNull();
  });

  it('keeps frames exactly W old in the window and drops older ones', () => {
    const est = createRateEstimator(1.0);
    est.push(0, 0);
    est.push(0.5, 0.5);
    est.push(1.0, 1.0);
    expect(est.count).toBe(3); // t − W = 0 still inside
    est.push(1.25, 1.25);
    expect(est.count).toBe(3);
  });

  it('keeps the frame exactly W earlier in decimal time stamps, whatever the rounding of t − W in binary', () => {
    // Frames at 10 Hz whose t_s are read from decimal text (0.1, 0.2, … as JSON.parse gives them): the window
    // [t − 1, t] holds 11 of them (both ends included: the definition of the window). In binary 128.8 − 1 gives
    // 127.80000000000001 > 127.8, which used to drop the frame at 127.8 from some windows and not from others.
    const est = createRateEstimator(1.0);
    const counts = new Set<number>();
    let slopeError = 0;
    for (let i = 0; i <= 3000; i++) {
      const t = Number.parseFloat((i / 10).toFixed(1));
      const r = est.push(t, 5 + 2 * t + (i % 2 === 0 ? 0.1 : -0.1));
      if (i < 10) continue;
      counts.add(est.count);
      // A zig-zag of ±0.1 about a line of slope 2 over 11 samples: its least-squares slope is 2 + Σ(t − t̄)·e / Σ(t − t̄)²
      // with the alternating e; any window of 11 gives the same |deviation|, computed here directly.
      const ts = Array.from({ length: 11 }, (_, k) => k / 10);
      const es = ts.map((_, k) => ((i - 10 + k) % 2 === 0 ? 0.1 : -0.1));
      const tMean = 0.5;
      const expected =
        2 + ts.reduce((p, x, k) => p + (x - tMean) * es[k]!, 0) / ts.reduce((p, x) => p + (x - tMean) ** 2, 0);
      slopeError = Math.max(slopeError, Math.abs(r! - expected));
    }
    expect([...counts]).toEqual([11]);
    expect(slopeError).toBeLessThan(1e-9);
  });

  it('restarts when time goes backwards and skips a frame without a value', () => {
    const est = createRateEstimator(1.0);
    for (let i = 0; i <= 10; i++) est.push(10 + i * 0.1, i);
    expect(est.push(5, 0)).toBeNull();
    expect(est.count).toBe(1);
    expect(est.push(5.1, null)).toBeNull();
    expect(est.count).toBe(1);
  });

  it('refuses a window that is not a positive number of seconds', () => {
    expect(() => createRateEstimator(0)).toThrow(/positive/);
    expect(() => createRateEstimator(Number.NaN)).toThrow(/positive/);
  });
});

describe('the energy rate tracker', () => {
  it('gives dV/dt and dh/dt of straight lines together and restarts both at a break', () => {
    // Straight lines have exact least-squares slopes (normal equations of linear regression).
    const rates = createEnergyRateTracker(1.0);
    let last = rates.push(0, 20, 100);
    for (let i = 1; i <= 20; i++) last = rates.push(i * 0.1, 20 - 0.4 * i * 0.1, 100 + 3 * i * 0.1);
    expect(last.dvdtMps2).toBeCloseTo(-0.4, 9);
    expect(last.dhdtMps).toBeCloseTo(3, 9);
    rates.reset();
    expect(rates.push(2.1, 19, 106)).toEqual({ dvdtMps2: null, dhdtMps: null });
  });

  it('keeps each rate to its own key: a frame without altitude still counts for the speed', () => {
    const rates = createEnergyRateTracker(1.0);
    let last = rates.push(0, 20, null);
    for (let i = 1; i <= 10; i++) last = rates.push(i * 0.1, 20 + i * 0.1, null);
    expect(last.dvdtMps2).toBeCloseTo(1, 9);
    expect(last.dhdtMps).toBeNull();
  });
});

describe('rate windows sharing one time axis', () => {
  /** One step of a stream: a time step (negative: the clock runs back), a value per series, or a reset. */
  const step = fc.record({
    dtS: fc.oneof(
      { weight: 12, arbitrary: fc.double({ min: 0.001, max: 0.1, noNaN: true }) },
      { weight: 1, arbitrary: fc.constantFrom(0, -0.5, 2, Number.NaN) },
    ),
    values: fc.array(
      fc.oneof(
        { weight: 10, arbitrary: fc.double({ min: -500, max: 500, noNaN: true }) },
        { weight: 1, arbitrary: fc.constantFrom(null, Number.NaN, Number.POSITIVE_INFINITY) },
      ),
      { minLength: 3, maxLength: 3 },
    ),
    reset: fc.oneof({ weight: 40, arbitrary: fc.constant(false) }, { weight: 1, arbitrary: fc.constant(true) }),
  });

  it('give every series the slope its own estimator gives, bit for bit, with values missing (property)', () => {
    fc.assert(
      fc.property(
        fc.array(step, { minLength: 50, maxLength: 600, size: 'max' }),
        fc.constantFrom(0.05, 0.3, 1),
        (steps, windowS) => {
          const shared = createSharedRateWindows(windowS, 3);
          const own = [0, 1, 2].map(() => createRateEstimator(windowS));
          let t = 1000;
          for (const s of steps) {
            if (s.reset) {
              shared.reset();
              for (const e of own) e.reset();
            }
            t = Number.isNaN(s.dtS) ? t : t + s.dtS;
            const tS = Number.isNaN(s.dtS) ? Number.NaN : t;
            shared.push(Float64Array.from([tS, ...s.values], (v) => v ?? Number.NaN));
            const expected = own.map((e, k) => e.push(tS, s.values[k]!));
            // toEqual compares numbers with Object.is: the same bits (−0 apart from 0), not merely close.
            expect([0, 1, 2].map((k) => (shared.hasSlope[k] === 1 ? shared.slopes[k] : null))).toEqual(expected);
          }
        },
      ),
      { numRuns: 300 },
    );
  });

  it('give the slopes of straight lines over a long flight at 50 Hz, a series absent from some frames', () => {
    // Straight lines have exact least-squares slopes (normal equations of linear regression).
    const shared = createSharedRateWindows(1, 3);
    for (let i = 0; i < 5000; i++) {
      const t = 3600 + i * 0.02;
      shared.push(Float64Array.of(t, 20 - 0.4 * t, 100 + 3 * t, i % 400 < 100 ? Number.NaN : 2 * t));
    }
    expect([...shared.hasSlope]).toEqual([1, 1, 1]);
    expect(shared.slopes[0]).toBeCloseTo(-0.4, 6);
    expect(shared.slopes[1]).toBeCloseTo(3, 6);
    expect(shared.slopes[2]).toBeCloseTo(2, 6);
  });
});
