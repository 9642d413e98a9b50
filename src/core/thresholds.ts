/**
 * Alert thresholds on utilization (load factor in use ÷ limit). Defaults are common practice, not from a
 * standard: stall caution 0.80 (about 1.12·Vs at that n), warning 0.90 (about 1.05·Vs); structure caution 0.80,
 * warning 0.95; thrust caution 1.00 (the turn is not sustainable); hysteresis 0.02.
 */
import { z } from 'zod';

export interface AlertThresholds {
  stallCaution: number;
  stallWarning: number;
  structureCaution: number;
  structureWarning: number;
  thrustCaution: number;
  /** An alert goes off only below threshold − hysteresis. */
  hysteresis: number;
}

export const DEFAULT_THRESHOLDS: Readonly<AlertThresholds> = Object.freeze({
  stallCaution: 0.8,
  stallWarning: 0.9,
  structureCaution: 0.8,
  structureWarning: 0.95,
  thrustCaution: 1.0,
  hysteresis: 0.02,
});

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
    hysteresis: z
      .number({ error: 'must be a number from 0 to 0.2' })
      .gte(0, { error: 'must be a number from 0 to 0.2' })
      .lte(0.2, { error: 'must be a number from 0 to 0.2' })
      .optional(),
  })
  .check((ctx) => {
    const t = ctx.value;
    const pairs: Array<[string, number | undefined, number | undefined]> = [
      ['stall_warning', t.stall_caution, t.stall_warning],
      ['structure_warning', t.structure_caution, t.structure_warning],
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
    hysteresis: json?.hysteresis ?? base.hysteresis,
  };
}
