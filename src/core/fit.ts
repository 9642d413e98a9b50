/**
 * Model fitting from flight data (the energy method of performance flight testing): in quasi-steady flight
 * D = T − W·Ps/V, so power-off glides give the drag directly (T = 0) and full-throttle flight gives thrust minus
 * drag. From the usable frames of one or more flights: the drag polar CD = CD0 + k·CL² (idle frames), a thrust
 * scale factor (full-throttle frames), and the demonstrated lift coefficient. Pure.
 *
 * Telemetry at tens of frames a second is strongly correlated from frame to frame; the confidence intervals use
 * one sample per rate window (the rates of a frame are computed over that window, so samples a window apart share
 * no frame).
 */
import type { Aircraft, ThrustModel } from './aircraft.js';
import { specificExcessPowerMps, THROTTLE_FULL_MIN, THROTTLE_IDLE_MAX } from './energy.js';
import { lowPassRampDelayS } from './filter.js';
import { fitLine, fitScale, studentTQuantile, type Estimate, type LineFit } from './least-squares.js';
import { dynamicPressurePa, thrustAvailableN } from './performance.js';
import { windowEdgeSlackS } from './rate-estimator.js';
import type { MarginRecord } from './margin-record.js';
import { G0_MPS2 } from './units.js';

export type ThrottleRegime = 'idle' | 'full';

/** Full throttle and idle: the same limits the engine's modelled Ps uses. */
export const FULL_THROTTLE = THROTTLE_FULL_MIN;
export const IDLE_THROTTLE = THROTTLE_IDLE_MAX;

/** One usable frame (see createFitCollector for what makes a frame usable). */
export interface FitSample {
  /** Which flight (index into the list of files) and which stretch of it between breaks. */
  flight: number;
  stretch: number;
  tS: number;
  regime: ThrottleRegime;
  tasMps: number;
  densityKgM3: number;
  massKg: number;
  loadFactor: number;
  psMps: number;
}

/** Fewer independent idle samples than this, or a narrower CL² range: the polar is not estimated. */
export const MIN_POLAR_SAMPLES = 30;
export const MIN_CL2_RANGE = 0.15;
/** Fewer independent full-throttle samples than this: no thrust scale. */
export const MIN_THRUST_SAMPLES = 10;

export interface PolarFit {
  /** The straight line CD against CL² (for its confidence band). */
  line: LineFit;
  cd0: Estimate;
  k: Estimate;
  r2: number;
  cl2Range: [number, number];
  samples: number;
}

export interface ThrustScaleFit {
  scale: Estimate;
  samples: number;
  /** Which polar gave the drag in T_measured: the fitted one, or the file's (none fitted, or not physical). */
  polar: 'fitted' | 'file';
}

/** A polar that can describe an airframe: both coefficients positive (the airframe file requires it). */
export const isPhysicalPolar = (p: { cd0: Estimate; k: Estimate }): boolean => p.cd0.value > 0 && p.k.value > 0;

export interface FitResult {
  polar: PolarFit | null;
  /** Why the polar was not estimated, and what to fly. */
  polarReason: string | null;
  thrustScale: ThrustScaleFit | null;
  thrustReason: string | null;
  independent: { idle: number; full: number };
  /** The independent idle samples as (CL², CD), for the plot. */
  idlePoints: Array<[number, number]>;
}

/**
 * One sample per rate window in each stretch of data, per regime: each kept frame is more than W after the one kept
 * before it, so their rate windows [t − W, t] share no frame (the engine's rates are slopes over those windows).
 */
export function thinSamples(samples: readonly FitSample[], windowS: number): FitSample[] {
  const kept: FitSample[] = [];
  const last = new Map<string, number>();
  for (const s of samples) {
    const key = `${s.flight}:${s.stretch}:${s.regime}`;
    const prev = last.get(key);
    if (prev === undefined || s.tS - prev > windowS) {
      kept.push(s);
      last.set(key, s.tS);
    }
  }
  return kept;
}

function qS(aircraft: Aircraft, s: FitSample): number {
  return dynamicPressurePa(s.densityKgM3, s.tasMps) * aircraft.wingAreaM2;
}

/** CL = n·W/(q·S). */
export function sampleCl(aircraft: Aircraft, s: FitSample): number {
  return (s.loadFactor * s.massKg * G0_MPS2) / qS(aircraft, s);
}

