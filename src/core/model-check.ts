/**
 * The model check of a flight: over the frames at full throttle and at idle that have a Ps residual (measured −
 * modelled), the count, the mean and standard deviation of the residual, and the mean drag error each residual
 * implies (ΔD/D = −W·residual/(V·D), %). A running sum over records in bounded memory (Welford's algorithm for the
 * mean and variance, from memory); the residuals themselves come from the frame engine.
 */
import type { Aircraft } from './aircraft.js';
import { impliedDragErrorPctOrNaN, throttleSetting, type ThrottleAssumption } from './energy.js';
import type { MarginRecord } from './margin-record.js';
import { marginValuesOf, MarginValues } from './margin-values.js';
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

// Welford's running mean and variance of the residual, and the drag error's sum, in a typed array: doubles held in
// closure variables are boxed at every store (here, at every frame with a residual).
const N = 0;
const MEAN = 1;
const M2 = 2;
const DRAG_SUM = 3;
const DRAG_COUNT = 4;

function createSettingSums() {
  const sums = new Float64Array(5);
  return {
    /** One residual, and the drag error it implies (NaN: none). */
    add(residual: number, dragErrorPct: number) {
      const n = sums[N]! + 1;
      sums[N] = n;
      const delta = residual - sums[MEAN]!;
      const mean = sums[MEAN]! + delta / n;
      sums[MEAN] = mean;
      sums[M2] = sums[M2]! + delta * (residual - mean);
      if (dragErrorPct === dragErrorPct) {
        sums[DRAG_SUM] = sums[DRAG_SUM]! + dragErrorPct;
        sums[DRAG_COUNT] = sums[DRAG_COUNT]! + 1;
      }
    },
    result(): ModelCheckSetting | null {
      const n = sums[N]!;
      if (n === 0) return null;
      const dragCount = sums[DRAG_COUNT]!;
      return {
        frames: n,
        meanResidualMps: sums[MEAN]!,
        sdResidualMps: n > 1 ? Math.sqrt(sums[M2]! / (n - 1)) : null,
        dragErrorPct: dragCount > 0 ? sums[DRAG_SUM]! / dragCount : null,
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
      // The throttle as its NaN-for-null number (throttleSetting takes NaN as unknown): not boxed per frame.
      const setting = throttleSetting(v.throttle, assumeThrottle);
      if (setting === null) return;
      const dragN = dragAtLoadFactorN(aircraft, v.tasMps, v.densityKgM3, v.massKg, v.nMeasured);
      const error = impliedDragErrorPctOrNaN(residual, v.tasMps, dragN, v.massKg);
      (setting === 'full' ? full : idle).add(residual, error);
    },
    finish: () => ({ full: full.result(), idle: idle.result() }),
  };
  return accumulator;
}
