/**
 * Per-frame margins: from an accepted frame and the airframe, the air state, the smoothed TAS and load factor, the
 * three load-factor limits at that TAS, density and mass, the speed limit (CAS against vne), utilizations, alerts
 * with hysteresis and a clear stretch, bank limits, the turn readouts and the inputs assumed — one MarginRecord per
 * frame.
 *
 * Pure: `computeMarginRecord(aircraft, options, state, frame)` returns the record and the next state;
 * `createMarginTracker` is the small stateful wrapper the shell uses.
 */
import type { Aircraft } from './aircraft.js';
import {
  AIR_DENSITY_KG_M3,
  AIR_PRESSURE_PA,
  AIR_SPEED_OF_SOUND_MPS,
  AIR_TEMPERATURE_K,
  AIR_VALUE_SLOTS,
  airTemperatureK,
  computeAirState,
  fillAirValues,
  type AirState,
} from './atmosphere.js';
import { casToTasMps, iasToCasMps, tasToCasAtMps, tasToEasMps } from './airspeed.js';
import { levelOfAlerts, nextAlerts } from './alerts.js';
import { computeBankLimits } from './bank-limits.js';
import { lowPassStepInPlace, type LowPassState } from './filter.js';
import type { Frame } from './frame.js';
import type { ActiveAlert, Assumption, MarginRecord, Utilization } from './margin-record.js';
import { MarginValues, orNull } from './margin-values.js';
import {
  dynamicPressurePa,
  levelTurnRadiusM,
  levelTurnRateDps,
  negativeStallLoadFactorOrNaN,
  stallLoadFactor,
  stallSpeedMps,
  thrustLoadFactorOrNaN,
} from './performance.js';
import type { AlertThresholds } from './thresholds.js';
import type { ThrottleAssumption } from './energy.js';
import { DEFAULT_RATE_WINDOW_S } from './rate-estimator.js';
import { G0_MPS2, RHO0_KG_M3 } from './units.js';

export interface MarginOptions {
  /** Alert thresholds. Default: the airframe's (its `alert_thresholds` over the defaults). */
  thresholds: AlertThresholds;
  /** Time constant of the low-pass filter on n and TAS, s. Default 0.15; 0 turns smoothing off. */
  smoothTauS: number;
  /** W: the window of the rates dV/dt, dh/dt and the bank rate, s. Default 1.0. */
  rateWindowS: number;
  /** What to assume for frames without a throttle (`--throttle full|idle`); absent = nothing. */
  assumeThrottle?: ThrottleAssumption;
  /**
   * Compute each record's sustained_band_mps (default true). The band is a search over speeds, several times the
   * cost of the rest of the record: a summary that outputs no record (review without --per-frame, check, fit) turns
   * it off, and the key is then null in the records it never shows.
   */
  speedBand: boolean;
}

export const DEFAULT_SMOOTH_TAU_S = 0.15;
/** Below this fraction of Vs1 the aircraft is taken as not flying (on the ground, launch, or a bad airspeed). */
export const FLYING_FRACTION_OF_VS1 = 0.5;
/** n_measured and 1/cos(bank) must differ by more than this … */
export const COORDINATION_TOLERANCE = 0.15;
/** … for longer than this, s, to flag the turn as uncoordinated. */
export const COORDINATION_DURATION_S = 1;

export function resolveMarginOptions(aircraft: Aircraft, options: Partial<MarginOptions> = {}): MarginOptions {
  return {
    thresholds: options.thresholds ?? aircraft.thresholds,
    smoothTauS: options.smoothTauS ?? DEFAULT_SMOOTH_TAU_S,
    rateWindowS: options.rateWindowS ?? DEFAULT_RATE_WINDOW_S,
    speedBand: options.speedBand ?? true,
    ...(options.assumeThrottle !== undefined ? { assumeThrottle: options.assumeThrottle } : {}),
  };
}

