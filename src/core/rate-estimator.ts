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

/** A full ring's `count` items from `head`, in order, at the start of an array twice its length (power of two). */
export function grownRing(ring: Float64Array, head: number, count: number): Float64Array<ArrayBuffer> {
  const mask = ring.length - 1;
  const out = new Float64Array(ring.length * 2);
  for (let k = 0; k < count; k++) out[k] = ring[(head + k) & mask]!;
  return out;
}

/**
 * Samples added between two rebuilds of the running sums from the ring: four windows' worth (at least 64). The sums
 * are taken relative to the oldest sample at the last rebuild, so until the next one their terms stay within a few
 * windows of it and rounding does not build up; rebuilding less often than once a window saves a pass over the ring
 * per window.
 */
function rebuildAfter(count: number): number {
  return Math.max(4 * count, 64);
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

/** An estimator's whole state, to start another exactly where it stands (see createSharedRateWindows). */
interface RateEstimatorSeed {
  times: Float64Array;
  values: Float64Array;
  head: number;
  count: number;
  lastT: number;
  t0: number;
  y0: number;
  sumT: number;
  sumY: number;
  sumTT: number;
  sumTY: number;
  addedSinceRebuild: number;
}

/**
 * Running sums over a ring buffer: O(1) amortised per sample. Sums are kept relative to a reference time and value
 * (the oldest sample at the last rebuild) and rebuilt from the buffer after rebuildAfter(count) samples (four
 * windows' worth), so rounding neither accumulates nor cancels at large t_s or large values.
 */
export function createRateEstimator(windowS: number = DEFAULT_RATE_WINDOW_S): RateEstimator {
  if (!(windowS > 0) || !Number.isFinite(windowS))
    throw new RangeError(`rate window must be positive (got ${windowS})`);
  return rateEstimatorFrom(windowS, undefined);
}

function rateEstimatorFrom(windowS: number, seed: RateEstimatorSeed | undefined): RateEstimator {
  // The ring's capacity is a power of two (16, doubled when full): an index wraps with a mask, not a division.
  let times = seed?.times ?? new Float64Array(16);
  let values = seed?.values ?? new Float64Array(16);
  let mask = times.length - 1;
  let head = seed?.head ?? 0; // index of the oldest sample
  let count = seed?.count ?? 0;
  let lastT = seed?.lastT ?? Number.NEGATIVE_INFINITY;
  let t0 = seed?.t0 ?? 0;
  let y0 = seed?.y0 ?? 0;
  let sumT = seed?.sumT ?? 0;
  let sumY = seed?.sumY ?? 0;
  let sumTT = seed?.sumTT ?? 0;
  let sumTY = seed?.sumTY ?? 0;
  let addedSinceRebuild = seed?.addedSinceRebuild ?? 0;

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
    times = grownRing(times, head, count);
    values = grownRing(values, head, count);
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
    lastT = Number.NEGATIVE_INFINITY;
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
      if (++addedSinceRebuild >= rebuildAfter(count)) rebuild();
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

/**
 * Several rate estimators over one time axis (the energy keys' speed, altitude and bank): the same slopes as one
 * createRateEstimator per series, to the last bit, for less work. While every series has a value at every time since
 * the last reset, their rings hold the same times, so the times and the time sums (Σt, Σt²) are kept once and each
 * series keeps only its values, Σy and Σty. A series that misses a value leaves the shared ring: it goes on as an
 * estimator of its own, started from the shared state as it stood, until the next reset (a break, or a time not
 * after the last) brings it back.
 */
export interface SharedRateWindows {
  /**
   * Add one time (`row[0]`) with a value per series (`row[1 + k]`; not finite, NaN for instance: none) and set
   * series k's slope over [tS − W, tS] — what `push` of its own estimator would return — as `hasSlope[k]` 1 and
   * `slopes[k]`, or `hasSlope[k]` 0 for null. Typed arrays in and out, the time too: no number is boxed per frame.
   */
  push(row: Float64Array): void;
  /** The slopes of the last push, by series (rewritten by each push); read only where hasSlope is 1. */
  readonly slopes: Float64Array;
  readonly hasSlope: Uint8Array;
  /** Forget every sample of every series. */
  reset(): void;
}

export function createSharedRateWindows(windowS: number, seriesCount: number): SharedRateWindows {
  if (!(windowS > 0) || !Number.isFinite(windowS))
    throw new RangeError(`rate window must be positive (got ${windowS})`);
  const S = seriesCount;
  // One ring of times and one of values, interleaved (slot·S + series); capacities a power of two.
  let times = new Float64Array(16);
  let values = new Float64Array(16 * S);
  let mask = 15;
  let head = 0;
  let count = 0;
  // The running scalars live in a typed array: a double kept in a closure's variable is boxed at every store.
  const st = new Float64Array(4);
  const LAST_T = 0;
  const T0 = 1;
  const SUM_T = 2;
  const SUM_TT = 3;
  st[LAST_T] = Number.NEGATIVE_INFINITY;
  let addedSinceRebuild = 0;
  const y0 = new Float64Array(S);
  const sumY = new Float64Array(S);
  const sumTY = new Float64Array(S);
  /** A series' own estimator once it left the shared ring; undefined while it is in it. */
  const own: (RateEstimator | undefined)[] = Array.from({ length: S }, () => undefined);
  /** 1 while series s is in the shared ring. */
  const inRing = new Uint8Array(S).fill(1);
  let detached = 0;
  const slopes = new Float64Array(S);
  const hasSlope = new Uint8Array(S);

  const rebuild = (): void => {
    let sumT = 0;
    let sumTT = 0;
    sumY.fill(0);
    sumTY.fill(0);
    addedSinceRebuild = 0;
    if (count === 0) {
      st[SUM_T] = st[SUM_TT] = 0;
      return;
    }
    const t0 = times[head]!;
    st[T0] = t0;
    for (let s = 0; s < S; s++) if (inRing[s] === 1) y0[s] = values[head * S + s]!;
    for (let k = 0; k < count; k++) {
      const dt = times[(head + k) & mask]! - t0;
      sumT += dt;
      sumTT += dt * dt;
    }
    for (let s = 0; s < S; s++) {
      if (inRing[s] !== 1) continue;
      const v0 = y0[s]!;
      let sy = 0;
      let sty = 0;
      for (let k = 0; k < count; k++) {
        const i = (head + k) & mask;
        const dt = times[i]! - t0;
        const dy = values[i * S + s]! - v0;
        sy += dy;
        sty += dt * dy;
      }
      sumY[s] = sy;
      sumTY[s] = sty;
    }
    st[SUM_T] = sumT;
    st[SUM_TT] = sumTT;
  };

  const reset = (): void => {
    head = 0;
    count = 0;
    st[LAST_T] = Number.NEGATIVE_INFINITY;
    own.fill(undefined);
    inRing.fill(1);
    detached = 0;
    rebuild();
  };

  /** Series s leaves the ring: its own estimator, with the state the ring holds for it now. */
  const detach = (s: number): void => {
    const ownTimes = new Float64Array(times.length);
    ownTimes.set(times);
    const ownValues = new Float64Array(times.length);
    for (let i = 0; i < times.length; i++) ownValues[i] = values[i * S + s]!;
    own[s] = rateEstimatorFrom(windowS, {
      times: ownTimes,
      values: ownValues,
      head,
      count,
      lastT: st[LAST_T]!,
      t0: st[T0]!,
      y0: y0[s]!,
      sumT: st[SUM_T]!,
      sumY: sumY[s]!,
      sumTT: st[SUM_TT]!,
      sumTY: sumTY[s]!,
      addedSinceRebuild,
    });
    inRing[s] = 0;
    detached++;
  };

  const grow = (): void => {
    const nt = new Float64Array(times.length * 2);
    const nv = new Float64Array(values.length * 2);
    for (let k = 0; k < count; k++) {
      const from = (head + k) & mask;
      nt[k] = times[from]!;
      for (let s = 0; s < S; s++) nv[k * S + s] = values[from * S + s]!;
    }
    times = nt;
    values = nv;
    mask = times.length - 1;
    head = 0;
  };

  return {
    slopes,
    hasSlope,
    reset,
    push(row) {
      const tS = row[0]!;
      if (!Number.isFinite(tS)) {
        hasSlope.fill(0);
        return;
      }
      if (tS <= st[LAST_T]!) reset();
      // A series without a value leaves the ring before this time touches it.
      for (let s = 0; s < S; s++) if (inRing[s] === 1 && !Number.isFinite(row[1 + s]!)) detach(s);
      if (detached > 0) {
        for (let s = 0; s < S; s++) {
          const o = own[s];
          if (o === undefined) continue;
          const slope = o.push(tS, row[1 + s]!);
          if (slope === null) hasSlope[s] = 0;
          else {
            hasSlope[s] = 1;
            slopes[s] = slope;
          }
        }
      }
      st[LAST_T] = tS;
      if (detached === S) return;
      // Evict what left the window (as each estimator's evictBefore does).
      const slackS = windowEdgeSlackS(tS);
      const tMin = tS - windowS - slackS;
      let t0 = st[T0]!;
      let sumT = st[SUM_T]!;
      let sumTT = st[SUM_TT]!;
      while (count > 0 && times[head]! < tMin) {
        const dt = times[head]! - t0;
        sumT -= dt;
        sumTT -= dt * dt;
        const base = head * S;
        for (let s = 0; s < S; s++) {
          if (inRing[s] !== 1) continue;
          const dy = values[base + s]! - y0[s]!;
          sumY[s] = sumY[s]! - dy;
          sumTY[s] = sumTY[s]! - dt * dy;
        }
        head = (head + 1) & mask;
        count--;
      }
      if (count === 0) {
        rebuild();
        sumT = st[SUM_T]!;
        sumTT = st[SUM_TT]!;
      }
      if (count === times.length) grow();
      const i = (head + count) & mask;
      times[i] = tS;
      const first = count === 0;
      if (first) t0 = tS;
      const dt = tS - t0;
      const base = i * S;
      for (let s = 0; s < S; s++) {
        if (inRing[s] !== 1) continue;
        const v = row[1 + s]!;
        values[base + s] = v;
        if (first) y0[s] = v;
        const dy = v - y0[s]!;
        sumY[s] = sumY[s]! + dy;
        sumTY[s] = sumTY[s]! + dt * dy;
      }
      count++;
      sumT += dt;
      sumTT += dt * dt;
      st[T0] = t0;
      st[SUM_T] = sumT;
      st[SUM_TT] = sumTT;
      if (++addedSinceRebuild >= rebuildAfter(count)) {
        rebuild();
        sumT = st[SUM_T]!;
        sumTT = st[SUM_TT]!;
      }
      const usable = rateWindowUsable(count, tS - times[head]!, windowS, slackS);
      const stt = sumTT - (sumT * sumT) / count;
      for (let s = 0; s < S; s++) {
        if (inRing[s] !== 1) continue;
        if (usable && stt > 0) {
          hasSlope[s] = 1;
          slopes[s] = (sumTY[s]! - (sumT * sumY[s]!) / count) / stt;
        } else hasSlope[s] = 0;
      }
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
