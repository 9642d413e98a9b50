/**
 * Energy state and predictions at one frame: specific excess power measured from the rates and modelled from the
 * airframe (the energy method, Ps = dh/dt + (V/g0)·dV/dt = V·(T − D)/W), and the time left to the stall caution and
 * warning at the present deceleration. Pure: the rates come from `rate-estimator.ts`, the state from the engine.
 */
import type { Aircraft } from './aircraft.js';
import { orNull } from './margin-values.js';
import { dragAtLoadFactorN, thrustAvailableOrNaN } from './performance.js';
import { G0_MPS2 } from './units.js';

/** Throttle at or above this fraction counts as full throttle (common practice: a little below the stop). */
export const THROTTLE_FULL_MIN = 0.98;
/** Throttle at or below this fraction counts as idle (thrust taken as 0). */
export const THROTTLE_IDLE_MAX = 0.02;
/** Times to the stall beyond this are not reported: the deceleration would have to hold unchanged that long. */
export const TIME_TO_STALL_MAX_S = 60;

/** What to assume for a frame without a throttle value (`--throttle full|idle`); undefined = assume nothing. */
export type ThrottleAssumption = 'full' | 'idle';

/** Measured specific excess power, m/s: Ps = dh/dt + (V/g0)·dV/dt; null when any input is null. */
export function specificExcessPowerMps(
  dhdtMps: number | null,
  tasMps: number | null,
  dvdtMps2: number | null,
): number | null {
  return orNull(measuredPsOrNaN(dhdtMps ?? Number.NaN, tasMps ?? Number.NaN, dvdtMps2 ?? Number.NaN));
}

/** specificExcessPowerMps with NaN for null, in and out (the per-frame form). */
export function measuredPsOrNaN(dhdtMps: number, tasMps: number, dvdtMps2: number): number {
  return dhdtMps + (tasMps / G0_MPS2) * dvdtMps2;
}

/**
 * The setting the model knows a frame to be at: full (throttle ≥ 0.98), idle (≤ 0.02), the assumption for a frame
 * without a throttle (null, or NaN on the per-frame path), or null (part throttle, or unknown with no assumption).
 */
export function throttleSetting(throttle: number | null, assume?: ThrottleAssumption): ThrottleAssumption | null {
  if (throttle === null || throttle !== throttle) return assume ?? null;
  if (throttle >= THROTTLE_FULL_MIN) return 'full';
  if (throttle <= THROTTLE_IDLE_MAX) return 'idle';
  return null;
}

/**
 * The thrust the model assumes at a throttle setting, N: the thrust available at V and density when throttle ≥ 0.98,
 * 0 when throttle ≤ 0.02, null in between (part throttle is not modelled), when the throttle is unknown and no
 * assumption is given, or when the thrust available is unknown (outside a thrust table).
 */
export function modelThrustN(
  aircraft: Aircraft,
  throttle: number | null,
  tasMps: number,
  densityKgM3: number,
  assume?: ThrottleAssumption,
): number | null {
  return orNull(modelThrustOrNaN(aircraft, throttleSetting(throttle, assume), tasMps, densityKgM3));
}

/** modelThrustN at a known setting, NaN for null (the per-frame form). */
function modelThrustOrNaN(
  aircraft: Aircraft,
  setting: ThrottleAssumption | null,
  tasMps: number,
  densityKgM3: number,
): number {
  if (setting === null) return Number.NaN;
  if (setting === 'idle') return 0;
  return thrustAvailableOrNaN(aircraft.thrust, tasMps, densityKgM3);
}

export interface ModelPsInput {
  /** V: the record's (smoothed) TAS, m/s. */
  tasMps: number;
  densityKgM3: number;
  massKg: number;
  /** n: the record's smoothed load factor. */
  loadFactor: number;
  /** Fraction of full throttle 0…1, or null when the frame has none. */
  throttle: number | null;
  /** Assumption for frames without a throttle (`--throttle`); undefined = none. */
  assumeThrottle?: ThrottleAssumption;
}

/**
 * Modelled specific excess power, m/s: Ps = V·(T − D)/W with W = m·g0, D = q·S·(CD0 + k·CL²), CL = n·W/(q·S) and
 * T from `modelThrustN`. Null when the thrust is null, or V, density or mass is not positive.
 */
export function modelSpecificExcessPowerMps(aircraft: Aircraft, input: ModelPsInput): number | null {
  return modelPsMps(
    aircraft,
    input.tasMps,
    input.densityKgM3,
    input.massKg,
    input.loadFactor,
    input.throttle,
    input.assumeThrottle,
  );
}

/** modelSpecificExcessPowerMps with its inputs as arguments (the engine's per-frame call: no object). */
export function modelPsMps(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
  loadFactor: number,
  throttle: number | null,
  assumeThrottle: ThrottleAssumption | undefined,
): number | null {
  return orNull(
    modelPsAtSettingOrNaN(aircraft, tasMps, densityKgM3, massKg, loadFactor, throttleSetting(throttle, assumeThrottle)),
  );
}