/** What carries over from one frame to the next. */
export interface MarginState {
  /** The load-factor filter. */
  filter: LowPassState | null;
  /** The TAS filter: the same filter and τ as n, restarted together with it. */
  tasFilter: LowPassState | null;
  alerts: readonly ActiveAlert[];
  /** Start time of the present run of frames where n_measured and 1/cos(bank) disagree, NaN for none. */
  disagreeSinceS: number;
  /**
   * The air state of the last frame (fillAirValues' slots) and the altitude and OAT it was computed from (the slots
   * after them: altitude, 1 if an OAT was given, OAT): reused while they stay the same, as computing it again would
   * give the same values. In a typed array: the altitude changes at most frames, and an object per change is an
   * allocation.
   */
  air: Float64Array;
}

const AIR_ALT_M = AIR_VALUE_SLOTS;
const AIR_HAS_OAT = AIR_VALUE_SLOTS + 1;
const AIR_OAT_C = AIR_VALUE_SLOTS + 2;

export function initialMarginState(): MarginState {
  return {
    filter: null,
    tasFilter: null,
    alerts: [],
    disagreeSinceS: Number.NaN,
    air: new Float64Array(AIR_VALUE_SLOTS + 3).fill(Number.NaN),
  };
}

export interface FrameAir {
  tasMps: number;
  easMps: number;
  densityKgM3: number;
  temperatureK: number;
  massKg: number;
}

/** The air state at the frame's altitude and OAT (ISA temperature without OAT). */
export function frameAirState(frame: Frame): AirState {
  return computeAirState(frame.altM, frame.oatC !== undefined ? { oatC: frame.oatC } : {});
}

/**
 * Air state and TAS of a frame: ISA pressure from alt_m, OAT when given, TAS from whichever airspeed it has.
 * `air` is the frame's air state when already known (frameAirState).
 */
export function computeFrameAir(aircraft: Aircraft, frame: Frame, air: AirState = frameAirState(frame)): FrameAir {
  const tasMps = frameTasMps(aircraft, frame, air.pressurePa, air.temperatureK);
  return {
    tasMps,
    easMps: tasToEasMps(tasMps, air.densityKgM3),
    densityKgM3: air.densityKgM3,
    temperatureK: air.temperatureK,
    massKg: frame.massKg ?? aircraft.massKg,
  };
}

/** The frame's TAS from whichever airspeed it has, at its air state. */
function frameTasMps(aircraft: Aircraft, frame: Frame, pressurePa: number, temperatureK: number): number {
  switch (frame.airspeedKind) {
    case 'tas':
      return frame.airspeedMps;
    case 'cas':
      return casToTasMps(frame.airspeedMps, pressurePa, temperatureK);
    case 'ias':
      return casToTasMps(iasToCasMps(frame.airspeedMps, aircraft.airspeedCalibration), pressurePa, temperatureK);
  }
  // Not reached for a valid frame. A throw, not the fall-through's undefined: V8 then keeps the result an unboxed
  // number (an undefined path makes it box the TAS at every frame).
  throw new RangeError(`unknown airspeed kind ${String(frame.airspeedKind)}`);
}

/** 1/cos(bank): the load factor of a level coordinated turn at that bank; null where cos(bank) is about 0. */
export function loadFactorFromBank(bankDeg: number): number | null {
  return orNull(loadFactorFromBankOrNaN(bankDeg));
}

/** loadFactorFromBank with NaN for null (the per-frame form). */
function loadFactorFromBankOrNaN(bankDeg: number): number {
  const c = Math.cos((bankDeg * Math.PI) / 180);
  return Math.abs(c) < 1e-9 ? Number.NaN : 1 / c;
}

/** Bound on a load factor derived from bank alone (the same as the plausibility bound on nz), g. */
export const MAX_BANK_LOAD_FACTOR = 20;

/**
 * 1/cos(bank) held to ±MAX_BANK_LOAD_FACTOR: near 90° of bank 1/cos(bank) runs off to infinity; the bound (the
 * plausibility bound of nz) still raises every alert without letting one absurd frame dominate the peaks, the
 * filter and the turn readouts.
 */
export function clampedLoadFactorFromBank(bankDeg: number): number {
  const n = 1 / Math.cos((bankDeg * Math.PI) / 180);
  return Math.max(-MAX_BANK_LOAD_FACTOR, Math.min(MAX_BANK_LOAD_FACTOR, n));
}

