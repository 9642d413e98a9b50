/**
 * The frame keys: the one table of what a telemetry frame may hold. The zod schema and the fast byte path
 * (frame-line.ts), the CSV mapping's units (mapping.ts), the packed-batch layout (frame-batch.ts) and the rule words
 * of a rejection (rejections.ts) are all derived from it. Adding a frame key means adding a row here (and its field
 * to `Frame` in core/frame.ts); nothing else in the decoders.
 *
 * Bounds are plausibility bounds: a value outside is taken as corrupt data, not as a flight condition.
 */
import type { AirspeedKind, Frame } from '../core/frame.js';
import { DEG_PER_RAD, FOOT_M, G0_MPS2, KELVIN_OFFSET, KMH_MPS, KNOT_MPS, MPH_MPS, POUND_KG } from '../core/units.js';
import { MASS_MAX_KG, MASS_MIN_KG } from '../core/units.js';

/** A CSV cell's conversion from a log's unit to the key's own (numbers; a flag maps 1/0 to true/false). */
export type UnitConversion = (x: number) => number | boolean;

const linear =
  (factor: number): UnitConversion =>
  (x) =>
    x * factor;
const fahrenheitToCelsius: UnitConversion = (x) => ((x - 32) * 5) / 9;

/** Units a CSV mapping may name for a key, each with its conversion to the key's own unit. */
const UNITS = {
  time: { s: linear(1), ms: linear(0.001) },
  speed: { 'm/s': linear(1), kt: linear(KNOT_MPS), 'km/h': linear(KMH_MPS), mph: linear(MPH_MPS) },
  length: { m: linear(1), ft: linear(FOOT_M) },
  angle: { deg: linear(1), rad: linear(DEG_PER_RAD) },
  load: { g: linear(1), 'm/s²': linear(1 / G0_MPS2), 'm/s2': linear(1 / G0_MPS2) },
  temperature: {
    '°C': linear(1),
    C: linear(1),
    '°F': fahrenheitToCelsius,
    F: fahrenheitToCelsius,
    K: (x: number) => x - KELVIN_OFFSET,
  },
  mass: { kg: linear(1), lb: linear(POUND_KG) },
  fraction: { fraction: linear(1), '%': linear(0.01) },
  // true/false cells pass as they are; 1 and 0 become true and false (anything else is left for validation to name).
  flag: { bool: (x: number) => (x === 1 ? true : x === 0 ? false : x) },
} as const satisfies Record<string, Record<string, UnitConversion>>;

/**
 * How a key takes part in a frame:
 * - `required`: must be there (a number within its bounds);
 * - `airspeed`: exactly one of the airspeed keys (the frame keeps which one as `airspeedKind`);
 * - `attitude`: optional, but at least one of the attitude keys;
 * - `optional`: may be absent or null (many senders write null for a missing sensor).
 */
export type FramePresence = 'required' | 'airspeed' | 'attitude' | 'optional';

interface KeyRuleBase {
  /** The key on the wire (SI, unit in the name). */
  key: string;
  presence: FramePresence;
  /** The mapping units this key accepts. */
  units: Readonly<Record<string, UnitConversion>>;
  /** What the key means, for README and errors. */
  meaning: string;
}

export interface NumberKeyRule extends KeyRuleBase {
  type: 'number';
  /** Inclusive bounds (finite: NaN and ±Infinity always fail). */
  min: number;
  max: number;
  /** Unit word after the bounds in a rejection ("m/s"), empty for a pure number. */
  unitWords: string;
  /** The Frame field (for an airspeed key: its airspeed kind). */
  field: Exclude<keyof Frame, 'airspeedKind' | 'airspeedMps' | 'simulated'> | AirspeedKind;
}

export interface BooleanKeyRule extends KeyRuleBase {
  type: 'boolean';
  presence: 'optional';
  field: 'simulated';
}

export type FrameKeyRule = NumberKeyRule | BooleanKeyRule;

