/**
 * The airframe model: mass, wing, lift limits, drag polar, thrust model and structural limits.
 * The JSON file uses SI keys with the unit in the name; `parseAircraft` validates it and lists every problem.
 */
import * as z from 'zod';
import { MASS_MAX_KG, MASS_MIN_KG, POUND_KG } from './units.js';
import { ThresholdsSchema, type AlertThresholds, resolveThresholds } from './thresholds.js';
import { parseLenient, type Checked } from './validation.js';

const positive = (what = 'a positive number') =>
  z.number({ error: `must be ${what}` }).gt(0, { error: `must be ${what}` });

const MASS_RULE = `must be a mass from ${MASS_MIN_KG} to ${MASS_MAX_KG} kg`;

const speedPoint = z.tuple([positive(), positive()], { error: 'must be a pair [speed_mps, value]' });

const DensityExponent = z
  .number({ error: 'must be a number from 0 to 2' })
  .gte(0, { error: 'must be a number from 0 to 2' })
  .lte(2, { error: 'must be a number from 0 to 2' })
  .optional();

const ConstantThrust = z.strictObject({
  model: z.literal('constant'),
  thrust_n: positive(),
  density_exponent: DensityExponent,
});

const PowerThrust = z.strictObject({
  model: z.literal('power'),
  power_w: positive(),
  prop_efficiency: z
    .number({ error: 'must be a number above 0 and at most 1' })
    .gt(0, { error: 'must be a number above 0 and at most 1' })
    .lte(1, { error: 'must be a number above 0 and at most 1' }),
  static_thrust_n: positive(),
  density_exponent: DensityExponent,
});

const TableThrust = z.strictObject({
  model: z.literal('table'),
  points: z
    .array(
      z.tuple(
        [
          z.number({ error: 'speed must be a number ≥ 0' }).gte(0, { error: 'speed must be a number ≥ 0' }),
          z.number({ error: 'thrust must be a number ≥ 0' }).gte(0, { error: 'thrust must be a number ≥ 0' }),
        ],
        { error: 'must be a pair [tas_mps, thrust_n]' },
      ),
      { error: 'must be a list of [tas_mps, thrust_n] pairs' },
    )
    .min(2, { error: 'must hold at least two [tas_mps, thrust_n] points' })
    .check((ctx) => {
      for (let i = 1; i < ctx.value.length; i++) {
        if (ctx.value[i]![0] <= ctx.value[i - 1]![0]) {
          ctx.issues.push({
            code: 'custom',
            input: ctx.value,
            path: [i, 0],
            message: 'must increase (speeds sorted ascending)',
          });
        }
      }
    }),
  density_exponent: DensityExponent,
});

const Thrust = z.discriminatedUnion('model', [ConstantThrust, PowerThrust, TableThrust], {
  error: (issue) =>
    issue.input !== null && typeof issue.input === 'object'
      ? 'must be "constant", "power" or "table"'
      : 'must be an object whose "model" is "constant", "power" or "table"',
});

const Polar = z
  .strictObject(
    {
      cd0: positive(),
      k: positive().optional(),
      aspect_ratio: positive().optional(),
      oswald: z
        .number({ error: 'must be a number above 0 and at most 1' })
        .gt(0, { error: 'must be a number above 0 and at most 1' })
        .lte(1, { error: 'must be a number above 0 and at most 1' })
        .optional(),
    },
    { error: 'must be an object {cd0, k} or {cd0, aspect_ratio, oswald}' },
  )
  .check((ctx) => {
    const p = ctx.value;
    const hasK = p.k !== undefined;
    const hasAr = p.aspect_ratio !== undefined || p.oswald !== undefined;
    if (hasK && hasAr) {
      ctx.issues.push({
        code: 'custom',
        input: p,
        path: [],
        message: 'must give either k or aspect_ratio with oswald, not both',
      });
    } else if (!hasK && !(p.aspect_ratio !== undefined && p.oswald !== undefined)) {
      ctx.issues.push({ code: 'custom', input: p, path: [], message: 'must give k, or both aspect_ratio and oswald' });
    }
  });

export const AircraftSchema = z.strictObject(
  {
    name: z.string({ error: 'must be a text' }).min(1, { error: 'must not be empty' }),
    description: z.string({ error: 'must be a text' }).optional(),
    mass_kg: z
      .number({ error: MASS_RULE })
      .gte(MASS_MIN_KG, { error: MASS_RULE })
      .lte(MASS_MAX_KG, { error: MASS_RULE }),
    wing_area_m2: positive(),
    cl_max: positive(),
    cl_min: z.number({ error: 'must be a negative number' }).lt(0, { error: 'must be a negative number' }).optional(),
    polar: Polar,
    thrust: Thrust,
    n_limit_pos: z
      .number({ error: 'must be a number above 1' })
      .gt(1, { error: 'must be a number above 1' })
      .optional(),
    n_limit_neg: z
      .number({ error: 'must be a negative number' })
      .lt(0, { error: 'must be a negative number' })
      .optional(),
    vne_mps: positive('a positive calibrated airspeed (CAS), m/s').optional(),
    airspeed_calibration: z
      .array(speedPoint, { error: 'must be a list of [ias_mps, cas_mps] pairs' })
      .min(1, { error: 'must hold at least one [ias_mps, cas_mps] pair' })
      .check((ctx) => {
        // Both columns strictly increasing: one CAS per IAS and one IAS per CAS, so the table can be read both ways
        // (the monitor reads IAS → CAS, the simulator CAS → IAS).
        for (let i = 1; i < ctx.value.length; i++) {
          if (ctx.value[i]![0] <= ctx.value[i - 1]![0]) {
            ctx.issues.push({
              code: 'custom',
              input: ctx.value,
              path: [i, 0],
              message: 'must increase (IAS strictly increasing down the table)',
            });
          }
          if (ctx.value[i]![1] <= ctx.value[i - 1]![1]) {
            ctx.issues.push({
              code: 'custom',
              input: ctx.value,
              path: [i, 1],
              message: 'must increase (CAS strictly increasing down the table)',
            });
          }
        }
      })
      .optional(),
    alert_thresholds: ThresholdsSchema.optional(),
    /** Where a fitted polar and thrust came from (written by `fit --write-airframe`): accepted and ignored. */
    fitted: z
      .record(z.string(), z.unknown(), { error: 'must be an object (the record `turnmargin fit` writes)' })
      .optional(),
  },
  { error: 'must be a JSON object' },
);