/** The frame's measured load factor: nz when present, else 1/cos(bank) (clamped). */
export function rawLoadFactor(frame: Frame): number {
  const nz = frame.nz;
  if (nz !== undefined) return nz;
  const bankDeg = frame.bankDeg;
  return bankDeg !== undefined ? clampedLoadFactorFromBank(bankDeg) : noLoadFactor(frame);
}

/** The decoder lets no such frame through: a frame built by hand without either. */
function noLoadFactor(frame: Frame): never {
  throw new RangeError(`frame at t_s ${frame.tS} has neither bank_deg nor nz`);
}

/** A frame's TAS at or above this Mach number is refused: the airspeed relations used here are subsonic. */
export const MAX_MACH = 1;

/** Why an accepted frame cannot be computed, as a rejection: `{code, key, got, reason}`. */
export interface FrameRejection {
  code: 'out_of_range';
  /** The frame's airspeed key (tas_mps, cas_mps or ias_mps). */
  key: string;
  /** Its value. */
  got: number;
  reason: string;
}

/**
 * null when the frame can be computed; a rejection when its TAS reaches Mach 1 at its temperature (the subsonic
 * relations no longer hold). Call it before computing the frame's record.
 */
export function frameRejection(aircraft: Aircraft, frame: Frame): FrameRejection | null {
  const air = frameAirState(frame);
  return machRejection(aircraft, frame, air.pressurePa, air.temperatureK, air.speedOfSoundMps);
}

function machRejection(
  aircraft: Aircraft,
  frame: Frame,
  pressurePa: number,
  temperatureK: number,
  speedOfSoundMps: number,
): FrameRejection | null {
  const mach = frameTasMps(aircraft, frame, pressurePa, temperatureK) / speedOfSoundMps;
  if (!(mach >= MAX_MACH) && Number.isFinite(mach)) return null;
  return {
    code: 'out_of_range',
    key: `${frame.airspeedKind}_mps`,
    got: frame.airspeedMps,
    reason: `above the subsonic range (Mach ${Number.isFinite(mach) ? mach.toFixed(2) : 'undefined'})`,
  };
}

/** The inputs a frame's record assumes, in the order of ASSUMPTIONS (src/core/assumptions.ts). */
export function frameAssumptions(aircraft: Aircraft, frame: Frame): Assumption[] {
  const assumed: Assumption[] = [];
  if (frame.nz === undefined) assumed.push('n_from_bank');
  if (frame.oatC === undefined) assumed.push('temperature_isa');
  if (aircraft.nLimitPosSource !== 'file') assumed.push('n_limit_default');
  return assumed;
}

/**
 * frameAssumptions as one shared, frozen list per combination (records only read it): no array per frame. Indexed
 * by (nz absent) + 2·(oat_c absent), for the last airframe asked about (an engine has one; a WeakMap lookup per
 * frame cost more than the rest of this).
 */
let assumptionsOf: { aircraft: Aircraft; lists: readonly Assumption[][] } | null = null;
function recordAssumptions(aircraft: Aircraft, frame: Frame): Assumption[] {
  let cached = assumptionsOf;
  if (cached === null || cached.aircraft !== aircraft) {
    cached = { aircraft, lists: assumptionLists(aircraft) };
    assumptionsOf = cached;
  }
  return cached.lists[(frame.nz === undefined ? 1 : 0) + (frame.oatC === undefined ? 2 : 0)]!;
}

// A function of its own: a closure over `aircraft` in recordAssumptions would allocate its context at every call.
function assumptionLists(aircraft: Aircraft): Assumption[][] {
  const of = (nz: number | undefined, oatC: number | undefined): Assumption[] =>
    Object.freeze(
      frameAssumptions(aircraft, { tS: 0, airspeedKind: 'tas', airspeedMps: 0, altM: 0, nz, oatC }),
    ) as Assumption[];
  return [of(1, 0), of(undefined, 0), of(1, undefined), of(undefined, undefined)];
}

export interface LimitsForUtilization {
  nStall: number;
  nStallNeg: number | null;
  nThrust: number | null;
  nLimitPos: number;
  nLimitNeg: number;
}

