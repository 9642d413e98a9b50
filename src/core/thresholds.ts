/**
 * Alert thresholds on utilization (load factor in use ÷ limit; CAS ÷ vne for the speed limit). Defaults are common
 * practice, not from a standard: stall caution 0.80 (about 1.12·Vs at that n), warning 0.90 (about 1.05·Vs);
 * structure caution 0.80, warning 0.95; thrust caution 1.00 (the turn is not sustainable); speed caution 0.95,
 * warning 1.00 (at vne); hysteresis 0.02; an alert goes off after 0.5 s clear.
 */
import * as z from 'zod';

export interface AlertThresholds {
  stallCaution: number;
  stallWarning: number;
  structureCaution: number;
  structureWarning: number;
  thrustCaution: number;
  speedCaution: number;
  speedWarning: number;
  /** An alert goes off only below threshold − hysteresis … */
  hysteresis: number;
  /** … held continuously for at least this much frame time, s. */
  clearS: number;
}

export const DEFAULT_THRESHOLDS: Readonly<AlertThresholds> = Object.freeze({
  stallCaution: 0.8,
  stallWarning: 0.9,
  structureCaution: 0.8,
  structureWarning: 0.95,
  thrustCaution: 1.0,
  speedCaution: 0.95,
  speedWarning: 1.0,
  hysteresis: 0.02,
  clearS: 0.5,
});

/** Upper bound of clear_s, s: longer would hold an alert on long after the condition ended. */
export const MAX_CLEAR_S = 10;

/** The defaults in words, for help texts: "0.80/0.90 stall, … hysteresis 0.02, clear 0.5 s". */
export function describeDefaultThresholds(t: AlertThresholds = DEFAULT_THRESHOLDS): string {
  const f = (x: number) => x.toFixed(2);
  return (
    `${f(t.stallCaution)}/${f(t.stallWarning)} stall, ${f(t.structureCaution)}/${f(t.structureWarning)} structure, ` +
    `${f(t.thrustCaution)} thrust, ${f(t.speedCaution)}/${f(t.speedWarning)} speed (CAS ÷ vne), ` +
    `hysteresis ${f(t.hysteresis)}, clear ${t.clearS} s`
  );
}

const ratio = z
  .number({ error: 'must be a number between 0 and 2' })
  .gt(0, { error: 'must be a number between 0 and 2' })
  .lte(2, { error: 'must be a number between 0 and 2' });

/** JSON form (snake_case keys), used both in a thresholds file and under `alert_thresholds` in an airframe file. */
export const ThresholdsSchema = z
  .strictObject({
    stall_caution: ratio.optional(),
    stall_warning: ratio.optional(),
    structure_caution: ratio.optional(),
    structure_warning: ratio.optional(),
    thrust_caution: ratio.optional(),
    speed_caution: ratio.optional(),
    speed_warning: ratio.optional(),
    hysteresis: z
      .number({ error: 'must be a number from 0 to 0.2' })
      .gte(0, { error: 'must be a number from 0 to 0.2' })
      .lte(0.2, { error: 'must be a number from 0 to 0.2' })
      .optional(),
    clear_s: z
      .number({ error: `must be a number of seconds from 0 to ${MAX_CLEAR_S}` })
      .gte(0, { error: `must be a number of seconds from 0 to ${MAX_CLEAR_S}` })
      .lte(MAX_CLEAR_S, { error: `must be a number of seconds from 0 to ${MAX_CLEAR_S}` })
      .optional(),
  })
  .check((ctx) => {
    const t = ctx.value;
    const pairs: Array<[string, number | undefined, number | undefined]> = [
      ['stall_warning', t.stall_caution, t.stall_warning],
      ['structure_warning', t.structure_caution, t.structure_warning],
      ['speed_warning', t.speed_caution, t.speed_warning],
    ];
    for (const [key, caution, warning] of pairs) {
      if (caution !== undefined && warning !== undefined && warning < caution) {
        ctx.issues.push({
          code: 'custom',
          input: warning,
          path: [key],
          message: 'must not be below the caution threshold',
        });
      }
    }
  });

export type ThresholdsJson = z.infer<typeof ThresholdsSchema>;

/** Merge JSON overrides onto a base set of thresholds. */
export function resolveThresholds(
  json: ThresholdsJson | undefined,
  base: AlertThresholds = DEFAULT_THRESHOLDS,
): AlertThresholds {
  return {
    stallCaution: json?.stall_caution ?? base.stallCaution,
    stallWarning: json?.stall_warning ?? base.stallWarning,
    structureCaution: json?.structure_caution ?? base.structureCaution,
    structureWarning: json?.structure_warning ?? base.structureWarning,
    thrustCaution: json?.thrust_caution ?? base.thrustCaution,
    speedCaution: json?.speed_caution ?? base.speedCaution,
    speedWarning: json?.speed_warning ?? base.speedWarning,
    hysteresis: json?.hysteresis ?? base.hysteresis,
    clearS: json?.clear_s ?? base.clearS,
  };
}
