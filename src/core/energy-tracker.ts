/**
 * The energy part of a margin record: the rates over the rate window (dV/dt of the raw TAS, dh/dt, the bank rate),
 * specific excess power measured and modelled, their residual and its mean over the last few seconds, the time to
 * the stall caution and warning, and the sustainable speed band. The frame engine owns one tracker, feeds it every
 * record it makes and resets it at every break (the windows restart there); nothing else keeps these windows.
 */
import type { Aircraft } from './aircraft.js';
import { isaPressurePa } from './atmosphere.js';
import {
  modelPsMps,
  psResidualMps,
  specificExcessPowerMps,
  throttleSetting,
  timeToUtilizationS,
  type ThrottleAssumption,
} from './energy.js';
import type { Frame } from './frame.js';
import type { MarginRecord } from './margin-record.js';
import { stallSpeedMps, topSpeedMps, vneTasMps } from './performance.js';
import { createSharedRateWindows, grownRing, windowEdgeSlackS } from './rate-estimator.js';
import { sustainedBandMps } from './sustained-band.js';
import type { AlertThresholds } from './thresholds.js';

/** The model advisory looks at the residual's mean over this much frame time, s. */
export const RESIDUAL_MEAN_WINDOW_S = 3;
/** A residual mean beyond ± this (m/s) means the model and the flight disagree (the dashboard's advisory). */
export const RESIDUAL_ADVISORY_MPS = 0.5;

export interface EnergyOptions {
  /** W: the rate window, s. */
  rateWindowS: number;
  /** What to assume for frames without a throttle; undefined = nothing (no modelled Ps there). */
  assumeThrottle?: ThrottleAssumption;
  thresholds: AlertThresholds;
  /** Compute sustained_band_mps (else it stays null): see MarginOptions.speedBand. */
  speedBand: boolean;
}

export interface EnergyTracker {
  /** Fill the energy keys of `rec` (made from `frame`); call once per accepted frame, in order. */
  fill(rec: MarginRecord, frame: Frame): void;
  /** A break: every window restarts. */
  reset(): void;
}

/** Mean of the values pushed over the last `windowS` of frame time (a ring with a running sum). */
function createWindowMean(windowS: number): {
  push(tS: number, value: number | null): number | null;
  reset(): void;
} {
  // Capacity a power of two (64, doubled when full): indices wrap with a mask.
  let times = new Float64Array(64);
  let values = new Float64Array(64);
  let mask = times.length - 1;
  let head = 0;
  let count = 0;
  let sum = 0;
  let sinceRebuild = 0;
  const at = (k: number): number => (head + k) & mask;
  return {
    push(tS, value) {
      const edgeS = tS - windowS - windowEdgeSlackS(tS);
      while (count > 0 && times[head]! < edgeS) {
        sum -= values[head]!;
        head = (head + 1) & mask;
        count--;
      }
      if (value !== null && Number.isFinite(value)) {
        if (count === times.length) {
          times = grownRing(times, head, count);
          values = grownRing(values, head, count);
          mask = times.length - 1;
          head = 0;
        }
        const i = at(count);
        times[i] = tS;
        values[i] = value;
        count++;
        sum += value;
        // Rebuild the sum now and then so that rounding does not accumulate over a long flight.
        if (++sinceRebuild >= Math.max(count, 64)) {
          sinceRebuild = 0;
          sum = 0;
          for (let k = 0; k < count; k++) sum += values[at(k)]!;
        }
      }
      return count > 0 ? sum / count : null;
    },
    reset() {
      head = 0;
      count = 0;
      sum = 0;
      sinceRebuild = 0;
    },
  };
}

/** The sustainable speed band at the record's density, mass and n (a search over speeds: sustained-band.ts). */
function recordSpeedBand(aircraft: Aircraft, rec: MarginRecord): [number, number] | null {
  const vs1 = stallSpeedMps(aircraft, rec.density_kg_m3, rec.mass_kg);
  const top = topSpeedMps(vneTasMps(aircraft, isaPressurePa(rec.alt_m), rec.temperature_k), vs1);
  const found = sustainedBandMps(aircraft, rec.density_kg_m3, rec.mass_kg, rec.n_measured, top);
  return found === null ? null : [found.loMps, found.hiMps];
}

export function createEnergyTracker(aircraft: Aircraft, options: EnergyOptions): EnergyTracker {
  // Speed, altitude and bank share one time axis (their slopes as three estimators would give them).
  const rates = createSharedRateWindows(options.rateWindowS, 3);
  const slopes = rates.slopes;
  const hasSlope = rates.hasSlope;
  const rateInputs = new Float64Array(3);
  const residualMean = createWindowMean(RESIDUAL_MEAN_WINDOW_S);
  const stallCaution = options.thresholds.stallCaution;
  const stallWarning = options.thresholds.stallWarning;
  const assumeThrottle = options.assumeThrottle;
  const speedBand = options.speedBand;
  let lastSetting: ThrottleAssumption | null = null;
  let settingSinceS: number | null = null;
  return {
    fill(rec, frame) {
      const tS = rec.t_s;
      rateInputs[0] = rec.tas_raw_mps;
      rateInputs[1] = rec.alt_m;
      rateInputs[2] = rec.bank_deg ?? NaN;
      rates.push(tS, rateInputs);
      const dvdt = hasSlope[0] === 1 ? slopes[0]! : null;
      const dhdt = hasSlope[1] === 1 ? slopes[1]! : null;
      const bankRate = hasSlope[2] === 1 ? slopes[2]! : null;
      const throttle = frame.throttle ?? null;
      const ps = specificExcessPowerMps(dhdt, rec.tas_mps, dvdt);
      const psModel = modelPsMps(
        aircraft,
        rec.tas_mps,
        rec.density_kg_m3,
        rec.mass_kg,
        rec.n_measured,
        throttle,
        assumeThrottle,
      );
      const residual = psResidualMps(ps, psModel);
      const stallU = rec.utilization.stall;
      rec.throttle = throttle;
      rec.dvdt_mps2 = dvdt;
      rec.dhdt_mps = dhdt;
      rec.bank_rate_dps = bankRate;
      rec.ps_mps = ps;
      rec.ps_model_mps = psModel;
      rec.ps_residual_mps = residual;
      // The rates lag a throttle step by up to the window: the mean restarts when the setting changes and takes a
      // residual only once the whole window lies in one setting, so a step does not raise a false advisory.
      const setting = throttleSetting(throttle, assumeThrottle);
      if (setting !== lastSetting || settingSinceS === null) {
        lastSetting = setting;
        settingSinceS = tS;
        residualMean.reset();
      }
      const wholeWindowInSetting = tS - settingSinceS >= options.rateWindowS - windowEdgeSlackS(tS);
      rec.ps_residual_mean_3s_mps = residualMean.push(tS, wholeWindowInSetting ? residual : null);
      rec.time_to_stall_caution_s = timeToUtilizationS(
        rec.flying,
        rec.tas_mps,
        rec.n_measured,
        stallU,
        dvdt,
        stallCaution,
      );
      rec.time_to_stall_warning_s = timeToUtilizationS(
        rec.flying,
        rec.tas_mps,
        rec.n_measured,
        stallU,
        dvdt,
        stallWarning,
      );
      if (speedBand) rec.sustained_band_mps = recordSpeedBand(aircraft, rec);
    },
    reset() {
      settingSinceS = null;
      rates.reset();
      residualMean.reset();
    },
  };
}
