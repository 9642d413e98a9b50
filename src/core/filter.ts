/**
 * First-order low-pass filter on a sampled signal with irregular time steps (common practice):
 * y ← y + (1 − e^(−Δt/τ))·(x − y). It restarts at the raw value on the first sample, after a gap Δt above
 * `maxGapS`, and when time does not advance (a new segment of the sender's clock).
 */

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
  if (!(dtS > 0) || dtS > maxGapS) return { state: { tS, value: input }, restarted: true };
  if (tauS <= 0) return { state: { tS, value: input }, restarted: false };
  const gain = 1 - Math.exp(-dtS / tauS);
  return { state: { tS, value: previous.value + gain * (input - previous.value) }, restarted: false };
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
