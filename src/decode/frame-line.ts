/**
 * Validation of one telemetry line (NDJSON object text) into a Frame, with a zod schema. Pure and stateless: the time-order rule
 * lives in time-gate.ts and is applied by the stateful decoder.
 *
 * Speed: a hand-written check (`acceptFrameFast`) passes the frames the schema accepts without building zod's result;
 * anything it does not pass goes through the schema, which names the reason. Tests hold the two to the same verdicts.
 *
 * Reasons are short, stable and human: they are shown per line, counted in link health and listed by review.
 */
import { z } from 'zod';
import type { AirspeedKind, Frame } from '../core/frame.js';

export type LineVerdict =
  | { ok: true; frame: Frame; raw: Record<string, unknown> }
  | { ok: false; reason: string };

/** Plausibility bounds: values outside are taken as corrupt data, not as flight conditions. */
export const FRAME_BOUNDS = {
  altMinM: -500,
  altMaxM: 20_000,
  bankMaxAbsDeg: 180,
  nzMaxAbs: 20,
  oatMinC: -90,
  oatMaxC: 70,
  massMaxKg: 10_000,
} as const;

const AIRSPEED_KEYS: ReadonlyArray<readonly [string, AirspeedKind]> = [
  ['ias_mps', 'ias'],
  ['cas_mps', 'cas'],
  ['tas_mps', 'tas'],
];

// Control characters other than tab, CR and LF mean line noise rather than a malformed frame.
// eslint-disable-next-line no-control-regex
const CONTROL_BYTES = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F\uFFFD]/;

function show(value: unknown): string {
  let text: string;
  if (typeof value === 'string') text = JSON.stringify(value);
  else if (value === undefined) text = 'nothing';
  else text = JSON.stringify(value) ?? String(value);
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}

/** What each key must be, in the words of the rejection reason. */
const RULE_TEXT: Readonly<Record<string, string>> = {
  t_s: 'a finite number',
  ias_mps: 'a finite number ≥ 0',
  cas_mps: 'a finite number ≥ 0',
  tas_mps: 'a finite number ≥ 0',
  alt_m: `a number from ${FRAME_BOUNDS.altMinM} to ${FRAME_BOUNDS.altMaxM} m`,
  bank_deg: `a number from -${FRAME_BOUNDS.bankMaxAbsDeg} to ${FRAME_BOUNDS.bankMaxAbsDeg} deg`,
  nz: `a number from -${FRAME_BOUNDS.nzMaxAbs} to ${FRAME_BOUNDS.nzMaxAbs} g`,
  oat_c: `a number from ${FRAME_BOUNDS.oatMinC} to ${FRAME_BOUNDS.oatMaxC} °C`,
  mass_kg: `a number above 0 and up to ${FRAME_BOUNDS.massMaxKg} kg`,
};

const speed = z.number().min(0).nullish();
/**
 * The frame keys (zod numbers are finite: NaN and ±Infinity fail). Optional keys may be null (many senders write
 * null for a missing sensor); other keys pass through untouched.
 */
export const FrameSchema = z.looseObject({
  t_s: z.number(),
  ias_mps: speed,
  cas_mps: speed,
  tas_mps: speed,
  alt_m: z.number().min(FRAME_BOUNDS.altMinM).max(FRAME_BOUNDS.altMaxM),
  bank_deg: z.number().min(-FRAME_BOUNDS.bankMaxAbsDeg).max(FRAME_BOUNDS.bankMaxAbsDeg).nullish(),
  nz: z.number().min(-FRAME_BOUNDS.nzMaxAbs).max(FRAME_BOUNDS.nzMaxAbs).nullish(),
  oat_c: z.number().min(FRAME_BOUNDS.oatMinC).max(FRAME_BOUNDS.oatMaxC).nullish(),
  mass_kg: z.number().positive().max(FRAME_BOUNDS.massMaxKg).nullish(),
});

/** A finite number (what a zod number accepts). */
function isFiniteNumber(value: unknown): value is number {
  return typeof value === 'number' && value - value === 0;
}

/** An optional key: absent or null, or a finite number from min to max. */
function optionalInRange(value: unknown, min: number, max: number): boolean {
  return value == null || (isFiniteNumber(value) && value >= min && value <= max);
}

/**
 * The frame of an object that passes FrameSchema with exactly one airspeed and a bank or nz, or null for anything
 * else (the caller then lets the schema name the reason). Same verdicts as the schema path, without its cost.
 */
