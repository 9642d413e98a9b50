/**
 * The numbers of one margin record as the frame engine holds them while it works: one object per engine, written
 * over at every frame, NaN where the record has null. Whoever only sums records up (review, check, fit's sampler,
 * the benchmarks) reads these and never makes a record; whoever shows or sends records asks the engine for one
 * (`marginRecordOf` in margins.ts builds it from these numbers, adding the readouts derived from them).
 *
 * Why a class of plain numbers: V8 keeps a field that only ever holds doubles as an unboxed number updated in place,
 * while a field that may hold null (or a fresh record literal per frame) costs a heap allocation at every store.
 */
import type { ActiveAlert, Assumption, Level, MarginRecord } from './margin-record.js';

export class MarginValues {
  tS = Number.NaN;
  /** The smoothed TAS every limit uses. */
  tasMps = Number.NaN;
  tasRawMps = Number.NaN;
  casMps = Number.NaN;
  densityKgM3 = Number.NaN;
  temperatureK = Number.NaN;
  altM = Number.NaN;
  massKg = Number.NaN;
  /** Smoothed measured load factor n_f. */
  nMeasured = Number.NaN;
  nRaw = Number.NaN;
  nStall = Number.NaN;
  nStallNeg = Number.NaN;
  nThrust = Number.NaN;
  uStall = Number.NaN;
  uThrust = Number.NaN;
  uStructure = Number.NaN;
  uSpeed = Number.NaN;
  bankDeg = Number.NaN;
  nz = Number.NaN;
  nFromBank = Number.NaN;
  throttle = Number.NaN;
  dvdtMps2 = Number.NaN;
  dhdtMps = Number.NaN;
  bankRateDps = Number.NaN;
  psMps = Number.NaN;
  psModelMps = Number.NaN;
  psResidualMps = Number.NaN;
  psResidualMean3sMps = Number.NaN;
  timeToStallCautionS = Number.NaN;
  timeToStallWarningS = Number.NaN;
  /** The sustainable speed band's ends; NaN when there is none or it was not computed. */
  bandLoMps = Number.NaN;
  bandHiMps = Number.NaN;
  flying = false;
  uncoordinated = false;
  simulated = false;
  level: Level = 'normal';
  /** The alerts on (the shared empty list when none): never changed once made, so records may share it. */
  alerts: readonly ActiveAlert[] = [];
  /** The record's `assumed` list (a shared frozen list per combination). */
  assumed: readonly Assumption[] = [];
}

/** A nullable record number from its NaN-for-null value. */
export function orNull(value: number): number | null {
  return value === value ? value : null;
}

/** A number for MarginValues from a nullable record number. */
function orNaN(value: number | null | undefined): number {
  return value === null || value === undefined ? Number.NaN : value;
}

/**
 * The values of an existing record, written into `into`: for the accumulators' record-taking forms (tests and
 * callers that hold records), so that each rule about records is written once, on values.
 */
export function marginValuesOf(rec: MarginRecord, into: MarginValues = new MarginValues()): MarginValues {
  into.tS = rec.t_s;
  into.tasMps = rec.tas_mps;
  into.tasRawMps = rec.tas_raw_mps;
  into.casMps = orNaN(rec.cas_mps);
  into.densityKgM3 = rec.density_kg_m3;
  into.temperatureK = rec.temperature_k;
  into.altM = rec.alt_m;
  into.massKg = rec.mass_kg;
  into.nMeasured = rec.n_measured;
  into.nRaw = rec.n_raw;
  into.nStall = rec.n_stall;
  into.nStallNeg = orNaN(rec.n_stall_neg);
  into.nThrust = orNaN(rec.n_thrust);
  into.uStall = orNaN(rec.utilization.stall);
  into.uThrust = orNaN(rec.utilization.thrust);
  into.uStructure = orNaN(rec.utilization.structure);
  into.uSpeed = orNaN(rec.utilization.speed);
  into.bankDeg = orNaN(rec.bank_deg);
  into.nz = orNaN(rec.nz);
  into.nFromBank = orNaN(rec.n_from_bank);
  into.throttle = orNaN(rec.throttle);
  into.dvdtMps2 = orNaN(rec.dvdt_mps2);
  into.dhdtMps = orNaN(rec.dhdt_mps);
  into.bankRateDps = orNaN(rec.bank_rate_dps);
  into.psMps = orNaN(rec.ps_mps);
  into.psModelMps = orNaN(rec.ps_model_mps);
  into.psResidualMps = orNaN(rec.ps_residual_mps);
  into.psResidualMean3sMps = orNaN(rec.ps_residual_mean_3s_mps);
  into.timeToStallCautionS = orNaN(rec.time_to_stall_caution_s);
  into.timeToStallWarningS = orNaN(rec.time_to_stall_warning_s);
  // Records made by hand (tests) may lack the later keys.
  const band = rec.sustained_band_mps as MarginRecord['sustained_band_mps'] | undefined;
  into.bandLoMps = band == null ? Number.NaN : band[0];
  into.bandHiMps = band == null ? Number.NaN : band[1];
  into.flying = rec.flying;
  into.uncoordinated = rec.uncoordinated;
  into.simulated = rec.simulated === true;
  into.level = rec.level;
  into.alerts = rec.alerts ?? [];
  into.assumed = rec.assumed ?? [];
  return into;
}
