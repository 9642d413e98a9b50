/**
 * The flight plan `simulate` flies: where the flight starts and a list of segments, each with a duration.
 * JSON with snake_case keys (unit in the name), validated with zod; `parseFlightPlan` lists every problem.
 *
 * Segment types:
 * - `straight`      wings level; optional `vertical_speed_mps` for a straight climb or descent.
 * - `turn`          coordinated turn at `bank_deg` or at `load_factor` (exactly one); negative bank or
 *                   `direction: "left"` turns left; optional `vertical_speed_mps` makes it a climbing (> 0) or
 *                   descending (< 0) turn.
 * - `speed_change`  the autothrottle flies to `to_tas_mps` (thrust between idle and full; no airbrake), with an
 *                   optional `bank_deg`.
 * - `pull_up`       wings level, the load factor held at `load_factor` (the flight path curves up).
 * - `glide`         throttle at 0; the flight path (not the throttle) holds `tas_mps` (default: the speed the
 *                   segment started at), so the aircraft descends; optional `bank_deg` for a gliding turn.
 * Every segment may carry `label` (written into each frame as `segment`) and either `throttle` (a fixed fraction
 * of the thrust available, 0…1) or `tas_mps` (the speed the autothrottle holds); without both the autothrottle
 * holds the speed the segment started at.
 */
import * as z from 'zod';
import { describeIssues } from '../core/validation.js';
import { MAX_ALTITUDE_M, MIN_ALTITUDE_M } from '../core/atmosphere.js';

const positive = (what = 'a positive number') =>
  z.number({ error: `must be ${what}` }).gt(0, { error: `must be ${what}` });
const between = (lo: number, hi: number) =>
  z
    .number({ error: `must be a number from ${lo} to ${hi}` })
    .gte(lo, { error: `must be a number from ${lo} to ${hi}` })
    .lte(hi, { error: `must be a number from ${lo} to ${hi}` });

/** Longest segment, s: a plan is a test card, not an endurance flight. */
export const MAX_SEGMENT_S = 3600;
/** Largest commanded bank, degrees (beyond it the point-mass turn model means little). */
export const MAX_BANK_DEG = 80;
/** Largest commanded load factor, g. */
export const MAX_LOAD_FACTOR = 10;

const durationText = `must be a number above 0 and at most ${MAX_SEGMENT_S}`;
const duration = z
  .number({ error: durationText })
  .gt(0, { error: durationText })
  .lte(MAX_SEGMENT_S, { error: durationText });
const bank = between(-MAX_BANK_DEG, MAX_BANK_DEG);
const verticalSpeed = between(-20, 20);

const common = {
  duration_s: duration,
  label: z
    .string({ error: 'must be a text' })
    .min(1, { error: 'must not be empty' })
    .max(64, { error: 'must be at most 64 characters' })
    .optional(),
  throttle: between(0, 1).optional(),
  tas_mps: positive().optional(),
};

const Straight = z.strictObject({
  type: z.literal('straight'),
  ...common,
  vertical_speed_mps: verticalSpeed.optional(),
});

const Turn = z.strictObject({
  type: z.literal('turn'),
  ...common,
  bank_deg: bank.optional(),
  load_factor: between(1, MAX_LOAD_FACTOR).optional(),
  direction: z.enum(['left', 'right'], { error: 'must be "left" or "right"' }).optional(),
  vertical_speed_mps: verticalSpeed.optional(),
});

const SpeedChange = z.strictObject({
  type: z.literal('speed_change'),
  duration_s: duration,
  label: common.label,
  to_tas_mps: positive(),
  bank_deg: bank.optional(),
});

const PullUp = z.strictObject({
  type: z.literal('pull_up'),
  ...common,
  load_factor: between(1, MAX_LOAD_FACTOR),
});

const Glide = z.strictObject({
  type: z.literal('glide'),
  duration_s: duration,
  label: common.label,
  tas_mps: positive().optional(),
  bank_deg: bank.optional(),
});

