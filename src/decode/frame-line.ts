/**
 * Validation of one telemetry line (NDJSON object text) into a Frame, with a zod schema. Pure and stateless: the time-order rule
 * lives in time-gate.ts and is applied by the stateful decoder.
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

const BOM = '\uFEFF';
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

/** Validate an already-parsed object (a JSON line or a mapped CSV row). */
export function validateFrameObject(input: unknown): LineVerdict {
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
  const text = (line.startsWith(BOM) ? line.slice(1) : line).trim();
  if (text === '') return { ok: false, reason: 'empty line' };
  if (CONTROL_BYTES.test(text)) return { ok: false, reason: 'binary noise (control or invalid bytes)' };
  let parsed: unknown;
  try {
    parsed = JSON.parse(text);
  } catch {
    if (/(?<![\w"])(NaN|-?Infinity)(?![\w"])/.test(text)) return { ok: false, reason: 'NaN or Infinity is not a finite number' };
    return { ok: false, reason: text.startsWith('{') && !text.endsWith('}') ? 'invalid JSON (truncated line?)' : 'invalid JSON' };
  }
  return validateFrameObject(parsed);
}
