/**
 * Load-factor limits at one flight condition and the geometry of a level coordinated turn.
 * All speeds are TAS.
 */
import type { Aircraft, ThrustModel } from './aircraft.js';
import { casToTasMps } from './airspeed.js';
import { orNull } from './margin-values.js';
import { G0_MPS2, RHO0_KG_M3, radToDeg } from './units.js';

/** The last density and exponent and their factor: the density repeats from frame to frame (same altitude). */
// In a typed array: a double stored in a module variable is boxed at every store (here, at every new altitude).
const lastDensityFactor = new Float64Array(3).fill(Number.NaN);
const DENSITY = 0;
const EXPONENT = 1;
const FACTOR = 2;

/** (ρ/ρ0)^exponent, the thrust's density lapse. */
function densityFactorOf(densityKgM3: number, exponent: number): number {
  const last = lastDensityFactor;
  if (densityKgM3 !== last[DENSITY] || exponent !== last[EXPONENT]) {
    last[FACTOR] = (densityKgM3 / RHO0_KG_M3) ** exponent;
    last[DENSITY] = densityKgM3;
    last[EXPONENT] = exponent;
  }
  return last[FACTOR]!;
}

/** Thrust available, N, or null where a table model does not cover the speed (never extrapolated). */
export function thrustAvailableN(thrust: ThrustModel, tasMps: number, densityKgM3: number): number | null {
  return orNull(thrustAvailableOrNaN(thrust, tasMps, densityKgM3));
}

/**
 * thrustAvailableN with NaN for null: the per-frame form (a number that may be null is a heap allocation per call,
 * a NaN is not).
 */
export function thrustAvailableOrNaN(thrust: ThrustModel, tasMps: number, densityKgM3: number): number {
  const densityFactor = densityFactorOf(densityKgM3, thrust.densityExponent);
  switch (thrust.model) {
    case 'constant':
      return thrust.thrustN * densityFactor;
    case 'power': {
      // η·P/V is singular at V → 0; the static thrust caps it.
      const fromPower = tasMps > 0 ? (thrust.propEfficiency * thrust.powerW) / tasMps : Number.POSITIVE_INFINITY;
      return Math.min(thrust.staticThrustN, fromPower) * densityFactor;
    }
    case 'table':
      return tableThrustOrNaN(thrust.points, tasMps) * densityFactor;
  }
  // Not reached for a parsed airframe; a throw keeps the result an unboxed number (see frameTasMps in margins.ts).
  throw new RangeError(`unknown thrust model ${String((thrust as { model: unknown }).model)}`);
}

/** Linear interpolation in a thrust table, NaN outside it (never extrapolated). */
function tableThrustOrNaN(pts: ReadonlyArray<readonly [number, number]>, tasMps: number): number {
  const first = pts[0]!;
  const last = pts[pts.length - 1]!;
  if (tasMps < first[0] || tasMps > last[0]) return Number.NaN;
  let i = 1;
  while (i < pts.length - 1 && tasMps > pts[i]![0]) i++;
  const [v0, t0] = pts[i - 1]!;
  const [v1, t1] = pts[i]!;
  return t0 + ((t1 - t0) * (tasMps - v0)) / (v1 - v0);
}

export function dynamicPressurePa(densityKgM3: number, tasMps: number): number {
  return 0.5 * densityKgM3 * tasMps * tasMps;
}

/** Accelerated-stall load factor n = q·S·CLmax/W. */
export function stallLoadFactor(aircraft: Aircraft, tasMps: number, densityKgM3: number, massKg: number): number {
  return (dynamicPressurePa(densityKgM3, tasMps) * aircraft.wingAreaM2 * aircraft.clMax) / (massKg * G0_MPS2);
}

/** Negative-g stall load factor q·S·CLmin/W (negative), or null without cl_min. */
export function negativeStallLoadFactor(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
): number | null {
  return orNull(negativeStallLoadFactorOrNaN(aircraft, tasMps, densityKgM3, massKg));
}

/** negativeStallLoadFactor with NaN for null (the per-frame form). */
export function negativeStallLoadFactorOrNaN(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
): number {
  const clMin = aircraft.clMin;
  if (clMin === undefined) return Number.NaN;
  return (dynamicPressurePa(densityKgM3, tasMps) * aircraft.wingAreaM2 * clMin) / (massKg * G0_MPS2);
}

/**
 * Sustained (thrust = drag) load factor n = (qS/W)·√((T − qS·CD0)/(qS·k)); 0 when T ≤ qS·CD0,
 * null when the thrust is unknown.
 */
export function thrustLoadFactor(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
): number | null {
  return orNull(thrustLoadFactorOrNaN(aircraft, tasMps, densityKgM3, massKg));
}

/** thrustLoadFactor with NaN for null (the per-frame form). */
export function thrustLoadFactorOrNaN(aircraft: Aircraft, tasMps: number, densityKgM3: number, massKg: number): number {
  const thrustN = thrustAvailableOrNaN(aircraft.thrust, tasMps, densityKgM3);
  if (thrustN !== thrustN) return Number.NaN;
  const qS = dynamicPressurePa(densityKgM3, tasMps) * aircraft.wingAreaM2;
  if (qS <= 0) return 0;
  const excess = thrustN - qS * aircraft.cd0;
  if (excess <= 0) return 0;
  return (qS / (massKg * G0_MPS2)) * Math.sqrt(excess / (qS * aircraft.k));
}

export type LimitName = 'stall' | 'thrust' | 'structure' | 'speed';