/** The drag implied by the energy rate, D = T − W·Ps/V, N. */
export function sampleDragN(s: FitSample, thrustN: number): number {
  return thrustN - (s.massKg * G0_MPS2 * s.psMps) / s.tasMps;
}

/** What to fly when the polar cannot be estimated. */
export const POLAR_ADVICE =
  'fly power-off glides (throttle idle, wings level, steady) at three or more speeds between 1.3 and 2 Vs1, each held at least 10 s';

/** What to fly when the thrust cannot be estimated. */
export const THRUST_ADVICE =
  'fly full-throttle level accelerations and steady level turns (throttle at the stop) at several speeds, each held at least 10 s';

export function computeFit(aircraft: Aircraft, samples: readonly FitSample[], windowS: number): FitResult {
  const thinned = thinSamples(samples, windowS);
  const idle = thinned.filter((s) => s.regime === 'idle');
  const full = thinned.filter((s) => s.regime === 'full');

  let polar: PolarFit | null = null;
  let polarReason: string | null = null;
  const cl2 = idle.map((s) => sampleCl(aircraft, s) ** 2);
  const cd = idle.map((s) => sampleDragN(s, 0) / qS(aircraft, s));
  const cl2Lo = cl2.length ? Math.min(...cl2) : 0;
  const cl2Hi = cl2.length ? Math.max(...cl2) : 0;
  if (idle.length < MIN_POLAR_SAMPLES) {
    polarReason = `${idle.length} independent idle sample${idle.length === 1 ? '' : 's'} (one per rate window of ${windowS} s); at least ${MIN_POLAR_SAMPLES} are needed: ${POLAR_ADVICE}`;
  } else if (cl2Hi - cl2Lo < MIN_CL2_RANGE) {
    polarReason = `the idle samples span CL² ${cl2Lo.toFixed(3)}–${cl2Hi.toFixed(3)} (${(cl2Hi - cl2Lo).toFixed(3)}); at least ${MIN_CL2_RANGE} is needed to separate CD0 from k: ${POLAR_ADVICE}`;
  } else {
    const line = fitLine(cl2, cd);
    if (line === null) polarReason = `the idle samples cannot be fitted (a single CL²): ${POLAR_ADVICE}`;
    else
      polar = {
        line,
        cd0: line.intercept,
        k: line.slope,
        r2: line.r2,
        cl2Range: [cl2Lo, cl2Hi],
        samples: line.samples,
      };
  }

  // Thrust: T_measured = D_polar(CL) + W·Ps/V with the fitted polar (the file's when not fitted).
  const thrustPolar = polar !== null && isPhysicalPolar(polar) ? polar : null;
  const cd0 = thrustPolar?.cd0.value ?? aircraft.cd0;
  const k = thrustPolar?.k.value ?? aircraft.k;
  const modelled: number[] = [];
  const measured: number[] = [];
  const fullQs: number[] = [];
  const fullCl2: number[] = [];
  for (const s of full) {
    const tModel = thrustAvailableN(aircraft.thrust, s.tasMps, s.densityKgM3);
    if (tModel === null || !(tModel > 0)) continue;
    const cl = sampleCl(aircraft, s);
    const drag = qS(aircraft, s) * (cd0 + k * cl * cl);
    modelled.push(tModel);
    measured.push(drag + (s.massKg * G0_MPS2 * s.psMps) / s.tasMps);
    fullQs.push(qS(aircraft, s));
    fullCl2.push(cl * cl);
  }
  let thrustScale: ThrustScaleFit | null = null;
  let thrustReason: string | null = null;
  if (modelled.length < MIN_THRUST_SAMPLES) {
    thrustReason = `${modelled.length} independent full-throttle sample${modelled.length === 1 ? '' : 's'} with a known thrust; at least ${MIN_THRUST_SAMPLES} are needed: ${THRUST_ADVICE}`;
  } else {
    const fit = fitScale(modelled, measured);
    if (fit === null) thrustReason = `the full-throttle samples cannot be fitted: ${THRUST_ADVICE}`;
    else {
      let scale = fit.scale;
      if (thrustPolar !== null) {
        // The measured thrust leans on the fitted polar: its uncertainty adds to the scale's (delta method,
        // ∂s/∂CD0 = Σx·qS/Σx², ∂s/∂k = Σx·qS·CL²/Σx², with the covariance of intercept and slope of the line).
        let sxx = 0;
        let g0 = 0;
        let g1 = 0;
        for (let i = 0; i < modelled.length; i++) {
          sxx += modelled[i]! * modelled[i]!;
          g0 += modelled[i]! * fullQs[i]!;
          g1 += modelled[i]! * fullQs[i]! * fullCl2[i]!;
        }
        g0 /= sxx;
        g1 /= sxx;
        const line = thrustPolar.line;
        const covAB = (-line.meanX * line.residualSd * line.residualSd) / line.sxx;
        const polarVar = g0 * g0 * line.intercept.se ** 2 + g1 * g1 * line.slope.se ** 2 + 2 * g0 * g1 * covAB;
        const se = Math.sqrt(scale.se * scale.se + Math.max(0, polarVar));
        const t = studentTQuantile(0.975, Math.min(fit.samples - 1, line.samples - 2));
        scale = { value: scale.value, se, ci95: [scale.value - t * se, scale.value + t * se] };
      }
      thrustScale = { scale, samples: fit.samples, polar: thrustPolar !== null ? 'fitted' : 'file' };
    }
  }
  return {
    polar,
    polarReason,
    thrustScale,
    thrustReason,
    independent: { idle: idle.length, full: full.length },
    idlePoints: cl2.map((x, i) => [x, cd[i]!]),
  };
}