/**
 * Utilization of each limit at load factor n: n/limit. For n < 0 the negative limits apply (structure n/n_limit_neg;
 * stall n/n_stall_neg, null without cl_min). Thrust is |n|/n_thrust (drag grows with n², whatever its sign), null
 * where n_thrust is null or 0. Speed is CAS/vne (`speed`, null without vne). All null when not flying.
 */
export function computeUtilization(
  n: number,
  limits: LimitsForUtilization,
  flying: boolean,
  speed: number | null = null,
): Utilization {
  if (!flying) return { stall: null, thrust: null, structure: null, speed: null };
  return {
    stall: orNull(stallUtilization(n, limits.nStall, limits.nStallNeg ?? Number.NaN)),
    thrust: orNull(thrustUtilization(n, limits.nThrust ?? Number.NaN)),
    structure: structureUtilization(n, limits.nLimitPos, limits.nLimitNeg),
    speed,
  };
}

/** The stall utilization of computeUtilization (flying), NaN for null; nStallNeg NaN without cl_min. */
function stallUtilization(n: number, nStall: number, nStallNeg: number): number {
  return n < 0 ? n / nStallNeg : n / nStall;
}

/** The thrust utilization of computeUtilization (flying), NaN for null; nThrust NaN when unknown. */
function thrustUtilization(n: number, nThrust: number): number {
  return nThrust === 0 ? Number.NaN : Math.abs(n) / nThrust;
}

/** The structure utilization of computeUtilization (flying). */
function structureUtilization(n: number, nLimitPos: number, nLimitNeg: number): number {
  return n < 0 ? n / nLimitNeg : n / nLimitPos;
}

/** Stall speed (TAS) at load factor n: Vs1·√n for n > 0; with cl_min for n < 0; null otherwise. */
export function stallSpeedAtLoadFactorMps(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  n: number,
): number | null {
  if (n > 0) return stallSpeedMps(aircraft, densityKgM3, massKg, n);
  if (n < 0 && aircraft.clMin !== undefined) {
    return Math.sqrt((2 * -n * massKg * G0_MPS2) / (densityKgM3 * aircraft.wingAreaM2 * -aircraft.clMin));
  }
  return null;
}

/**
 * One step of the coordination check on `state` (its disagreeSinceS advanced): whether the turn is flagged
 * uncoordinated at this frame. `nFromBank` is NaN when there is nothing to compare.
 */
function coordinationStep(
  state: MarginState,
  tS: number,
  nMeasured: number,
  nFromBank: number,
  restarted: boolean,
): boolean {
  // NaN (nothing to compare) is never over the tolerance.
  if (!(Math.abs(nMeasured - nFromBank) > COORDINATION_TOLERANCE)) {
    state.disagreeSinceS = Number.NaN;
    return false;
  }
  const previous = state.disagreeSinceS;
  const since = previous !== previous || restarted ? tS : previous;
  state.disagreeSinceS = since;
  return tS - since > COORDINATION_DURATION_S;
}

/** The margin record of one frame, and the state for the next. `state` is left as it was. */
export function computeMarginRecord(
  aircraft: Aircraft,
  options: MarginOptions,
  state: MarginState,
  frame: Frame,
): { record: MarginRecord; state: MarginState } {
  const next: MarginState = {
    filter: state.filter === null ? null : { ...state.filter },
    tasFilter: state.tasFilter === null ? null : { ...state.tasFilter },
    alerts: state.alerts,
    disagreeSinceS: state.disagreeSinceS,
    air: state.air.slice(),
  };
  const record = advanceMarginRecord(aircraft, options, next, frame, new MarginValues());
  return { record, state: next };
}

/** √(ρ/ρ0) of the last density (EAS = TAS·√σ): the density repeats from frame to frame. Density, then root. */
// In a typed array: a double stored in a module variable is boxed at every store.
const lastSqrtSigma = new Float64Array(2).fill(Number.NaN);
function easOf(tasMps: number, densityKgM3: number): number {
  if (densityKgM3 !== lastSqrtSigma[0]) {
    lastSqrtSigma[1] = Math.sqrt(densityKgM3 / RHO0_KG_M3);
    lastSqrtSigma[0] = densityKgM3;
  }
  // The same product as tasToEasMps, with the root reused.
  return tasMps * lastSqrtSigma[1]!;
}

