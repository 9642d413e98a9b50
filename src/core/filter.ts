/**
 * First-order low-pass filter on a sampled signal with irregular time steps (common practice):
 * y ← y + (1 − e^(−Δt/τ))·(x − y). It restarts at the raw value on the first sample, after a gap Δt above
 * `maxGapS`, and when time does not advance (a new segment of the sender's clock).
 */
import { windowEdgeSlackS } from './rate-estimator.js';

export interface LowPassState {
  /** Time of the last sample, s. */
  tS: number;
  /** Filtered value. */
  value: number;
}

/** Gap after which the filter restarts, s. */
export const FILTER_RESTART_GAP_S = 1;

export interface LowPassStep {
  state: LowPassState;
  /** true when the filter started afresh at this sample. */
  restarted: boolean;
}

/**
 * An interval between frames longer than `maxGapS`, allowing for the rounding of decimal frame times held in binary
 * floats (8.3 − 7.3 gives 1.0000000000000142): frames exactly 1 s apart are never a gap, whatever their times.
 */
export function isOverGap(dtS: number, maxGapS: number, tS: number): boolean {
  return dtS > maxGapS + windowEdgeSlackS(tS);
}

/** One step of the filter. τ = 0 turns it off (the output is the input). */
export function lowPassStep(
  previous: LowPassState | null,
  tS: number,
  input: number,
  tauS: number,
  maxGapS: number = FILTER_RESTART_GAP_S,
): LowPassStep {
  if (previous === null) return { state: { tS, value: input }, restarted: true };
  const dtS = tS - previous.tS;
  if (!(dtS > 0) || isOverGap(dtS, maxGapS, tS)) return { state: { tS, value: input }, restarted: true };
  if (tauS <= 0) return { state: { tS, value: input }, restarted: false };
  const gain = filterGain(dtS, tauS);
  return { state: { tS, value: previous.value + gain * (input - previous.value) }, restarted: false };
}

/**
 * lowPassStep for a caller that owns its state: a continuing step updates `previous` in place and returns it; a
 * restart (first sample, a gap, time not advancing) returns a new state. So the filter restarted exactly when the
 * result is not `previous`. The same values as lowPassStep, without an object per sample.
 */
export function lowPassStepInPlace(
  previous: LowPassState | null,
  tS: number,
  input: number,
  tauS: number,
  maxGapS: number = FILTER_RESTART_GAP_S,
): LowPassState {
  if (previous === null) return { tS, value: input };
  const dtS = tS - previous.tS;
  if (!(dtS > 0) || isOverGap(dtS, maxGapS, tS)) return { tS, value: input };
  // Two stores, not one of a conditional: a tagged input on one side would make V8 box the filtered value.
  if (tauS <= 0) previous.value = input;
  else previous.value = previous.value + filterGain(dtS, tauS) * (input - previous.value);
  previous.tS = tS;
  return previous;
}

/** The last step and τ and their gain: telemetry comes at a steady rate, so Δt repeats from sample to sample. */
// In a typed array (Δt, τ, gain): a double stored in a module variable is boxed at every store.
const lastGainOf = new Float64Array(3).fill(Number.NaN);

/** 1 − e^(−Δt/τ), the gain of one step (the same value as computing it each time). */
export function filterGain(dtS: number, tauS: number): number {
  if (dtS !== lastGainOf[0] || tauS !== lastGainOf[1]) {
    lastGainOf[2] = 1 - Math.exp(-dtS / tauS);
    lastGainOf[0] = dtS;
    lastGainOf[1] = tauS;
  }
  return lastGainOf[2]!;
}

/**
 * How far the filter's output trails a ramp in steady state, s, at a constant step Δt: with gain a = 1 − e^(−Δt/τ),
 * y_k = y_(k−1) + a·(x_k − y_(k−1)) settles at x(t − Δt·(1 − a)/a) (a geometric series). Tends to τ as Δt → 0;
 * 0 with the filter off.
 */
export function lowPassRampDelayS(tauS: number, dtS: number): number {
  if (!(tauS > 0)) return 0;
  if (!(dtS > 0)) return tauS;
  const gain = 1 - Math.exp(-dtS / tauS);
  return (dtS * (1 - gain)) / gain;
}