const Segment = z
  .discriminatedUnion('type', [Straight, Turn, SpeedChange, PullUp, Glide], {
    error: 'must be an object whose "type" is "straight", "turn", "speed_change", "pull_up" or "glide"',
  })
  .check((ctx) => {
    const s = ctx.value;
    if ('throttle' in s && s.throttle !== undefined && 'tas_mps' in s && s.tas_mps !== undefined) {
      ctx.issues.push({
        code: 'custom',
        input: s,
        path: ['throttle'],
        message: 'must not be given together with tas_mps (choose a fixed throttle or a speed to hold)',
      });
    }
    if (s.type === 'turn') {
      if ((s.bank_deg === undefined) === (s.load_factor === undefined)) {
        ctx.issues.push({
          code: 'custom',
          input: s,
          path: [],
          message: 'a turn needs exactly one of bank_deg and load_factor',
        });
      }
      if (s.direction !== undefined && s.bank_deg !== undefined) {
        ctx.issues.push({
          code: 'custom',
          input: s,
          path: ['direction'],
          message: 'applies to load_factor turns only (give a negative bank_deg to turn left)',
        });
      }
    }
  });

export const FlightPlanSchema = z.strictObject(
  {
    name: z.string({ error: 'must be a text' }).optional(),
    description: z.string({ error: 'must be a text' }).optional(),
    start: z.strictObject(
      {
        alt_m: between(MIN_ALTITUDE_M, MAX_ALTITUDE_M),
        tas_mps: positive(),
        heading_deg: between(0, 360).optional(),
        t_s: between(0, 1e9).optional(),
      },
      { error: 'must be an object {alt_m, tas_mps}' },
    ),
    /** Overrides the airframe's mass; also written into every frame. */
    mass_kg: positive().optional(),
    /** Air temperature off ISA, K; when given every frame carries the resulting oat_c. */
    isa_deviation_c: between(-60, 60).optional(),
    airspeed_key: z
      .enum(['tas_mps', 'cas_mps', 'ias_mps'], { error: 'must be "tas_mps", "cas_mps" or "ias_mps"' })
      .optional(),
    roll_rate_dps: between(1, 360).optional(),
    noise: z
      .strictObject(
        {
          nz_sd: between(0, 2).optional(),
          airspeed_sd_mps: between(0, 10).optional(),
          alt_sd_m: between(0, 10).optional(),
        },
        { error: 'must be an object {nz_sd, airspeed_sd_mps, alt_sd_m}' },
      )
      .optional(),
    segments: z
      .array(Segment, { error: 'must be a list of segments' })
      .min(1, { error: 'must hold at least one segment' }),
  },
  { error: 'must be a JSON object' },
);

export type FlightPlanJson = z.infer<typeof FlightPlanSchema>;
export type SegmentJson = FlightPlanJson['segments'][number];

/** Speed command for a segment: hold a speed with the autothrottle, or a fixed fraction of the thrust available. */
export type SpeedCommand =
  { kind: 'hold-entry' } | { kind: 'hold'; tasMps: number } | { kind: 'throttle'; fraction: number };

/** Attitude command: a bank angle (load factor follows from the vertical path), or a load factor. */
export type TurnCommand =
  | { kind: 'bank'; bankDeg: number }
  | { kind: 'load-factor'; loadFactor: number; sign: 1 | -1 }
  | { kind: 'pull-up'; loadFactor: number };

export interface PlanSegment {
  type: SegmentJson['type'];
  label: string;
  durationS: number;
  turn: TurnCommand;
  speed: SpeedCommand;
  /** Commanded vertical speed, m/s (0 = hold the altitude the segment started at); unused for pull_up and glide. */
  verticalSpeedMps: number;
  /** Glide: the flight path holds this speed (null: the speed the segment started at) instead of the altitude. */
  glide?: { tasMps: number | null };
}

export interface FlightPlan {
  name: string;
  description?: string;
  startAltM: number;
  startTasMps: number;
  startHeadingDeg: number;
  startTS: number;
  massKg?: number;
  isaDeviationK?: number;
  airspeedKey: 'tas_mps' | 'cas_mps' | 'ias_mps';
  rollRateDps: number;
  nzNoiseSd: number;
  airspeedNoiseSdMps: number;
  /** Standard deviation of the noise on alt_m, m (default 0: an altitude from a smoothed navigation solution). */
  altNoiseSdM: number;
  segments: PlanSegment[];
}

