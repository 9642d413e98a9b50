/**
 * Validation of one telemetry line (NDJSON object text) into a Frame. Pure and stateless: the time-order rule
 * lives in time-gate.ts and is applied by the stateful decoder.
 *
 * Reasons are short, stable and human: they are shown per line, counted in link health and listed by review.
 */
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

type Check = { ok: true; value: number | undefined } | { ok: false; reason: string };

interface NumberRule {
  required: boolean;
  min?: number;
  max?: number;
  /** Human form of the rule, e.g. "a finite number ≥ 0". */
  rule: string;
}

function checkNumber(obj: Record<string, unknown>, key: string, r: NumberRule): Check {
  const value = obj[key];
  // null is taken as "not sent" for optional keys: many senders write null for a missing sensor.
  if (value === undefined || (value === null && !r.required)) {
    return r.required ? { ok: false, reason: `${key} is required` } : { ok: true, value: undefined };
  }
  if (typeof value !== 'number' || !Number.isFinite(value) || (r.min !== undefined && value < r.min) || (r.max !== undefined && value > r.max)) {
    return { ok: false, reason: `${key} must be ${r.rule} (got ${show(value)})` };
  }
  return { ok: true, value };
}

/** Validate an already-parsed object (a JSON line or a mapped CSV row). */
export function validateFrameObject(input: unknown): LineVerdict {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) {
    return { ok: false, reason: `not a JSON object (got ${Array.isArray(input) ? 'an array' : show(input)})` };
  }
  const raw = input as Record<string, unknown>;
  const t = checkNumber(raw, 't_s', { required: true, rule: 'a finite number' });
  if (!t.ok) return t;

  const present = AIRSPEED_KEYS.filter(([key]) => raw[key] !== undefined && raw[key] !== null);
  if (present.length === 0) return { ok: false, reason: 'an airspeed is required (one of ias_mps, cas_mps, tas_mps)' };
  if (present.length > 1) {
    return { ok: false, reason: `exactly one airspeed key is allowed (got ${present.map(([k]) => k).join(' and ')})` };
  }
  const [speedKey, airspeedKind] = present[0]!;
  const speed = checkNumber(raw, speedKey, { required: true, min: 0, rule: 'a finite number ≥ 0' });
  if (!speed.ok) return speed;

  const alt = checkNumber(raw, 'alt_m', {
    required: true,
    min: FRAME_BOUNDS.altMinM,
    max: FRAME_BOUNDS.altMaxM,
    rule: `a number from ${FRAME_BOUNDS.altMinM} to ${FRAME_BOUNDS.altMaxM} m`,
  });
  if (!alt.ok) return alt;
  const bank = checkNumber(raw, 'bank_deg', {
    required: false,
    min: -FRAME_BOUNDS.bankMaxAbsDeg,
    max: FRAME_BOUNDS.bankMaxAbsDeg,
    rule: `a number from -${FRAME_BOUNDS.bankMaxAbsDeg} to ${FRAME_BOUNDS.bankMaxAbsDeg} deg`,
  });
  if (!bank.ok) return bank;
  const nz = checkNumber(raw, 'nz', {
    required: false,
    min: -FRAME_BOUNDS.nzMaxAbs,
    max: FRAME_BOUNDS.nzMaxAbs,
    rule: `a number from -${FRAME_BOUNDS.nzMaxAbs} to ${FRAME_BOUNDS.nzMaxAbs} g`,
  });
  if (!nz.ok) return nz;
  if (bank.value === undefined && nz.value === undefined) return { ok: false, reason: 'bank_deg or nz is required' };
  const oat = checkNumber(raw, 'oat_c', {
    required: false,
    min: FRAME_BOUNDS.oatMinC,
    max: FRAME_BOUNDS.oatMaxC,
    rule: `a number from ${FRAME_BOUNDS.oatMinC} to ${FRAME_BOUNDS.oatMaxC} °C`,
  });
  if (!oat.ok) return oat;
  const mass = checkNumber(raw, 'mass_kg', { required: false, min: Number.MIN_VALUE, max: FRAME_BOUNDS.massMaxKg, rule: `a number above 0 and up to ${FRAME_BOUNDS.massMaxKg} kg` });
  if (!mass.ok) return mass;

  const frame: Frame = { tS: t.value!, airspeedKind, airspeedMps: speed.value!, altM: alt.value! };
  if (bank.value !== undefined) frame.bankDeg = bank.value;
  if (nz.value !== undefined) frame.nz = nz.value;
  if (oat.value !== undefined) frame.oatC = oat.value;
  if (mass.value !== undefined) frame.massKg = mass.value;
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