export function acceptFrameFast(raw: Record<string, unknown>): Frame | null {
  const tS = raw['t_s'];
  const ias = raw['ias_mps'];
  const cas = raw['cas_mps'];
  const tas = raw['tas_mps'];
  const altM = raw['alt_m'];
  const bankDeg = raw['bank_deg'];
  const nz = raw['nz'];
  const oatC = raw['oat_c'];
  const massKg = raw['mass_kg'];
  if (!isFiniteNumber(tS) || !isFiniteNumber(altM) || !(altM >= FRAME_BOUNDS.altMinM && altM <= FRAME_BOUNDS.altMaxM)) return null;
  let airspeedKind: AirspeedKind;
  let airspeedMps: unknown;
  if (tas != null) {
    if (ias != null || cas != null) return null;
    airspeedKind = 'tas';
    airspeedMps = tas;
  } else if (cas != null) {
    if (ias != null) return null;
    airspeedKind = 'cas';
    airspeedMps = cas;
  } else if (ias != null) {
    airspeedKind = 'ias';
    airspeedMps = ias;
  } else return null;
  if (!isFiniteNumber(airspeedMps) || !(airspeedMps >= 0)) return null;
  if (bankDeg == null && nz == null) return null;
  if (
    !optionalInRange(bankDeg, -FRAME_BOUNDS.bankMaxAbsDeg, FRAME_BOUNDS.bankMaxAbsDeg) ||
    !optionalInRange(nz, -FRAME_BOUNDS.nzMaxAbs, FRAME_BOUNDS.nzMaxAbs) ||
    !optionalInRange(oatC, FRAME_BOUNDS.oatMinC, FRAME_BOUNDS.oatMaxC) ||
    !(massKg == null || (isFiniteNumber(massKg) && massKg > 0 && massKg <= FRAME_BOUNDS.massMaxKg))
  ) {
    return null;
  }
  const frame: Frame = { tS, airspeedKind, airspeedMps, altM };
  if (bankDeg != null) frame.bankDeg = bankDeg as number;
  if (nz != null) frame.nz = nz as number;
  if (oatC != null) frame.oatC = oatC as number;
  if (massKg != null) frame.massKg = massKg as number;
  return frame;
}

/** Validate an already-parsed object (a JSON line or a mapped CSV row). */
export function validateFrameObject(input: unknown): LineVerdict {
  if (input !== null && typeof input === 'object' && !Array.isArray(input)) {
    const frame = acceptFrameFast(input as Record<string, unknown>);
    if (frame !== null) return { ok: true, frame, raw: input as Record<string, unknown> };
  }
  return validateWithSchema(input);
}

/** The schema path: the verdict and, for a rejection, the reason naming the first problem. */
export function validateWithSchema(input: unknown): LineVerdict {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) {
    return { ok: false, reason: `not a JSON object (got ${Array.isArray(input) ? 'an array' : show(input)})` };
  }
  const raw = input as Record<string, unknown>;
  const result = FrameSchema.safeParse(raw);
  if (!result.success) {
    // One reason per line: the first problem, in the key order of the schema.
    const key = String(result.error.issues[0]?.path[0] ?? '');
    const value = raw[key];
    if (value === undefined) return { ok: false, reason: `${key} is required` };
    return { ok: false, reason: `${key} must be ${RULE_TEXT[key] ?? 'valid'} (got ${show(value)})` };
  }
  const f = result.data;
  const present = AIRSPEED_KEYS.filter(([key]) => f[key as 'tas_mps'] != null);
  if (present.length === 0) return { ok: false, reason: 'an airspeed is required (one of ias_mps, cas_mps, tas_mps)' };
  if (present.length > 1) {
    return { ok: false, reason: `exactly one airspeed key is allowed (got ${present.map(([k]) => k).join(' and ')})` };
  }
  if (f.bank_deg == null && f.nz == null) return { ok: false, reason: 'bank_deg or nz is required' };
  const [speedKey, airspeedKind] = present[0]!;
  const frame: Frame = { tS: f.t_s, airspeedKind, airspeedMps: f[speedKey as 'tas_mps']!, altM: f.alt_m };
  if (f.bank_deg != null) frame.bankDeg = f.bank_deg;
  if (f.nz != null) frame.nz = f.nz;
  if (f.oat_c != null) frame.oatC = f.oat_c;
  if (f.mass_kg != null) frame.massKg = f.mass_kg;
  return { ok: true, frame, raw };
}

/** Validate one line of text (without its newline). A leading UTF-8 BOM and surrounding whitespace (CR) are ignored. */
export function parseFrameLine(line: string): LineVerdict {
  return judgeLineText(line, true);
}

/**
 * parseFrameLine for a line known to hold neither U+007F nor U+FFFD (a line of plain ASCII, say): the same verdict,
 * with the control-byte test only for a line that is not valid JSON. The other control characters cannot be in
 * valid JSON text (JSON allows no raw U+0000–U+001F but tab, CR and LF), so they make JSON.parse fail anyway.
 */
export function parseAsciiFrameLine(line: string): LineVerdict {
  return judgeLineText(line, false);
}

const noise = (): LineVerdict => ({ ok: false, reason: 'binary noise (control or invalid bytes)' });

function judgeLineText(line: string, mayHoldDelOrReplacement: boolean): LineVerdict {
  const text = (line.charCodeAt(0) === 0xfeff ? line.slice(1) : line).trim();
  if (text === '') return { ok: false, reason: 'empty line' };
  if (mayHoldDelOrReplacement && CONTROL_BYTES.test(text)) return noise();
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    if (!mayHoldDelOrReplacement && CONTROL_BYTES.test(text)) return noise();
    if (/(?<![\w"])(NaN|-?Infinity)(?![\w"])/.test(text)) return { ok: false, reason: 'NaN or Infinity is not a finite number' };
    return { ok: false, reason: text.startsWith('{') && !text.endsWith('}') ? 'invalid JSON (truncated line?)' : 'invalid JSON' };
  }
  return validateFrameObject(parsed);
}
