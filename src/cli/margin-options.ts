/**
 * The options that shape the frame engine's computation, shared by every command that runs it (watch, replay,
 * demo, review, check, serve): the smoothing, the rate window and what to assume for frames without a throttle.
 */
import { choiceOption, numberOption, stringOption, type OptionSpec, type ParsedArgs } from './args.js';
import { DEFAULT_SMOOTH_TAU_S, type MarginOptions } from '../core/margins.js';
import { DEFAULT_RATE_WINDOW_S } from '../core/rate-estimator.js';
import { THROTTLE_FULL_MIN, THROTTLE_IDLE_MAX, type ThrottleAssumption } from '../core/energy.js';
import type { AlertThresholds } from '../core/thresholds.js';

const THROTTLE_CHOICES: readonly ThrottleAssumption[] = ['full', 'idle'];
/** The rate window's bounds, s: below, a few frames make a slope of noise; above, the rates lag the flight. */
const RATE_WINDOW_MIN_S = 0.05;
const RATE_WINDOW_MAX_S = 60;

export const MARGIN_COMPUTATION_OPTIONS: OptionSpec[] = [
  {
    name: 'smooth',
    type: 'string',
    valueName: 'S',
    unit: 's',
    defaultText: String(DEFAULT_SMOOTH_TAU_S),
    description: 'time constant of the low-pass filter on the load factor and the TAS; 0 turns smoothing off',
  },
  {
    name: 'rate-window',
    type: 'string',
    valueName: 'S',
    unit: 's',
    defaultText: String(DEFAULT_RATE_WINDOW_S),
    description: `window W of the rates dV/dt and dh/dt (least-squares slope over the last W seconds of frames) behind the measured Ps and the time to the stall (${RATE_WINDOW_MIN_S} to ${RATE_WINDOW_MAX_S})`,
  },
  {
    name: 'throttle',
    type: 'string',
    valueName: 'full|idle',
    defaultText: 'none',
    description:
      `for frames without a throttle key, the setting the modelled Ps assumes (full: thrust available; idle: no thrust); ` +
      `frames with one use it (≥ ${THROTTLE_FULL_MIN} full, ≤ ${THROTTLE_IDLE_MAX} idle, part throttle is not modelled)`,
  },
];

/** The engine's options from the command line over the thresholds already loaded. */
export function parseMarginOptions(args: ParsedArgs, thresholds: AlertThresholds): Partial<MarginOptions> {
  const options: Partial<MarginOptions> = { thresholds };
  const smoothTauS = numberOption(args, 'smooth', undefined, { min: 0, max: 10 });
  if (smoothTauS !== undefined) options.smoothTauS = smoothTauS;
  const rateWindowS = numberOption(args, 'rate-window', undefined, { min: RATE_WINDOW_MIN_S, max: RATE_WINDOW_MAX_S });
  if (rateWindowS !== undefined) options.rateWindowS = rateWindowS;
  if (stringOption(args, 'throttle') !== undefined)
    options.assumeThrottle = choiceOption(args, 'throttle', THROTTLE_CHOICES, 'full');
  return options;
}