export interface TurnGeometry {
  bankDeg: number | null;
  turnRateDps: number | null;
  radiusM: number | null;
}

/** Level coordinated turn at load factor n: bank = acos(1/n), ω = g√(n²−1)/V, R = V²/(g√(n²−1)). */
/** Load factors this close to 1 are taken as exactly 1 (a speed computed as Vs1 gives n = 1 ± rounding). */
const UNIT_LOAD_FACTOR_TOLERANCE = 1e-9;

export function levelTurnAt(loadFactor: number, tasMps: number): TurnGeometry {
  if (Math.abs(loadFactor - 1) <= UNIT_LOAD_FACTOR_TOLERANCE) return { bankDeg: 0, turnRateDps: 0, radiusM: null };
  if (!(loadFactor >= 1)) return { bankDeg: null, turnRateDps: null, radiusM: null };
  return {
    bankDeg: radToDeg(Math.acos(1 / loadFactor)),
    turnRateDps: levelTurnRateDps(loadFactor, tasMps),
    radiusM: levelTurnRadiusM(loadFactor, tasMps),
  };
}

/** levelTurnAt(n, V).turnRateDps alone (the per-frame record needs no bank from it: no acos). */
export function levelTurnRateDps(loadFactor: number, tasMps: number): number | null {
  if (Math.abs(loadFactor - 1) <= UNIT_LOAD_FACTOR_TOLERANCE) return 0;
  if (!(loadFactor >= 1)) return null;
  return tasMps > 0 ? radToDeg((G0_MPS2 * Math.sqrt(loadFactor * loadFactor - 1)) / tasMps) : null;
}

/** levelTurnAt(n, V).radiusM alone. */
export function levelTurnRadiusM(loadFactor: number, tasMps: number): number | null {
  if (Math.abs(loadFactor - 1) <= UNIT_LOAD_FACTOR_TOLERANCE) return null;
  if (!(loadFactor >= 1)) return null;
  const root = Math.sqrt(loadFactor * loadFactor - 1);
  return root > 0 ? (tasMps * tasMps) / (G0_MPS2 * root) : null;
}

/** Load factor of a level coordinated turn at a bank angle: n = 1/cos(bank). */
export function loadFactorForBank(bankDeg: number): number {
  return 1 / Math.cos((bankDeg * Math.PI) / 180);
}

export interface LoadFactorLimits {
  nStall: number;
  nThrust: number | null;
  nStructural: number;
  /** min(stall, thrust, structure); null when the thrust is unknown. */
  sustained: number | null;
  sustainedLimitedBy: LimitName | null;
  /** min(stall, structure). */
  instantaneous: number;
  instantaneousLimitedBy: LimitName;
}

/** The three limits at one TAS, density and mass. Ties go to the first of stall, thrust, structure. */
export function computeLimits(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
): LoadFactorLimits {
  const nStall = stallLoadFactor(aircraft, tasMps, densityKgM3, massKg);
  const nThrust = thrustLoadFactor(aircraft, tasMps, densityKgM3, massKg);
  const nStructural = aircraft.nLimitPos;
  const instantaneousLimitedBy: LimitName = nStall <= nStructural ? 'stall' : 'structure';
  const instantaneous = Math.min(nStall, nStructural);
  let sustained: number | null = null;
  let sustainedLimitedBy: LimitName | null = null;
  if (nThrust !== null) {
    sustained = instantaneous;
    sustainedLimitedBy = instantaneousLimitedBy;
    if (nThrust < instantaneous || (nThrust === instantaneous && instantaneousLimitedBy === 'structure')) {
      sustained = nThrust;
      sustainedLimitedBy = 'thrust';
    }
  }
  return { nStall, nThrust, nStructural, sustained, sustainedLimitedBy, instantaneous, instantaneousLimitedBy };
}

/** 1-g stall speed Vs1 = √(2W/(ρ·S·CLmax)), TAS. */
export function stallSpeedMps(aircraft: Aircraft, densityKgM3: number, massKg: number, loadFactor = 1): number {
  return Math.sqrt((2 * loadFactor * massKg * G0_MPS2) / (densityKgM3 * aircraft.wingAreaM2 * aircraft.clMax));
}

/** Corner speed √(2·n_limit_pos·W/(ρ·S·CLmax)) = Vs1·√n_limit_pos, TAS. */
export function cornerSpeedMps(aircraft: Aircraft, densityKgM3: number, massKg: number): number {
  return stallSpeedMps(aircraft, densityKgM3, massKg, aircraft.nLimitPos);
}

/** Drag at load factor n: CL = n·W/(q·S), D = q·S·(CD0 + k·CL²), N. */
export function dragAtLoadFactorN(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
  loadFactor: number,
): number {
  const qS = dynamicPressurePa(densityKgM3, tasMps) * aircraft.wingAreaM2;
  const cl = (loadFactor * massKg * G0_MPS2) / qS;
  return qS * (aircraft.cd0 + aircraft.k * cl * cl);
}

/** vne_mps (a calibrated airspeed) as TAS at a pressure and temperature, or null when the airframe has no vne. */
export function vneTasMps(aircraft: Aircraft, pressurePa: number, temperatureK: number): number | null {
  return aircraft.vneMps === undefined ? null : casToTasMps(aircraft.vneMps, pressurePa, temperatureK);
}

/** The top of the speed range searched at a condition: vne as TAS, else 4·Vs1 (no vne in the file). */
export function topSpeedMps(vneTas: number | null, stallSpeed: number): number {
  return vneTas ?? 4 * stallSpeed;
}