/** Vs1 of the last airframe, density and mass (they repeat from frame to frame): density, mass and Vs1. */
// In a typed array, and always read back from it: a cached object's number on one path and a call's result on the
// other would make V8 box Vs1 at every frame.
const lastVs1 = new Float64Array(3).fill(Number.NaN);
let lastVs1Aircraft: Aircraft | null = null;
function oneGStallSpeedMps(aircraft: Aircraft, densityKgM3: number, massKg: number): number {
  if (lastVs1Aircraft !== aircraft || lastVs1[0] !== densityKgM3 || lastVs1[1] !== massKg) {
    lastVs1[2] = stallSpeedMps(aircraft, densityKgM3, massKg);
    lastVs1[0] = densityKgM3;
    lastVs1[1] = massKg;
    lastVs1Aircraft = aircraft;
  }
  return lastVs1[2]!;
}

/** The frame's air state, reused from `state` while altitude and OAT repeat (and kept there for the next frame). */
function stateAirValues(state: MarginState, frame: Frame): Float64Array {
  const air = state.air;
  const altM = frame.altM;
  const oatC = frame.oatC;
  const hasOat = oatC !== undefined ? 1 : 0;
  // Plain comparisons (Object.is would box the stored numbers): ±0 give the same air, and NaN (no frame yet) differs.
  if (air[AIR_ALT_M] !== altM || air[AIR_HAS_OAT] !== hasOat || (oatC !== undefined && air[AIR_OAT_C] !== oatC)) {
    // The values of frameAirState (computeAirState at the frame's altitude and OAT).
    fillAirValues(air, altM, airTemperatureK(altM, oatC));
    air[AIR_ALT_M] = altM;
    air[AIR_HAS_OAT] = hasOat;
    air[AIR_OAT_C] = oatC !== undefined ? oatC : Number.NaN;
  }
  return air;
}

/**
 * The limits of computeLimits a record needs (stall, negative stall, thrust) at v's TAS, density and mass, into v.
 * Numbers in and out through v, not as arguments: where V8 calls this instead of inlining it, a number passed or
 * returned would be a heap allocation per frame.
 */
function fillLimits(aircraft: Aircraft, v: MarginValues): void {
  const tasMps = v.tasMps;
  const densityKgM3 = v.densityKgM3;
  const massKg = v.massKg;
  v.nStall = stallLoadFactor(aircraft, tasMps, densityKgM3, massKg);
  v.nStallNeg = negativeStallLoadFactorOrNaN(aircraft, tasMps, densityKgM3, massKg);
  v.nThrust = thrustLoadFactorOrNaN(aircraft, tasMps, densityKgM3, massKg);
}

/**
 * The margins of one frame into `v` (the engine's values, written over), with `state` advanced in place to the
 * state for the next frame (the filters included). Only what the alerts, the events, the energy keys and the
 * summaries need is computed here; the readouts derived from these numbers alone (EAS, bank limits, stall speed,
 * CL, turn rate and radius) are made with the record, by marginRecordOf. The energy keys are left to the frame
 * engine's energy tracker (NaN here).
 */
