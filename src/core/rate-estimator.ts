/**
 * Rate of change of a sampled value: the least-squares slope of the value against t_s over the samples with t_s in
 * [t − W, t], the present sample included. Null unless the window holds at least 3 samples spanning at least W/2
 * (fewer, or a short span, give a slope dominated by noise). Pure functions plus one small stateful wrapper that
 * the engine calls once per frame and resets at every break.
 */

/** Default window W, s. */
export const DEFAULT_RATE_WINDOW_S = 1.0;
/** Fewest samples for a slope. */
export const RATE_MIN_SAMPLES = 3;

/**
 * Slack of a comparison of frame times with a window edge, s: a few units in the last place of t. Frame times are
 * decimals held in binary floats, so t − W can land a hair above a frame that lies exactly W earlier (128.8 − 1 gives
 * 127.80000000000001 > 127.8): without the slack that frame would leave [t − W, t] in some windows and not in others.
 */
export function windowEdgeSlackS(tS: number): number {
  return 4 * Number.EPSILON * Math.max(1, Math.abs(tS));
}

/** Conditions for a slope: at least 3 samples spanning at least half the window (`slackS`: see windowEdgeSlackS). */
export function rateWindowUsable(count: number, spanS: number, windowS: number, slackS = 0): boolean {
  return count >= RATE_MIN_SAMPLES && spanS >= windowS / 2 - slackS;
}

/**
 * Least-squares slope of ys against ts (all samples given), or null when fewer than 2 samples or the times do not
 * vary. Times and values are centred on their means first (no cancellation at large t_s).
 */
export function leastSquaresSlope(ts: readonly number[], ys: readonly number[]): number | null {
  const n = Math.min(ts.length, ys.length);
  if (n < 2) return null;
  let tMean = 0;
  let yMean = 0;
  for (let i = 0; i < n; i++) {
    tMean += ts[i]!;
    yMean += ys[i]!;
  }
  tMean /= n;
  yMean /= n;
  let stt = 0;
  let sty = 0;
  for (let i = 0; i < n; i++) {
    const dt = ts[i]! - tMean;
    stt += dt * dt;
    sty += dt * (ys[i]! - yMean);
  }
  return stt > 0 ? sty / stt : null;
}

export interface RateEstimator {
  /**
   * Add the present sample and return the slope over [tS − W, tS] (value units per second), or null. A null value
   * (the key is absent from this frame) adds nothing and returns null; older samples still leave the window by
   * time. A time not after the previous sample's restarts the window (the engine calls `reset` at breaks anyway).
   */
  push(tS: number, value: number | null): number | null;
  /** Forget every sample (a break: gap, time reset, link lost). */
  reset(): void;
  /** Samples now in the window (for tests and diagnostics). */
  readonly count: number;
}

/**
 * Running sums over a ring buffer: O(1) amortised per sample. Sums are kept relative to a reference time and value
 * (the oldest sample at the last rebuild) and rebuilt from the buffer every time as many samples have been added as
 * the window holds, so rounding neither accumulates nor cancels at large t_s or large values.
 */
export function createRateEstimator(windowS: number = DEFAULT_RATE_WINDOW_S): RateEstimator {
  if (!(windowS > 0) || !Number.isFinite(windowS))
    throw new RangeError(`rate window must be positive (got ${windowS})`);
  // The ring's capacity is a power of two (16, doubled when full): an index wraps with a mask, not a division.
  let times = new Float64Array(16);
  let values = new Float64Array(16);
  let mask = times.length - 1;
  let head = 0; // index of the oldest sample
  let count = 0;
  let lastT = -Infinity;
  let t0 = 0;
  let y0 = 0;
  let sumT = 0;
  let sumY = 0;
  let sumTT = 0;
  let sumTY = 0;
  let addedSinceRebuild = 0;

  const at = (k: number): number => (head + k) & mask;

  const rebuild = (): void => {
    sumT = sumY = sumTT = sumTY = 0;
    addedSinceRebuild = 0;
    if (count === 0) return;
    t0 = times[head]!;
    y0 = values[head]!;
    for (let k = 0; k < count; k++) {
      const i = at(k);
      const dt = times[i]! - t0;
      const dy = values[i]! - y0;
      sumT += dt;
      sumY += dy;
      sumTT += dt * dt;
      sumTY += dt * dy;
    }
  };

  const grow = (): void => {
    const nt = new Float64Array(times.length * 2);
    const nv = new Float64Array(values.length * 2);
    for (let k = 0; k < count; k++) {
      nt[k] = times[at(k)]!;
      nv[k] = values[at(k)]!;
    }
    times = nt;
    values = nv;
    mask = times.length - 1;
    head = 0;
  };

  const evictBefore = (tMin: number): void => {
    while (count > 0 && times[head]! < tMin) {
      const dt = times[head]! - t0;
      const dy = values[head]! - y0;
      sumT -= dt;
      sumY -= dy;
      sumTT -= dt * dt;
      sumTY -= dt * dy;
      head = (head + 1) & mask;
      count--;
    }
    if (count === 0) rebuild();
  };

  const reset = (): void => {
    head = 0;
    count = 0;
    lastT = -Infinity;
    rebuild();
  };

  return {
    push(tS: number, value: number | null): number | null {
      if (!Number.isFinite(tS)) return null;
      if (tS <= lastT) reset();
      lastT = tS;
      const slackS = windowEdgeSlackS(tS);
      evictBefore(tS - windowS - slackS);
      if (value === null || !Number.isFinite(value)) return null;
      if (count === times.length) grow();
      const i = at(count);
      times[i] = tS;
      values[i] = value;
      if (count === 0) {
        t0 = tS;
        y0 = value;
      }
      count++;
      const dt = tS - t0;
      const dy = value - y0;
      sumT += dt;
      sumY += dy;
      sumTT += dt * dt;
      sumTY += dt * dy;
      if (++addedSinceRebuild >= Math.max(count, 16)) rebuild();
      if (!rateWindowUsable(count, tS - times[head]!, windowS, slackS)) return null;
      const stt = sumTT - (sumT * sumT) / count;
      if (!(stt > 0)) return null;
      return (sumTY - (sumT * sumY) / count) / stt;
    },
    reset,
    get count() {
      return count;
    },
  };
}

/** The two rates the energy method needs at one frame. */
export interface EnergyRates {
  /** dV/dt of the frame's raw TAS (tas_raw_mps), m/s². */
  dvdtMps2: number | null;
  /** dh/dt of alt_m, m/s. */
  dhdtMps: number | null;
}

export interface EnergyRateTracker {
  /** Add one accepted frame; both windows cover [tS − W, tS]. */
  push(tS: number, tasRawMps: number | null, altM: number | null): EnergyRates;
  /** A break: both windows restart. */
  reset(): void;
}

/** dvdt_mps2 and dhdt_mps per frame: two rate estimators with the same window, restarted together. */
export function createEnergyRateTracker(windowS: number = DEFAULT_RATE_WINDOW_S): EnergyRateTracker {
  const speed = createRateEstimator(windowS);
  const altitude = createRateEstimator(windowS);
  return {
    push(tS, tasRawMps, altM) {
      return { dvdtMps2: speed.push(tS, tasRawMps), dhdtMps: altitude.push(tS, altM) };
    },
    reset() {
      speed.reset();
      altitude.reset();
    },
  };
}