/** The table. Its order is the order of the schema's checks (the first problem names the rejection). */
export const FRAME_KEYS: readonly FrameKeyRule[] = [
  {
    key: 't_s',
    type: 'number',
    presence: 'required',
    field: 'tS',
    // |t_s| up to about 31 years: room for any clock epoch a sender counts in seconds, while a value such as 1e308
    // (which would make every later frame "time not increasing") is refused.
    min: -1e9,
    max: 1e9,
    unitWords: 's',
    units: UNITS.time,
    meaning: 'sample time, s; must increase',
  },
  // Subsonic: the airspeed relations the tool uses hold well below Mach 1, and a small UAV never comes near 300 m/s.
  ...(['ias', 'cas', 'tas'] as const).map((kind): NumberKeyRule => ({
    key: `${kind}_mps`,
    type: 'number',
    presence: 'airspeed',
    field: kind,
    min: 0,
    max: 300,
    unitWords: 'm/s',
    units: UNITS.speed,
    meaning: `${kind === 'ias' ? 'indicated' : kind === 'cas' ? 'calibrated' : 'true'} airspeed, m/s`,
  })),
  {
    key: 'alt_m',
    type: 'number',
    presence: 'required',
    field: 'altM',
    min: -500,
    max: 20_000,
    unitWords: 'm',
    units: UNITS.length,
    meaning: 'pressure altitude, m',
  },
  {
    key: 'bank_deg',
    type: 'number',
    presence: 'attitude',
    field: 'bankDeg',
    min: -180,
    max: 180,
    unitWords: 'deg',
    units: UNITS.angle,
    meaning: 'bank angle, deg',
  },
  {
    key: 'nz',
    type: 'number',
    presence: 'attitude',
    field: 'nz',
    min: -20,
    max: 20,
    unitWords: 'g',
    units: UNITS.load,
    meaning: 'normal load factor, g',
  },
  {
    key: 'oat_c',
    type: 'number',
    presence: 'optional',
    field: 'oatC',
    min: -90,
    max: 70,
    unitWords: '°C',
    units: UNITS.temperature,
    meaning: 'outside air temperature, °C',
  },
  {
    key: 'mass_kg',
    type: 'number',
    presence: 'optional',
    field: 'massKg',
    min: MASS_MIN_KG,
    max: MASS_MAX_KG,
    unitWords: 'kg',
    units: UNITS.mass,
    meaning: "mass, kg (overrides the airframe's)",
  },
  {
    key: 'throttle',
    type: 'number',
    presence: 'optional',
    field: 'throttle',
    min: 0,
    max: 1,
    unitWords: '',
    units: UNITS.fraction,
    meaning: 'throttle, fraction of full throttle (0 idle, 1 full)',
  },
  {
    key: 'simulated',
    type: 'boolean',
    presence: 'optional',
    field: 'simulated',
    units: UNITS.flag,
    meaning: 'true when the frame comes from a simulator',
  },
];

const BY_KEY: ReadonlyMap<string, FrameKeyRule> = new Map(FRAME_KEYS.map((r) => [r.key, r]));

/** The rule of a frame key, or undefined for any other key. */
export function frameKeyRule(key: string): FrameKeyRule | undefined {
  return BY_KEY.get(key);
}

/** The airspeed keys, in table order. */
export const AIRSPEED_KEYS: readonly string[] = FRAME_KEYS.filter((r) => r.presence === 'airspeed').map((r) => r.key);
/** The attitude keys (at least one per frame), in table order. */
export const ATTITUDE_KEYS: readonly string[] = FRAME_KEYS.filter((r) => r.presence === 'attitude').map((r) => r.key);

/** What a key must be, in the words of a rejection ("a number from 0 to 300 m/s"). */
export function ruleWords(key: string): string {
  const rule = BY_KEY.get(key);
  if (rule === undefined) return 'valid';
  if (rule.type === 'boolean') return 'true or false';
  return `a number from ${rule.min} to ${rule.max}${rule.unitWords === '' ? '' : ` ${rule.unitWords}`}`;
}