/** modelPsMps at a known throttle setting, NaN for null (the per-frame form). */
export function modelPsAtSettingOrNaN(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
  loadFactor: number,
  setting: ThrottleAssumption | null,
): number {
  if (!(tasMps > 0) || !(densityKgM3 > 0) || !(massKg > 0) || !Number.isFinite(loadFactor)) return Number.NaN;
  const thrustN = modelThrustOrNaN(aircraft, setting, tasMps, densityKgM3);
  if (thrustN !== thrustN) return Number.NaN;
  const dragN = dragAtLoadFactorN(aircraft, tasMps, densityKgM3, massKg, loadFactor);
  return (tasMps * (thrustN - dragN)) / (massKg * G0_MPS2);
}

/** ps_residual_mps = measured − modelled; null if either is null. */
export function psResidualMps(psMps: number | null, psModelMps: number | null): number | null {
  return psMps === null || psModelMps === null ? null : psResidualOrNaN(psMps, psModelMps);
}

/** psResidualMps with NaN for null (the per-frame form). */
export function psResidualOrNaN(psMps: number, psModelMps: number): number {
  return psMps - psModelMps;
}

/**
 * The drag error a residual implies, %: the model's Ps would match with D' = D + ΔD, ΔD = −W·residual/V, so
 * ΔD/D = −W·residual/(V·D). Null when V or D is not positive.
 */
export function impliedDragErrorPct(residualMps: number, tasMps: number, dragN: number, massKg: number): number | null {
  return orNull(impliedDragErrorPctOrNaN(residualMps, tasMps, dragN, massKg));
}

/** impliedDragErrorPct with NaN for null (the per-frame form). */
export function impliedDragErrorPctOrNaN(residualMps: number, tasMps: number, dragN: number, massKg: number): number {
  if (!(tasMps > 0) || !(dragN > 0)) return Number.NaN;
  return ((-massKg * G0_MPS2 * residualMps) / (tasMps * dragN)) * 100;
}

export interface TimeToStallInput {
  /** The frame is flying (TAS above the flying threshold); otherwise no prediction. */
  flying: boolean;
  /** V: smoothed TAS, m/s. */
  tasMps: number;
  /** n: smoothed load factor. */
  loadFactor: number;
  /** Present stall utilization u = n / n_stall(V), or null when unknown. */
  stallUtilization: number | null;
  /** dV/dt, m/s², or null. */
  dvdtMps2: number | null;
}

/**
 * Time until the stall utilization reaches `targetUtilization` u* at the present deceleration, s. The utilization
 * grows as 1/V² at constant n, so it reaches u* at V* = V·√(u/u*); t = (V − V*)/(−dV/dt), 0 when u ≥ u* already.
 * Null when not flying, n ≤ 0, dV/dt ≥ 0 or null, the utilization is unknown or not positive, or t > 60 s.
 */
export function timeToStallUtilizationS(input: TimeToStallInput, targetUtilization: number): number | null {
  return timeToUtilizationS(
    input.flying,
    input.tasMps,
    input.loadFactor,
    input.stallUtilization,
    input.dvdtMps2,
    targetUtilization,
  );
}

/** timeToStallUtilizationS with its inputs as arguments (the engine's per-frame call: no object). */
export function timeToUtilizationS(
  flying: boolean,
  tasMps: number,
  loadFactor: number,
  u: number | null,
  dvdtMps2: number | null,
  targetUtilization: number,
): number | null {
  return orNull(
    timeToUtilizationOrNaN(flying, tasMps, loadFactor, u ?? Number.NaN, dvdtMps2 ?? Number.NaN, targetUtilization),
  );
}

/** timeToUtilizationS with NaN for null, in and out (the per-frame form). */
export function timeToUtilizationOrNaN(
  flying: boolean,
  tasMps: number,
  loadFactor: number,
  u: number,
  dvdtMps2: number,
  targetUtilization: number,
): number {
  // NaN fails every comparison: an unknown rate or utilization gives no prediction.
  if (!flying || !(loadFactor > 0) || !(dvdtMps2 < 0)) return Number.NaN;
  if (!(u > 0) || !(tasMps > 0) || !(targetUtilization > 0)) return Number.NaN;
  if (u >= targetUtilization) return 0;
  const vStar = tasMps * Math.sqrt(u / targetUtilization);
  const t = (tasMps - vStar) / -dvdtMps2;
  return t > TIME_TO_STALL_MAX_S ? Number.NaN : t;
}

export interface TimeToStall {
  /** time_to_stall_caution_s */
  cautionS: number | null;
  /** time_to_stall_warning_s */
  warningS: number | null;
}

/** Both predictions for the stall caution and warning thresholds. */
export function timeToStallS(
  input: TimeToStallInput,
  thresholds: { stallCaution: number; stallWarning: number },
): TimeToStall {
  return {
    cautionS: timeToStallUtilizationS(input, thresholds.stallCaution),
    warningS: timeToStallUtilizationS(input, thresholds.stallWarning),
  };
}
