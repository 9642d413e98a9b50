/**
 * The sustainable speed band at a load factor: the lowest and highest TAS in [Vs1, top] (top = vne as TAS) at which
 * min(n_stall(V), n_thrust(V), n_structural) ≥ max(1, n) at a density and mass. Speeds where the thrust is unknown
 * (outside a thrust table) do not count. One interval is assumed: the band runs from the lowest qualifying speed to
 * the highest (with a hump-shaped n_thrust and a rising n_stall the qualifying speeds form one interval).
 */
import type { Aircraft } from './aircraft.js';
import { computeLimits, stallSpeedMps } from './performance.js';

export interface SpeedBand {
  loMps: number;
  hiMps: number;
}

/** Relative accuracy of the band's ends (the contract asks for 0.1 %; bisection gets far below it cheaply). */
const BAND_REL_TOLERANCE = 1e-6;
/** Grid of the first scan over [Vs1, top]; a band narrower than one step is still found through the best sample. */
const SCAN_STEPS = 200;
/** n_stall(Vs1) = 1 up to rounding: a margin this small counts as met. */
const MARGIN_TOLERANCE = 1e-9;

/** min(n_stall, n_thrust, n_structural) − max(1, n), or null where the thrust is unknown. */
function margin(aircraft: Aircraft, tasMps: number, densityKgM3: number, massKg: number, required: number) {
  const limits = computeLimits(aircraft, tasMps, densityKgM3, massKg);
  return limits.sustained === null ? null : limits.sustained - required;
}

/**
 * [lo, hi] TAS, m/s, or null when no speed in [Vs1, topMps] qualifies (also when topMps ≤ Vs1).
 * `loadFactor` is the present load factor; the band is for max(1, loadFactor).
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
  const vs1 = stallSpeedMps(aircraft, densityKgM3, massKg);
  if (!(topMps >= vs1)) return null;
  const ok = (v: number): boolean => {
    const m = margin(aircraft, v, densityKgM3, massKg, required);
    return m !== null && m >= -MARGIN_TOLERANCE * required;
  };
  const speeds: number[] = [];
  for (let i = 0; i <= SCAN_STEPS; i++) speeds.push(vs1 + ((topMps - vs1) * i) / SCAN_STEPS);
  // A thrust table's own speeds too: a table may cover less than one step of the grid.
  if (aircraft.thrust.model === 'table') {
    for (const [v] of aircraft.thrust.points) if (v > vs1 && v < topMps) speeds.push(v);
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
  let inside: number;
  let below: number;
  let above: number;
  if (first >= 0) {
    inside = speeds[first]!;
    below = first === 0 ? NaN : speeds[first - 1]!;
    above = last === lastIndex ? NaN : speeds[last + 1]!;
    const lo = Number.isNaN(below) ? inside : edge(ok, below, inside);
    const hi = Number.isNaN(above) ? speeds[last]! : edge(ok, above, speeds[last]!);
    return { loMps: lo, hiMps: hi };
  }
  // Nothing on the grid: look for a band narrower than a step around the best margin.
  const best = bestMarginSpeed(aircraft, densityKgM3, massKg, required, vs1, topMps);
  if (best === null || !ok(best)) return null;
  const step = (topMps - vs1) / SCAN_STEPS;
  below = Math.max(vs1, best - step);
  above = Math.min(topMps, best + step);
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

/** The speed of the largest margin, refined by successive finer scans (the maximum often sits on a kink). */
function bestMarginSpeed(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  required: number,
  lo: number,
  hi: number,
): number | null {
  let bestV: number | null = null;
  let bestM = -Infinity;
  let a = lo;
  let b = hi;
  let samples = SCAN_STEPS;
  for (let round = 0; round < 8; round++) {
    const step = (b - a) / samples;
    for (let i = 0; i <= samples; i++) {
      const v = a + step * i;
      const m = margin(aircraft, v, densityKgM3, massKg, required);
      if (m !== null && m > bestM) {
        bestM = m;
        bestV = v;
      }
    }
    if (bestV === null) return null;
    a = Math.max(lo, bestV - step);
    b = Math.min(hi, bestV + step);
    samples = 40;
  }
  return bestV;
}
