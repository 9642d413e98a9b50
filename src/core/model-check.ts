/**
 * The model check of a flight: over the frames at full throttle and at idle that have a Ps residual (measured −
 * modelled), the count, the mean and standard deviation of the residual, and the mean drag error each residual
 * implies (ΔD/D = −W·residual/(V·D), %). A running sum over records in bounded memory (Welford's algorithm for the
 * mean and variance, from memory); the residuals themselves come from the frame engine.
 */
import type { Aircraft } from './aircraft.js';
import { impliedDragErrorPct, throttleSetting, type ThrottleAssumption } from './energy.js';
import type { MarginRecord } from './margin-record.js';
import { marginValuesOf, MarginValues, orNull } from './margin-values.js';
import { dragAtLoadFactorN } from './performance.js';

export interface ModelCheckSetting {
  frames: number;
  meanResidualMps: number;
  /** Sample standard deviation (n − 1); null with one frame. */
  sdResidualMps: number | null;
  /** Mean of the implied drag errors, %; null when none was defined (no positive drag). */
  dragErrorPct: number | null;
}

export interface ModelCheck {
  full: ModelCheckSetting | null;
  idle: ModelCheckSetting | null;
}

export interface ModelCheckAccumulator {
  push(rec: MarginRecord): void;
  /** push for the frame engine's values of the next frame. */
  pushValues(v: MarginValues): void;
  finish(): ModelCheck;
}

function createSettingSums() {
  let n = 0;
  let mean = 0;
  let m2 = 0;
  let dragSum = 0;
  let dragCount = 0;
  return {
    add(residual: number, dragErrorPct: number | null) {
      n += 1;
      const delta = residual - mean;
      mean += delta / n;
      m2 += delta * (residual - mean);
      if (dragErrorPct !== null) {
        dragSum += dragErrorPct;
        dragCount += 1;
      }
    },
    result(): ModelCheckSetting | null {
      if (n === 0) return null;
      return {
        frames: n,
        meanResidualMps: mean,
        sdResidualMps: n > 1 ? Math.sqrt(m2 / (n - 1)) : null,
        dragErrorPct: dragCount > 0 ? dragSum / dragCount : null,
      };
    },
  };
}

export function createModelCheckAccumulator(
  aircraft: Aircraft,
  assumeThrottle?: ThrottleAssumption,
): ModelCheckAccumulator {
  const full = createSettingSums();
  const idle = createSettingSums();
  const scratch = new MarginValues();
  const accumulator: ModelCheckAccumulator = {
    push: (rec) => accumulator.pushValues(marginValuesOf(rec, scratch)),
    pushValues(v) {
      const residual = v.psResidualMps;
      if (residual !== residual) return;
      const setting = throttleSetting(orNull(v.throttle), assumeThrottle);
      if (setting === null) return;
      const dragN = dragAtLoadFactorN(aircraft, v.tasMps, v.densityKgM3, v.massKg, v.nMeasured);
      const error = impliedDragErrorPct(residual, v.tasMps, dragN, v.massKg);
      (setting === 'full' ? full : idle).add(residual, error);
    },
    finish: () => ({ full: full.result(), idle: idle.result() }),
  };
  return accumulator;
}