export const DEFAULT_ROLL_RATE_DPS = 45;
export const DEFAULT_NZ_NOISE_SD = 0.02;
export const DEFAULT_AIRSPEED_NOISE_SD_MPS = 0.15;
export const DEFAULT_ALT_NOISE_SD_M = 0;

function toSegment(s: SegmentJson, index: number): PlanSegment {
  const label = s.label ?? `${index + 1}:${s.type}`;
  let speed: SpeedCommand = { kind: 'hold-entry' };
  if (s.type === 'speed_change') speed = { kind: 'hold', tasMps: s.to_tas_mps };
  else if (s.type === 'glide') speed = { kind: 'throttle', fraction: 0 };
  else if (s.throttle !== undefined) speed = { kind: 'throttle', fraction: s.throttle };
  else if (s.tas_mps !== undefined) speed = { kind: 'hold', tasMps: s.tas_mps };
  let turn: TurnCommand;
  switch (s.type) {
    case 'straight':
      turn = { kind: 'bank', bankDeg: 0 };
      break;
    case 'speed_change':
    case 'glide':
      turn = { kind: 'bank', bankDeg: s.bank_deg ?? 0 };
      break;
    case 'pull_up':
      turn = { kind: 'pull-up', loadFactor: s.load_factor };
      break;
    case 'turn':
      turn =
        s.bank_deg !== undefined
          ? { kind: 'bank', bankDeg: s.bank_deg }
          : { kind: 'load-factor', loadFactor: s.load_factor!, sign: s.direction === 'left' ? -1 : 1 };
      break;
  }
  const verticalSpeedMps = s.type === 'straight' || s.type === 'turn' ? (s.vertical_speed_mps ?? 0) : 0;
  const segment: PlanSegment = { type: s.type, label, durationS: s.duration_s, turn, speed, verticalSpeedMps };
  if (s.type === 'glide') segment.glide = { tasMps: s.tas_mps ?? null };
  return segment;
}

export function toFlightPlan(json: FlightPlanJson, fallbackName: string): FlightPlan {
  const plan: FlightPlan = {
    name: json.name ?? fallbackName,
    startAltM: json.start.alt_m,
    startTasMps: json.start.tas_mps,
    startHeadingDeg: json.start.heading_deg ?? 0,
    startTS: json.start.t_s ?? 0,
    airspeedKey: json.airspeed_key ?? 'tas_mps',
    rollRateDps: json.roll_rate_dps ?? DEFAULT_ROLL_RATE_DPS,
    nzNoiseSd: json.noise?.nz_sd ?? DEFAULT_NZ_NOISE_SD,
    airspeedNoiseSdMps: json.noise?.airspeed_sd_mps ?? DEFAULT_AIRSPEED_NOISE_SD_MPS,
    altNoiseSdM: json.noise?.alt_sd_m ?? DEFAULT_ALT_NOISE_SD_M,
    segments: json.segments.map(toSegment),
  };
  if (json.description !== undefined) plan.description = json.description;
  if (json.mass_kg !== undefined) plan.massKg = json.mass_kg;
  if (json.isa_deviation_c !== undefined) plan.isaDeviationK = json.isa_deviation_c;
  return plan;
}

export type PlanParseResult = { ok: true; value: FlightPlan } | { ok: false; problems: string[] };

/** Validate parsed JSON as a flight plan; `label` (usually the file name) starts each problem line. */
export function parseFlightPlan(input: unknown, label: string): PlanParseResult {
  const result = FlightPlanSchema.safeParse(input);
  if (!result.success) return { ok: false, problems: describeIssues(label, input, result.error.issues) };
  return { ok: true, value: toFlightPlan(result.data, label.replace(/\.json$/i, '')) };
}

/** Total planned time, s. */
export function planDurationS(plan: FlightPlan): number {
  return plan.segments.reduce((sum, s) => sum + s.durationS, 0);
}