/** Words for the one-of and at-least-one groups, derived from the table. */
export const AIRSPEED_GROUP_WORDS = `one of ${AIRSPEED_KEYS.join(', ')}`;
export const ATTITUDE_GROUP_WORDS = ATTITUDE_KEYS.join(' or ');

/** How a compiled frame builder reads its input (expressions in the builder's parameters). */
export interface FrameReader {
  /** The builder's parameter names. */
  params: readonly string[];
  airspeedKind: string;
  airspeedMps: string;
  /** The value of a present key (row: the key's row in the table). */
  value(rule: FrameKeyRule, row: number): string;
  /** Whether an optional key is present. */
  present(rule: FrameKeyRule, row: number): string;
}

/**
 * A function that builds a Frame, compiled from the table. Speed: the frame builders are on the hot path of
 * `review` (a million frames a minute of flight), and a loop storing fields by computed name makes V8 build every
 * frame as a dictionary; code with one named store per key builds them all with one shape, as hand-written code
 * would — while the keys still come from the table alone. The field names are checked to be plain identifiers.
 * The keys come in table order, as validation builds them (required keys and the airspeed up to the first optional
 * key in one literal, so that the common shape is made at once).
 */
export function compileFrameBuilder<Args extends unknown[]>(reader: FrameReader): (...args: Args) => Frame {
  const literal: string[] = [];
  const body: string[] = [];
  let inLiteral = true;
  let airspeedDone = false;
  FRAME_KEYS.forEach((rule, row) => {
    if (rule.presence === 'airspeed') {
      if (airspeedDone) return;
      airspeedDone = true;
      const kind = `airspeedKind: ${reader.airspeedKind}`;
      const mps = `airspeedMps: ${reader.airspeedMps}`;
      if (inLiteral) literal.push(kind, mps);
      else body.push(`f.airspeedKind = ${reader.airspeedKind};`, `f.airspeedMps = ${reader.airspeedMps};`);
      return;
    }
    if (!/^[A-Za-z_$][\w$]*$/.test(rule.field)) throw new Error(`frame field ${rule.field} is not an identifier`);
    if (rule.presence === 'required') {
      if (inLiteral) literal.push(`${rule.field}: ${reader.value(rule, row)}`);
      else body.push(`f.${rule.field} = ${reader.value(rule, row)};`);
      return;
    }
    inLiteral = false;
    body.push(`if (${reader.present(rule, row)}) f.${rule.field} = ${reader.value(rule, row)};`);
  });
  const source = `'use strict'; const f = { ${literal.join(', ')} }; ${body.join(' ')} return f;`;
  return new Function(...reader.params, source) as (...args: Args) => Frame;
}

/**
 * compileFrameBuilder for one reused frame: a function that stores every field of the table into `f` (an absent
 * optional key as undefined), so a reader that hands frames on one at a time (the review's packed batches) needs
 * no new object per frame. Same field order as the builder; every field is stored, so the object keeps one shape.
 */
export function compileFrameFiller<Args extends unknown[]>(reader: FrameReader): (f: Frame, ...args: Args) => void {
  const body: string[] = [];
  let airspeedDone = false;
  FRAME_KEYS.forEach((rule, row) => {
    if (rule.presence === 'airspeed') {
      if (airspeedDone) return;
      airspeedDone = true;
      body.push(`f.airspeedKind = ${reader.airspeedKind};`, `f.airspeedMps = ${reader.airspeedMps};`);
      return;
    }
    if (!/^[A-Za-z_$][\w$]*$/.test(rule.field)) throw new Error(`frame field ${rule.field} is not an identifier`);
    if (rule.presence === 'required') body.push(`f.${rule.field} = ${reader.value(rule, row)};`);
    // Two stores, not one of a conditional: V8 would box the number to merge it with undefined, at every frame.
    else
      body.push(
        `if (${reader.present(rule, row)}) f.${rule.field} = ${reader.value(rule, row)}; else f.${rule.field} = undefined;`,
      );
  });
  return new Function('f', ...reader.params, `'use strict'; ${body.join(' ')}`) as (f: Frame, ...args: Args) => void;
}
