/**
 * The energy part of a margin record: the rates over the rate window (dV/dt of the raw TAS, dh/dt, the bank rate),
 * specific excess power measured and modelled, their residual and its mean over the last few seconds, the time to
 * the stall caution and warning, and the sustainable speed band. The frame engine owns one tracker, feeds it every
 * record it makes and resets it at every break (the windows restart there); nothing else keeps these windows.
 */
import type { Aircraft } from './aircraft.js';
import { isaPressurePa } from './atmosphere.js';
import {
  measuredPsOrNaN,
  modelPsAtSettingOrNaN,
  psResidualOrNaN,
  throttleSetting,
  timeToUtilizationOrNaN,
  type ThrottleAssumption,
} from './energy.js';
import type { MarginValues } from './margin-values.js';
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
  /** Fill the energy values of `v` (its margins made); call once per accepted frame, in order. */
  fill(v: MarginValues): void;
  /** A break: every window restarts. */
  reset(): void;
}

/** Mean of the values pushed over the last `windowS` of frame time (a ring with a running sum). */
function createWindowMean(windowS: number): {
  /** Push a value (NaN: none at this frame) and return the mean, NaN when the window holds none. */
  push(tS: number, value: number): number;
  reset(): void;
} {
  // Capacity a power of two (64, doubled when full): indices wrap with a mask.
  let times = new Float64Array(64);
  let values = new Float64Array(64);
  let mask = times.length - 1;
  let head = 0;
  let count = 0;
  // The running sum in a typed array: a double stored in a closure variable is boxed at every store.
  const sum = new Float64Array(1);
  let sinceRebuild = 0;
  const at = (k: number): number => (head + k) & mask;
  return {
    push(tS, value) {
      const edgeS = tS - windowS - windowEdgeSlackS(tS);
      while (count > 0 && times[head]! < edgeS) {
        sum[0] = sum[0]! - values[head]!;
        head = (head + 1) & mask;
        count--;
      }
      if (Number.isFinite(value)) {
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
        sum[0] = sum[0]! + value;
        // Rebuild the sum now and then so that rounding does not accumulate over a long flight.
        if (++sinceRebuild >= Math.max(count, 64)) {
          sinceRebuild = 0;
          let rebuilt = 0;
          for (let k = 0; k < count; k++) rebuilt += values[at(k)]!;
          sum[0] = rebuilt;
        }
      }
      return count > 0 ? sum[0]! / count : Number.NaN;
    },
    reset() {
      head = 0;
      count = 0;
      sum[0] = 0;
      sinceRebuild = 0;
    },
  };
}

/** The sustainable speed band at the frame's density, mass and n into v (a search over speeds: sustained-band.ts). */
function fillSpeedBand(aircraft: Aircraft, v: MarginValues): void {
  const vs1 = stallSpeedMps(aircraft, v.densityKgM3, v.massKg);
  const top = topSpeedMps(vneTasMps(aircraft, isaPressurePa(v.altM), v.temperatureK), vs1);
  const found = sustainedBandMps(aircraft, v.densityKgM3, v.massKg, v.nMeasured, top);
  v.bandLoMps = found === null ? Number.NaN : found.loMps;
  v.bandHiMps = found === null ? Number.NaN : found.hiMps;
}

export function createEnergyTracker(aircraft: Aircraft, options: EnergyOptions): EnergyTracker {
  // Speed, altitude and bank share one time axis (their slopes as three estimators would give them).
  const rates = createSharedRateWindows(options.rateWindowS, 3);
  const slopes = rates.slopes;
  const hasSlope = rates.hasSlope;
  // The time, then speed, altitude and bank.
  const rateRow = new Float64Array(4);
  const residualMean = createWindowMean(RESIDUAL_MEAN_WINDOW_S);
  const stallCaution = options.thresholds.stallCaution;
  const stallWarning = options.thresholds.stallWarning;
  const assumeThrottle = options.assumeThrottle;
  const speedBand = options.speedBand;
  let lastSetting: ThrottleAssumption | null = null;
  // The frame time the setting began (NaN: none since the last break), in a typed array: a double stored in a
  // closure variable is boxed at every store.
  const settingSinceS = new Float64Array(1).fill(Number.NaN);
  return {
    fill(v) {
      const tS = v.tS;
      rateRow[0] = tS;
      rateRow[1] = v.tasRawMps;
      rateRow[2] = v.altM;
      rateRow[3] = v.bankDeg;
      rates.push(rateRow);
      // NaN stands for null throughout (no number boxed per frame): it carries through the sums below.
      const dvdt = hasSlope[0] === 1 ? slopes[0]! : Number.NaN;
      const dhdt = hasSlope[1] === 1 ? slopes[1]! : Number.NaN;
      const tasMps = v.tasMps;
      const ps = measuredPsOrNaN(dhdt, tasMps, dvdt);
      const setting = throttleSetting(v.throttle, assumeThrottle);
      const psModel = modelPsAtSettingOrNaN(aircraft, tasMps, v.densityKgM3, v.massKg, v.nMeasured, setting);
      const residual = psResidualOrNaN(ps, psModel);
      v.dvdtMps2 = dvdt;
      v.dhdtMps = dhdt;
      v.bankRateDps = hasSlope[2] === 1 ? slopes[2]! : Number.NaN;
      v.psMps = ps;
      v.psModelMps = psModel;
      v.psResidualMps = residual;
      // The rates lag a throttle step by up to the window: the mean restarts when the setting changes and takes a
      // residual only once the whole window lies in one setting, so a step does not raise a false advisory.
      if (setting !== lastSetting || settingSinceS[0] !== settingSinceS[0]) {
        lastSetting = setting;
        settingSinceS[0] = tS;
        residualMean.reset();
      }
      const wholeWindowInSetting = tS - settingSinceS[0]! >= options.rateWindowS - windowEdgeSlackS(tS);
      v.psResidualMean3sMps = residualMean.push(tS, wholeWindowInSetting ? residual : Number.NaN);
      const stallU = v.uStall;
      const flying = v.flying;
      const nF = v.nMeasured;
      v.timeToStallCautionS = timeToUtilizationOrNaN(flying, tasMps, nF, stallU, dvdt, stallCaution);
      v.timeToStallWarningS = timeToUtilizationOrNaN(flying, tasMps, nF, stallU, dvdt, stallWarning);
      if (speedBand) fillSpeedBand(aircraft, v);
      else v.bandLoMps = v.bandHiMps = Number.NaN;
    },
    reset() {
      settingSinceS[0] = Number.NaN;
      rates.reset();
      residualMean.reset();
    },
  };
}