/** The thrust model scaled by s (power and static thrust, constant thrust, or every table entry). */
export function scaleThrust(thrust: ThrustModel, s: number): ThrustModel {
  switch (thrust.model) {
    case 'constant':
      return { ...thrust, thrustN: thrust.thrustN * s };
    case 'power':
      return { ...thrust, powerW: thrust.powerW * s, staticThrustN: thrust.staticThrustN * s };
    case 'table':
      return { ...thrust, points: thrust.points.map(([v, t]) => [v, t * s] as const) };
  }
}

/** The airframe with the fitted polar and thrust scale (what is not fitted stays the file's). */
export function fittedAircraft(aircraft: Aircraft, fit: FitResult): Aircraft {
  return {
    ...aircraft,
    cd0: fit.polar?.cd0.value ?? aircraft.cd0,
    k: fit.polar?.k.value ?? aircraft.k,
    thrust: fit.thrustScale ? scaleThrust(aircraft.thrust, fit.thrustScale.scale.value) : aircraft.thrust,
  };
}

/**
 * The highest value held for at least `holdS`: the maximum, over windows spanning holdS, of the minimum in the
 * window. Fed frame by frame; `reset()` at a break (a hold never spans one). O(1) amortised per value.
 */
export interface HeldMaximum {
  push(tS: number, value: number): void;
  reset(): void;
  /** The highest held value so far, or null when no window of holdS has been seen. */
  value(): number | null;
}

export function createHeldMaximum(holdS: number): HeldMaximum {
  // All frames of the present window (times), and a deque of candidate minima (increasing values).
  let times: number[] = [];
  let head = 0;
  let minT: number[] = [];
  let minV: number[] = [];
  let minHead = 0;
  let best: number | null = null;
  return {
    push(tS, value) {
      times.push(tS);
      while (minV.length > minHead && minV[minV.length - 1]! >= value) {
        minV.pop();
        minT.pop();
      }
      minT.push(tS);
      minV.push(value);
      // The window starts at the latest frame at or before tS − holdS.
      while (head + 1 < times.length && times[head + 1]! <= tS - holdS) head++;
      while (minHead < minT.length && minT[minHead]! < times[head]!) minHead++;
      if (times[head]! <= tS - holdS) {
        const held = minV[minHead]!;
        if (best === null || held > best) best = held;
      }
      if (head > 4096) {
        times = times.slice(head);
        head = 0;
        minT = minT.slice(minHead);
        minV = minV.slice(minHead);
        minHead = 0;
      }
    },
    reset() {
      times = [];
      head = 0;
      minT = [];
      minV = [];
      minHead = 0;
    },
    value: () => best,
  };
}