export function advanceMarginValues(
  aircraft: Aircraft,
  options: MarginOptions,
  state: MarginState,
  frame: Frame,
  v: MarginValues,
): void {
  const air = stateAirValues(state, frame);
  const pressurePa = air[AIR_PRESSURE_PA]!;
  const temperatureK = air[AIR_TEMPERATURE_K]!;
  const tasRawMps = frameTasMps(aircraft, frame, pressurePa, temperatureK);
  const densityKgM3 = air[AIR_DENSITY_KG_M3]!;
  // `+`: the frame's optional mass is a tagged value; as a plain number on both paths V8 does not box the airframe's
  // mass at every frame.
  const massKg = frame.massKg !== undefined ? +frame.massKg : aircraft.massKg;
  const tS = frame.tS;

  const nRaw = rawLoadFactor(frame);
  const previousFilter = state.filter;
  const nFilter = lowPassStepInPlace(previousFilter, tS, nRaw, options.smoothTauS);
  // A new filter state means the filter started afresh at this frame.
  const restarted = nFilter !== previousFilter;
  state.filter = nFilter;
  const nF = nFilter.value;
  // Airspeed noise enters the stall limit squared: TAS is smoothed with the same filter, so both restart together.
  const tasFilter = lowPassStepInPlace(state.tasFilter, tS, tasRawMps, options.smoothTauS);
  state.tasFilter = tasFilter;
  const tasMps = tasFilter.value;
  const casMps = tasToCasAtMps(tasMps, pressurePa, air[AIR_SPEED_OF_SOUND_MPS]!);

  v.tasMps = tasMps;
  v.densityKgM3 = densityKgM3;
  v.massKg = massKg;
  fillLimits(aircraft, v);
  const nStall = v.nStall;
  const nStallNeg = v.nStallNeg;
  const nThrust = v.nThrust;
  const flying = tasMps >= FLYING_FRACTION_OF_VS1 * oneGStallSpeedMps(aircraft, densityKgM3, massKg);
  const vneMps = aircraft.vneMps;

  v.tS = tS;
  v.tasRawMps = tasRawMps;
  v.casMps = casMps;
  v.temperatureK = temperatureK;
  v.altM = frame.altM;
  v.nMeasured = nF;
  v.nRaw = nRaw;
  v.flying = flying;
  // The utilizations of computeUtilization, NaN for null.
  if (flying) {
    v.uStall = stallUtilization(nF, nStall, nStallNeg);
    v.uThrust = thrustUtilization(nF, nThrust);
    v.uStructure = structureUtilization(nF, aircraft.nLimitPos, aircraft.nLimitNeg);
    v.uSpeed = vneMps !== undefined ? casMps / vneMps : Number.NaN;
  } else {
    v.uStall = Number.NaN;
    v.uThrust = Number.NaN;
    v.uStructure = Number.NaN;
    v.uSpeed = Number.NaN;
  }
  const alerts = nextAlerts(state.alerts, v, options.thresholds);
  state.alerts = alerts;
  v.alerts = alerts;
  v.level = levelOfAlerts(alerts);

  const bankDeg = frame.bankDeg;
  const nz = frame.nz;
  const nFromBank = bankDeg !== undefined ? loadFactorFromBankOrNaN(bankDeg) : Number.NaN;
  // Comparing n with 1/cos(bank) means something only when n comes from an accelerometer.
  v.uncoordinated = coordinationStep(state, tS, nF, nz !== undefined ? nFromBank : Number.NaN, restarted);
  v.bankDeg = bankDeg ?? Number.NaN;
  v.nz = nz ?? Number.NaN;
  v.nFromBank = nFromBank;
  v.throttle = frame.throttle ?? Number.NaN;
  v.simulated = frame.simulated === true;
  v.assumed = recordAssumptions(aircraft, frame);
}

/**
 * The margin record of the engine's values: their numbers (NaN as null) and the readouts derived from them alone
 * (EAS, bank limits, stall speed and its margin, CL, turn rate and radius), computed here as they were per frame.
 */
