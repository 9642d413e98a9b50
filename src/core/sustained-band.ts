/**
 * The sustainable speed band at a load factor: the lowest and highest TAS in [Vs1, top] (top = vne as TAS) at which
 * min(n_stall(V), n_thrust(V), n_structural) ≥ max(1, n) at a density and mass. Speeds where the thrust is unknown
 * (outside a thrust table) do not count. One interval is assumed: the band runs from the lowest qualifying speed to
 * the highest (with a hump-shaped n_thrust and a rising n_stall the qualifying speeds form one interval).
 */
import type { Aircraft } from './aircraft.js';
import { stallSpeedMps, thrustLoadFactor } from './performance.js';

export interface SpeedBand {
  loMps: number;
  hiMps: number;
}

/** Relative accuracy of the thrust ends (the contract asks for 0.1 %; bisection gets far below it cheaply). */
const BAND_REL_TOLERANCE = 1e-6;
/**
 * Grid of the scan of n_thrust over [stall end, top]. The stall and structural conditions need no scan (below), so
 * the grid only has to find the thrust interval; a band narrower than one step is still found through the best
 * sample.
 */
const SCAN_STEPS = 40;
/** Refinement rounds and samples of the search for the largest thrust margin (a band narrower than a step). */
const BEST_ROUNDS = 8;
const BEST_SAMPLES = 20;
/** n_stall(Vs1) = 1 up to rounding: a margin this small counts as met. */
const MARGIN_TOLERANCE = 1e-9;

/**
 * [lo, hi] TAS, m/s, or null when no speed in [Vs1, topMps] qualifies (also when topMps ≤ Vs1).
 * `loadFactor` is the present load factor; the band is for N = max(1, loadFactor).
 *
 * Each limit in turn: the structural limit does not depend on speed (N ≤ n_limit_pos or no band); the stall limit
 * n_stall = (V/Vs1)² holds from Vs1·√N on, in closed form; only the thrust limit is searched — a scan for the
 * qualifying speeds, then bisection of each end that is not the stall end or the top.
 */
export function sustainedBandMps(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  loadFactor: number,
  topMps: number,
): SpeedBand | null {
  if (!(densityKgM3 > 0) || !(massKg > 0) || !Number.isFinite(loadFactor) || !Number.isFinite(topMps)) return null;
  const required = Math.max(1, loadFactor);
  const tolerance = MARGIN_TOLERANCE * required;
  const vs1 = stallSpeedMps(aircraft, densityKgM3, massKg);
  if (!(topMps >= vs1)) return null;
  if (aircraft.nLimitPos - required < -tolerance) return null;
  // n_stall(V) = N at V = Vs1·√N (n_stall grows with V²).
  const stallEnd = vs1 * Math.sqrt(required);
  if (stallEnd > topMps * (1 + MARGIN_TOLERANCE)) return null;
  const from = Math.min(stallEnd, topMps);
  const ok = (v: number): boolean => {
    const nThrust = thrustLoadFactor(aircraft, v, densityKgM3, massKg);
    return nThrust !== null && nThrust - required >= -tolerance;
  };
  const speeds: number[] = [];
  for (let i = 0; i <= SCAN_STEPS; i++) speeds.push(from + ((topMps - from) * i) / SCAN_STEPS);
  // A thrust table's own speeds too: a table may cover less than one step of the grid.
  if (aircraft.thrust.model === 'table') {
    for (const [v] of aircraft.thrust.points) if (v > from && v < topMps) speeds.push(v);
    speeds.sort((a, b) => a - b);
  }
  const lastIndex = speeds.length - 1;
  let first = -1;
  let last = -1;
  for (let i = 0; i < speeds.length; i++) {
    if (ok(speeds[i]!)) {
      if (first < 0) first = i;
      last = i;
    }
  }
  if (first >= 0) {
    const lo = first === 0 ? from : edge(ok, speeds[first - 1]!, speeds[first]!);
    const hi = last === lastIndex ? topMps : edge(ok, speeds[last + 1]!, speeds[last]!);
    return { loMps: lo, hiMps: hi };
  }
  // Nothing on the grid: look for a band narrower than a step around the largest thrust margin.
  const best = bestThrustSpeed(aircraft, densityKgM3, massKg, from, topMps);
  if (best === null || !ok(best)) return null;
  const step = (topMps - from) / SCAN_STEPS;
  const below = Math.max(from, best - step);
  const above = Math.min(topMps, best + step);
  return {
    loMps: ok(below) ? below : edge(ok, below, best),
    hiMps: ok(above) ? above : edge(ok, above, best),
  };
}

/** Bisection between a failing and a qualifying speed: the qualifying end of the boundary. */
function edge(ok: (v: number) => boolean, failing: number, qualifying: number): number {
  let bad = failing;
  let good = qualifying;
  while (Math.abs(good - bad) > BAND_REL_TOLERANCE * Math.abs(good)) {
    const mid = (bad + good) / 2;
    if (ok(mid)) good = mid;
    else bad = mid;
  }
  return good;
}

/** The speed of the largest n_thrust, refined by successive finer scans (the maximum may sit on a kink). */
function bestThrustSpeed(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  lo: number,
  hi: number,
): number | null {
  let bestV: number | null = null;
  let bestN = Number.NEGATIVE_INFINITY;
  let a = lo;
  let b = hi;
  let samples = SCAN_STEPS;
  for (let round = 0; round < BEST_ROUNDS; round++) {
    const step = (b - a) / samples;
    for (let i = 0; i <= samples; i++) {
      const v = a + step * i;
      const n = thrustLoadFactor(aircraft, v, densityKgM3, massKg);
      if (n !== null && n > bestN) {
        bestN = n;
        bestV = v;
      }
    }
    if (bestV === null) return null;
    a = Math.max(lo, bestV - step);
    b = Math.min(hi, bestV + step);
    samples = BEST_SAMPLES;
  }
  return bestV;
}