/** What the collector needs of one margin record (the engine's: smoothed state, rates and breaks are its own). */
export interface FitFrame {
  tS: number;
  flying: boolean;
  /** The frame's throttle (0…1), or null when it has none. */
  throttle: number | null;
  bankDeg: number | null;
  /** The engine's rate of the bank over the rate window, °/s (null until the window holds enough frames). */
  bankRateDps: number | null;
  /** Smoothed TAS and load factor of the record. */
  tasMps: number;
  loadFactor: number;
  densityKgM3: number;
  massKg: number;
  /** Lift coefficient of the record, CL = n·W/(q·S). */
  cl: number | null;
  /** The engine's rates over [t − W, t]: slopes of the raw TAS and of the altitude (null until defined). */
  dvdtMps2: number | null;
  dhdtMps: number | null;
}

/** The collector's view of a margin record: nothing recomputed, every rate is the engine's. */
export function fitFrameOf(rec: MarginRecord): FitFrame {
  return {
    tS: rec.t_s,
    flying: rec.flying,
    throttle: rec.throttle,
    bankDeg: rec.bank_deg,
    bankRateDps: rec.bank_rate_dps,
    tasMps: rec.tas_mps,
    loadFactor: rec.n_measured,
    densityKgM3: rec.density_kg_m3,
    massKg: rec.mass_kg,
    cl: rec.cl,
    dvdtMps2: rec.dvdt_mps2,
    dhdtMps: rec.dhdt_mps,
  };
}

export interface FitFrameCounts {
  /** Accepted frames (margin records) read. */
  total: number;
  /** Frames meeting every condition for use (see createFitCollector), idle + full. */
  usable: number;
  idle: number;
  full: number;
  withoutThrottle: number;
}

export interface FitCollector {
  push(frame: FitFrame): void;
  /** A break in the data (the engine's dataBreak: gap, link loss, clock restart, end of a file). */
  breakData(): void;
  /** The next file: a new flight. */
  nextFlight(): void;
  /** The usable frames, one per rate window and regime in each stretch of data. */
  samples(): FitSample[];
  counts(): FitFrameCounts;
  /** The highest CL held for CL_HOLD_S on flying frames, or null. */
  clDemonstrated(): number | null;
}

/** A frame is usable only while the bank changes by less than this, °/s (a steady condition). */
export const MAX_BANK_RATE_DPS = 10;
/** cl_demonstrated: the lift coefficient must be held this long, s. */
export const CL_HOLD_S = 0.5;

const regimeOf = (throttle: number | null): ThrottleRegime | null =>
  throttle === null ? null : throttle >= FULL_THROTTLE ? 'full' : throttle <= IDLE_THROTTLE ? 'idle' : null;

/** A sample's window must hold the load factor within this spread (max − min of the smoothed n), g. */
export const MAX_LOAD_FACTOR_SPREAD = 0.1;

/**
 * Counts the usable frames and keeps the samples the fit uses.
 *
 * A frame is **usable** when it is flying, its throttle is known and full (≥ 0.98) or idle (≤ 0.02), the engine's
 * rates are defined, the bank changes by less than 10 °/s (the engine's bank rate over the rate window; a frame
 * without a bank angle has nothing to check), and its rate window [t − W, t] lies after the last break.
 *
 * A usable frame becomes a **sample** (at most one per rate window and regime, so that no two samples share a frame)
 * when the whole window is quasi-steady in one regime: every frame of it flying at the same throttle regime (the
 * rates average the window, and D = T − W·Ps/V needs one known thrust over it) and the load factor within
 * MAX_LOAD_FACTOR_SPREAD (the drag is evaluated at one CL). A least-squares slope over [t − W, t] is the rate at the
 * window's middle (exactly so for a quadratic), and a first-order low-pass with time constant τ delays a ramp by τ;
 * so the state a sample pairs with the rates — V, n, density, mass — is the records' at t − W/2 + the filter's
 * delay (lowPassRampDelayS: τ, less at coarse frame steps), interpolated, and its Ps
 * is dh/dt + (V/g0)·dV/dt with that V (the shared energy function). Pairing the rates with the state at t instead
 * makes every accelerating sample lag by W/2.
 *
 * Memory: the frames of one rate window, and the samples (flight time / W).
 */