export type AircraftJson = z.infer<typeof AircraftSchema>;

export type ThrustModel =
  | { model: 'constant'; thrustN: number; densityExponent: number }
  | { model: 'power'; powerW: number; propEfficiency: number; staticThrustN: number; densityExponent: number }
  | { model: 'table'; points: ReadonlyArray<readonly [number, number]>; densityExponent: number };

/** The validated airframe, in the form the solver uses. */
export interface Aircraft {
  name: string;
  description?: string;
  massKg: number;
  wingAreaM2: number;
  clMax: number;
  /** Negative-g stall lift coefficient, when known. */
  clMin?: number;
  cd0: number;
  /** Induced-drag factor: CD = CD0 + k·CL². */
  k: number;
  thrust: ThrustModel;
  nLimitPos: number;
  nLimitNeg: number;
  /** How the limits were obtained, for output. */
  nLimitPosSource: 'file' | '14 CFR 23.337(a) default';
  nLimitNegSource: 'file' | '14 CFR 23.337(b) default';
  /** Never-exceed speed, CAS (a calibrated airspeed, as in the trade); convert to TAS at the conditions. */
  vneMps?: number;
  airspeedCalibration?: ReadonlyArray<readonly [number, number]>;
  thresholds: AlertThresholds;
}

/**
 * Default positive limit load factor of 14 CFR 23.337(a), normal category:
 * n = 2.1 + 24000/(W + 10000), W the maximum weight in lb, need not exceed 3.8.
 */
export function defaultPositiveLimit(massKg: number): number {
  const weightLb = massKg / POUND_KG;
  return Math.min(3.8, 2.1 + 24000 / (weightLb + 10000));
}

/** Default negative limit load factor of 14 CFR 23.337(b): −0.4 × the positive limit. */
export function defaultNegativeLimit(nLimitPos: number): number {
  return -0.4 * nLimitPos;
}

export function toAircraft(json: AircraftJson): Aircraft {
  const m = json.thrust.density_exponent ?? 1.0;
  let thrust: ThrustModel;
  switch (json.thrust.model) {
    case 'constant':
      thrust = { model: 'constant', thrustN: json.thrust.thrust_n, densityExponent: m };
      break;
    case 'power':
      thrust = {
        model: 'power',
        powerW: json.thrust.power_w,
        propEfficiency: json.thrust.prop_efficiency,
        staticThrustN: json.thrust.static_thrust_n,
        densityExponent: m,
      };
      break;
    case 'table':
      thrust = { model: 'table', points: json.thrust.points, densityExponent: m };
      break;
  }
  const k = json.polar.k ?? 1 / (Math.PI * json.polar.oswald! * json.polar.aspect_ratio!);
  const nLimitPos = json.n_limit_pos ?? defaultPositiveLimit(json.mass_kg);
  const nLimitNeg = json.n_limit_neg ?? defaultNegativeLimit(nLimitPos);
  const aircraft: Aircraft = {
    name: json.name,
    massKg: json.mass_kg,
    wingAreaM2: json.wing_area_m2,
    clMax: json.cl_max,
    cd0: json.polar.cd0,
    k,
    thrust,
    nLimitPos,
    nLimitNeg,
    nLimitPosSource: json.n_limit_pos !== undefined ? 'file' : '14 CFR 23.337(a) default',
    nLimitNegSource: json.n_limit_neg !== undefined ? 'file' : '14 CFR 23.337(b) default',
    thresholds: resolveThresholds(json.alert_thresholds),
  };
  if (json.description !== undefined) aircraft.description = json.description;
  if (json.cl_min !== undefined) aircraft.clMin = json.cl_min;
  if (json.vne_mps !== undefined) aircraft.vneMps = json.vne_mps;
  if (json.airspeed_calibration !== undefined) aircraft.airspeedCalibration = json.airspeed_calibration;
  return aircraft;
}

export type ParseResult<T> = Checked<T>;

/**
 * Validate parsed JSON as an airframe; `label` (usually the file name) starts each problem line. Unknown keys are
 * returned as warnings (they may be typos) unless something else is wrong too.
 */
export function parseAircraft(input: unknown, label: string): ParseResult<Aircraft> {
  const result = parseLenient(AircraftSchema, input, label);
  if (!result.ok) return result;
  return { ok: true, value: toAircraft(result.value), warnings: result.warnings };
}