export function marginRecordOf(aircraft: Aircraft, options: MarginOptions, v: MarginValues): MarginRecord {
  const tasMps = v.tasMps;
  const nF = v.nMeasured;
  const densityKgM3 = v.densityKgM3;
  const massKg = v.massKg;
  const nThrust = orNull(v.nThrust);
  const flying = v.flying;
  const bank = computeBankLimits(v.nStall, nThrust, aircraft.nLimitPos, options.thresholds);
  const stallSpeed = stallSpeedAtLoadFactorMps(aircraft, densityKgM3, massKg, nF);
  const qS = dynamicPressurePa(densityKgM3, tasMps) * aircraft.wingAreaM2;
  const nFromBank = orNull(v.nFromBank);
  // The turn readouts use the load factor actually used: 1/cos(bank) clamped near 90°.
  const nTurn = nFromBank !== null ? Math.min(nFromBank, MAX_BANK_LOAD_FACTOR) : null;
  const turning = nTurn !== null && nTurn >= 1;
  const record: MarginRecord = {
    t_s: v.tS,
    tas_mps: tasMps,
    eas_mps: easOf(tasMps, densityKgM3),
    density_kg_m3: densityKgM3,
    n_measured: nF,
    n_stall: v.nStall,
    n_thrust: nThrust,
    n_structural: aircraft.nLimitPos,
    utilization: flying
      ? { stall: orNull(v.uStall), thrust: orNull(v.uThrust), structure: orNull(v.uStructure), speed: orNull(v.uSpeed) }
      : { stall: null, thrust: null, structure: null, speed: null },
    bank_limit_deg: bank.bankLimitDeg,
    bank_sustained_deg: bank.bankSustainedDeg,
    level: v.level,
    alerts: v.alerts as ActiveAlert[],
    alt_m: v.altM,
    mass_kg: massKg,
    temperature_k: v.temperatureK,
    bank_deg: orNull(v.bankDeg),
    nz: orNull(v.nz),
    n_from_bank: nFromBank,
    stall_speed_mps: stallSpeed,
    stall_speed_margin_pct: stallSpeed !== null && stallSpeed > 0 ? (tasMps / stallSpeed - 1) * 100 : null,
    cl: qS > 0 ? (nF * massKg * G0_MPS2) / qS : null,
    turn_rate_dps: turning ? levelTurnRateDps(nTurn, tasMps) : null,
    radius_m: turning ? levelTurnRadiusM(nTurn, tasMps) : null,
    uncoordinated: v.uncoordinated,
    flying,
    n_raw: v.nRaw,
    n_stall_neg: orNull(v.nStallNeg),
    n_structural_neg: aircraft.nLimitNeg,
    tas_raw_mps: v.tasRawMps,
    cas_mps: v.casMps,
    assumed: v.assumed as Assumption[],
    throttle: orNull(v.throttle),
    dvdt_mps2: orNull(v.dvdtMps2),
    dhdt_mps: orNull(v.dhdtMps),
    bank_rate_dps: orNull(v.bankRateDps),
    ps_mps: orNull(v.psMps),
    ps_model_mps: orNull(v.psModelMps),
    ps_residual_mps: orNull(v.psResidualMps),
    ps_residual_mean_3s_mps: orNull(v.psResidualMean3sMps),
    time_to_stall_caution_s: orNull(v.timeToStallCautionS),
    time_to_stall_warning_s: orNull(v.timeToStallWarningS),
    sustained_band_mps: v.bandLoMps === v.bandLoMps ? [v.bandLoMps, v.bandHiMps] : null,
  };
  if (v.simulated) record.simulated = true;
  return record;
}

/** computeMarginRecord on a state the caller owns (advanced in place): the margin tracker's per-frame path. */
function advanceMarginRecord(
  aircraft: Aircraft,
  options: MarginOptions,
  state: MarginState,
  frame: Frame,
  v: MarginValues,
): MarginRecord {
  advanceMarginValues(aircraft, options, state, frame, v);
  return marginRecordOf(aircraft, options, v);
}

export interface MarginTracker {
  /** The margin record of the next accepted frame (its energy keys null: the frame engine fills those). */
  push(frame: Frame): MarginRecord;
  /** The margins of the next accepted frame into `into` (see advanceMarginValues), without making a record. */
  advance(frame: Frame, into: MarginValues): void;
  /** frameRejection(aircraft, frame), with the air state kept for the frame's margins (call it first). */
  rejection(frame: Frame): FrameRejection | null;
  /** At a break (reconnect, seek, gap, clock restart): the filters restart; alert and coordination state clear. */
  reset(): void;
}

export function createMarginTracker(aircraft: Aircraft, options?: Partial<MarginOptions>): MarginTracker {
  const resolved = resolveMarginOptions(aircraft, options);
  let state = initialMarginState();
  const values = new MarginValues();
  return {
    // The tracker owns its state: it is advanced in place.
    push: (frame) => advanceMarginRecord(aircraft, resolved, state, frame, values),
    advance: (frame, into) => advanceMarginValues(aircraft, resolved, state, frame, into),
    rejection: (frame) => {
      const air = stateAirValues(state, frame);
      return machRejection(
        aircraft,
        frame,
        air[AIR_PRESSURE_PA]!,
        air[AIR_TEMPERATURE_K]!,
        air[AIR_SPEED_OF_SOUND_MPS]!,
      );
    },
    reset() {
      state = initialMarginState();
    },
  };
}