export function createFitCollector(rateWindowS: number, smoothTauS: number): FitCollector {
  const held = createHeldMaximum(CL_HOLD_S);
  const samples: FitSample[] = [];
  const counts: FitFrameCounts = { total: 0, usable: 0, idle: 0, full: 0, withoutThrottle: 0 };
  let flight = 0;
  let stretch = 0;
  let stretchStartS: number | null = null;
  /** The frames of the present rate window, oldest first (head marks the oldest still inside). */
  let recent: FitFrame[] = [];
  let head = 0;
  /** Since when every frame of this stretch has been flying in the present regime (null: the last was not). */
  let regimeSinceS: number | null = null;
  let lastRegime: ThrottleRegime | null = null;
  const lastKeptS: Record<ThrottleRegime, number | null> = { idle: null, full: null };
  const breakData = (): void => {
    stretch += 1;
    stretchStartS = null;
    recent = [];
    head = 0;
    regimeSinceS = null;
    lastRegime = null;
    lastKeptS.idle = null;
    lastKeptS.full = null;
    held.reset();
  };
  return {
    push(f) {
      counts.total += 1;
      stretchStartS ??= f.tS;
      if (f.throttle === null) counts.withoutThrottle += 1;
      recent.push(f);
      const slackS = windowEdgeSlackS(f.tS);
      while (head < recent.length - 1 && recent[head]!.tS < f.tS - rateWindowS - slackS) head++;
      if (head > 1024) {
        recent = recent.slice(head);
        head = 0;
      }
      const regime = f.flying ? regimeOf(f.throttle) : null;
      if (regime === null || regime !== lastRegime) regimeSinceS = regime === null ? null : f.tS;
      lastRegime = regime;
      if (!f.flying) return;
      if (f.cl !== null) held.push(f.tS, f.cl);
      if (regime === null || f.dvdtMps2 === null || f.dhdtMps === null) return;
      if (f.tS - stretchStartS < rateWindowS - slackS) return;
      if (f.bankDeg !== null && (f.bankRateDps === null || !(Math.abs(f.bankRateDps) < MAX_BANK_RATE_DPS))) return;
      counts.usable += 1;
      counts[regime] += 1;

      if (regimeSinceS === null || f.tS - regimeSinceS < rateWindowS - slackS) return;
      const kept = lastKeptS[regime];
      if (kept !== null && !(f.tS - kept > rateWindowS + slackS)) return;
      let nLo = Number.POSITIVE_INFINITY;
      let nHi = Number.NEGATIVE_INFINITY;
      for (let i = head; i < recent.length; i++) {
        const n = recent[i]!.loadFactor;
        if (n < nLo) nLo = n;
        if (n > nHi) nHi = n;
      }
      if (!(nHi - nLo <= MAX_LOAD_FACTOR_SPREAD)) return;
      // The smoothed state that stands for the middle of the window: the filter's delay after it, interpolated
      // between the two records around that time.
      const spacingS = (f.tS - recent[head]!.tS) / Math.max(1, recent.length - 1 - head);
      const atS = f.tS - rateWindowS / 2 + lowPassRampDelayS(smoothTauS, spacingS);
      let c = head;
      while (c + 1 < recent.length - 1 && recent[c + 1]!.tS <= atS) c++;
      const a = recent[c]!;
      const b = recent[Math.min(c + 1, recent.length - 1)]!;
      const w = b.tS > a.tS ? Math.min(1, Math.max(0, (atS - a.tS) / (b.tS - a.tS))) : 0;
      const lerp = (x: number, y: number): number => x + (y - x) * w;
      const mid = {
        tS: lerp(a.tS, b.tS),
        tasMps: lerp(a.tasMps, b.tasMps),
        densityKgM3: lerp(a.densityKgM3, b.densityKgM3),
        massKg: lerp(a.massKg, b.massKg),
        loadFactor: lerp(a.loadFactor, b.loadFactor),
      };
      const psMps = specificExcessPowerMps(f.dhdtMps, mid.tasMps, f.dvdtMps2);
      if (psMps === null || !Number.isFinite(psMps)) return;
      if (!(mid.tasMps > 0) || !(mid.densityKgM3 > 0) || !(mid.massKg > 0) || !Number.isFinite(mid.loadFactor)) return;
      lastKeptS[regime] = f.tS;
      samples.push({
        flight,
        stretch,
        tS: mid.tS,
        regime,
        tasMps: mid.tasMps,
        densityKgM3: mid.densityKgM3,
        massKg: mid.massKg,
        loadFactor: mid.loadFactor,
        psMps,
      });
    },
    breakData,
    nextFlight() {
      breakData();
      flight += 1;
    },
    samples: () => samples,
    counts: () => ({ ...counts }),
    clDemonstrated: () => held.value(),
  };
}
