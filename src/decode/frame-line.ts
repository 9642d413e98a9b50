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
import { packFrameValues } from './frame-batch.js';

export type LineVerdict = { ok: true; frame: Frame; raw: Record<string, unknown> } | { ok: false; reason: string };

/** A verdict for readers that need only the frame (review): an accepted frame may come without its raw object. */
export type FrameVerdict = { ok: true; frame: Frame; raw?: Record<string, unknown> } | { ok: false; reason: string };

/** Plausibility bounds: values outside are taken as corrupt data, not as flight conditions. */
export const FRAME_BOUNDS = {
  // |t_s| up to about 31 years: room for any clock epoch a sender counts in seconds, while a value such as 1e308
  // (which would make every later frame "time not increasing") is refused.
  timeMaxAbsS: 1e9,
  // Subsonic: the airspeed relations the tool uses (incompressible-flow corrections) hold well below Mach 1, and a
  // small UAV never comes near 300 m/s.
  airspeedMaxMps: 300,
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
  // JSON.parse turns an overflowing literal such as 1e999 into ±Infinity, which JSON.stringify would print as null.
  else if (typeof value === 'number' && !Number.isFinite(value)) text = `${value} (number too large)`;
  else text = JSON.stringify(value) ?? String(value);
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}

/** What each key must be, in the words of the rejection reason. */
const RULE_TEXT: Readonly<Record<string, string>> = {
  t_s: `a number from -${FRAME_BOUNDS.timeMaxAbsS} to ${FRAME_BOUNDS.timeMaxAbsS} s`,
  ias_mps: 'a finite number ≥ 0',
  cas_mps: 'a finite number ≥ 0',
  tas_mps: 'a finite number ≥ 0',
  alt_m: `a number from ${FRAME_BOUNDS.altMinM} to ${FRAME_BOUNDS.altMaxM} m`,
  bank_deg: `a number from -${FRAME_BOUNDS.bankMaxAbsDeg} to ${FRAME_BOUNDS.bankMaxAbsDeg} deg`,
  nz: `a number from -${FRAME_BOUNDS.nzMaxAbs} to ${FRAME_BOUNDS.nzMaxAbs} g`,
  oat_c: `a number from ${FRAME_BOUNDS.oatMinC} to ${FRAME_BOUNDS.oatMaxC} °C`,
  mass_kg: `a number above 0 and up to ${FRAME_BOUNDS.massMaxKg} kg`,
};

/** An airspeed above the bound gets this rule in its reason (a wrong type or a negative one gets RULE_TEXT's). */
const AIRSPEED_RANGE_TEXT = `a number from 0 to ${FRAME_BOUNDS.airspeedMaxMps} m/s`;

const speed = z.number().min(0).max(FRAME_BOUNDS.airspeedMaxMps).nullish();
/**
 * The frame keys (zod numbers are finite: NaN and ±Infinity fail). Optional keys may be null (many senders write
 * null for a missing sensor); other keys pass through untouched.
 */
export const FrameSchema = z.looseObject({
  t_s: z.number().min(-FRAME_BOUNDS.timeMaxAbsS).max(FRAME_BOUNDS.timeMaxAbsS),
  ias_mps: speed,
  cas_mps: speed,
  tas_mps: speed,
  alt_m: z.number().min(FRAME_BOUNDS.altMinM).max(FRAME_BOUNDS.altMaxM),
  bank_deg: z.number().min(-FRAME_BOUNDS.bankMaxAbsDeg).max(FRAME_BOUNDS.bankMaxAbsDeg).nullish(),
  nz: z.number().min(-FRAME_BOUNDS.nzMaxAbs).max(FRAME_BOUNDS.nzMaxAbs).nullish(),
  oat_c: z.number().min(FRAME_BOUNDS.oatMinC).max(FRAME_BOUNDS.oatMaxC).nullish(),
  mass_kg: z.number().positive().max(FRAME_BOUNDS.massMaxKg).nullish(),
});

/**
 * The frame keys' values as the fast check sees them, one slot per key in FRAME_KEY_NAMES order: a kind
 * (absent or null, a number, anything else) and, for a number, its value. Filled from an object
 * (acceptFrameFast) or straight from the bytes of a line (scanFlatFrameBytes); checked by frameFromSlots.
 */
const FRAME_KEY_NAMES = [
  't_s',
  'ias_mps',
  'cas_mps',
  'tas_mps',
  'alt_m',
  'bank_deg',
  'nz',
  'oat_c',
  'mass_kg',
] as const;
const SLOT_T = 0;
const SLOT_IAS = 1;
const SLOT_CAS = 2;
const SLOT_TAS = 3;
const SLOT_ALT = 4;
const SLOT_BANK = 5;
const SLOT_NZ = 6;
const SLOT_OAT = 7;
const SLOT_MASS = 8;
const KIND_NULLISH = 0;
const KIND_NUMBER = 1;
const KIND_OTHER = 2;
const slotKinds = new Uint8Array(FRAME_KEY_NAMES.length);
const slotNumbers = new Float64Array(FRAME_KEY_NAMES.length);

/** A slot holding a finite number (what a zod number accepts). */
function finiteAt(slot: number): boolean {
  const v = slotNumbers[slot]!;
  return slotKinds[slot] === KIND_NUMBER && v - v === 0;
}

/** An optional key: absent or null, or a finite number from min to max. */
function optionalInRange(slot: number, min: number, max: number): boolean {
  if (slotKinds[slot] === KIND_NULLISH) return true;
  const v = slotNumbers[slot]!;
  return finiteAt(slot) && v >= min && v <= max;
}

/** The airspeed slot of the slots last accepted by slotsAccepted. */
let acceptedSpeedSlot = SLOT_TAS;

/**
 * Whether the slots pass FrameSchema with exactly one airspeed and a bank or nz (then acceptedSpeedSlot names the
 * airspeed); false for anything else (the caller then lets the schema name the reason).
 */
function slotsAccepted(): boolean {
  if (!finiteAt(SLOT_T) || !finiteAt(SLOT_ALT)) return false;
  const tS = slotNumbers[SLOT_T]!;
  if (!(tS >= -FRAME_BOUNDS.timeMaxAbsS && tS <= FRAME_BOUNDS.timeMaxAbsS)) return false;
  const altM = slotNumbers[SLOT_ALT]!;
  if (!(altM >= FRAME_BOUNDS.altMinM && altM <= FRAME_BOUNDS.altMaxM)) return false;
  const hasIas = slotKinds[SLOT_IAS] !== KIND_NULLISH;
  const hasCas = slotKinds[SLOT_CAS] !== KIND_NULLISH;
  const hasTas = slotKinds[SLOT_TAS] !== KIND_NULLISH;
  if ((hasIas ? 1 : 0) + (hasCas ? 1 : 0) + (hasTas ? 1 : 0) !== 1) return false;
  const speedSlot = hasTas ? SLOT_TAS : hasCas ? SLOT_CAS : SLOT_IAS;
  const speedMps = slotNumbers[speedSlot]!;
  if (!finiteAt(speedSlot) || !(speedMps >= 0 && speedMps <= FRAME_BOUNDS.airspeedMaxMps)) return false;
  if (slotKinds[SLOT_BANK] === KIND_NULLISH && slotKinds[SLOT_NZ] === KIND_NULLISH) return false;
  if (
    !optionalInRange(SLOT_BANK, -FRAME_BOUNDS.bankMaxAbsDeg, FRAME_BOUNDS.bankMaxAbsDeg) ||
    !optionalInRange(SLOT_NZ, -FRAME_BOUNDS.nzMaxAbs, FRAME_BOUNDS.nzMaxAbs) ||
    !optionalInRange(SLOT_OAT, FRAME_BOUNDS.oatMinC, FRAME_BOUNDS.oatMaxC) ||
    !(
      slotKinds[SLOT_MASS] === KIND_NULLISH ||
      (finiteAt(SLOT_MASS) && slotNumbers[SLOT_MASS]! > 0 && slotNumbers[SLOT_MASS]! <= FRAME_BOUNDS.massMaxKg)
    )
  ) {
    return false;
  }
  acceptedSpeedSlot = speedSlot;
  return true;
}

function airspeedKindOfSlot(slot: number): AirspeedKind {
  return slot === SLOT_TAS ? 'tas' : slot === SLOT_CAS ? 'cas' : 'ias';
}

/** The frame of the slots when slotsAccepted, else null. */
function frameFromSlots(): Frame | null {
  if (!slotsAccepted()) return null;
  const frame: Frame = {
    tS: slotNumbers[SLOT_T]!,
    airspeedKind: airspeedKindOfSlot(acceptedSpeedSlot),
    airspeedMps: slotNumbers[acceptedSpeedSlot]!,
    altM: slotNumbers[SLOT_ALT]!,
  };
  if (slotKinds[SLOT_BANK] !== KIND_NULLISH) frame.bankDeg = slotNumbers[SLOT_BANK]!;
  if (slotKinds[SLOT_NZ] !== KIND_NULLISH) frame.nz = slotNumbers[SLOT_NZ]!;
  if (slotKinds[SLOT_OAT] !== KIND_NULLISH) frame.oatC = slotNumbers[SLOT_OAT]!;
  if (slotKinds[SLOT_MASS] !== KIND_NULLISH) frame.massKg = slotNumbers[SLOT_MASS]!;
  return frame;
}

/** A slot's number, or NaN when the key is absent or null. */
function slotOrNaN(slot: number): number {
  return slotKinds[slot] === KIND_NULLISH ? NaN : slotNumbers[slot]!;
}

function setSlot(slot: number, value: unknown): void {
  if (value === undefined || value === null) slotKinds[slot] = KIND_NULLISH;
  else if (typeof value === 'number') {
    slotKinds[slot] = KIND_NUMBER;
    slotNumbers[slot] = value;
  } else slotKinds[slot] = KIND_OTHER;
}

/**
 * The frame of an object that passes FrameSchema with exactly one airspeed and a bank or nz, or null for anything
 * else (the caller then lets the schema name the reason). Same verdicts as the schema path, without its cost.
 */
export function acceptFrameFast(raw: Record<string, unknown>): Frame | null {
  for (let k = 0; k < FRAME_KEY_NAMES.length; k++) setSlot(k, raw[FRAME_KEY_NAMES[k]!]);
  return frameFromSlots();
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
    if (
      Number.isFinite(value) &&
      (value as number) > FRAME_BOUNDS.airspeedMaxMps &&
      AIRSPEED_KEYS.some(([k]) => k === key)
    ) {
      return { ok: false, reason: `${key} must be ${AIRSPEED_RANGE_TEXT} (got ${show(value)})` };
    }
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
    if (/(?<![\w"])(NaN|-?Infinity)(?![\w"])/.test(text))
      return { ok: false, reason: 'NaN or Infinity is not a finite number' };
    return {
      ok: false,
      reason: text.startsWith('{') && !text.endsWith('}') ? 'invalid JSON (truncated line?)' : 'invalid JSON',
    };
  }
  return validateFrameObject(parsed);
}

/**
 * The verdict of parseAsciiFrameLine without the raw object, for a line given also as bytes: `bytes` from `start`
 * to `end` are the line's text (plain ASCII, no DEL; the line ending removed, or a CR left at the end). A flat
 * object of plain values is read straight from the bytes (scanFlatFrameBytes) and, when it is an accepted frame,
 * needs neither JSON.parse nor the schema; any other line takes parseAsciiFrameLine. Same verdict either way.
 */
export function judgeAsciiFrameBytes(bytes: Uint8Array, start: number, end: number, text: string): FrameVerdict {
  const last = bytes[end - 1] === CR ? end - 2 : end - 1;
  if (bytes[start] === OPEN_BRACE && bytes[last] === CLOSE_BRACE && scanFlatFrameBytes(bytes, start, last + 1)) {
    const frame = frameFromSlots();
    if (frame !== null) return { ok: true, frame };
  }
  return parseAsciiFrameLine(text);
}

/**
 * judgeAsciiFrameBytes without building anything: true when the line is a flat frame object read from the bytes
 * and accepted — then acceptedFrameTime() and packAcceptedFrame() give it; false means "judge it the usual way"
 * (judgeAsciiFrameBytes or parseAsciiFrameLine then give the verdict, a rejection or the same frame).
 */
export function acceptAsciiFrameBytes(bytes: Uint8Array, start: number, end: number): boolean {
  const last = bytes[end - 1] === CR ? end - 2 : end - 1;
  return (
    bytes[start] === OPEN_BRACE &&
    bytes[last] === CLOSE_BRACE &&
    scanFlatFrameBytes(bytes, start, last + 1) &&
    slotsAccepted()
  );
}

/** t_s of the frame last accepted by acceptAsciiFrameBytes. */
export function acceptedFrameTime(): number {
  return slotNumbers[SLOT_T]!;
}

/** Packs the frame last accepted by acceptAsciiFrameBytes at slot `index` (frame-batch.ts), as packFrame would. */
export function packAcceptedFrame(target: Float64Array, index: number, newSegment: boolean): void {
  packFrameValues(
    target,
    index,
    slotNumbers[SLOT_T]!,
    airspeedKindOfSlot(acceptedSpeedSlot),
    slotNumbers[acceptedSpeedSlot]!,
    slotNumbers[SLOT_ALT]!,
    slotOrNaN(SLOT_BANK),
    slotOrNaN(SLOT_NZ),
    slotOrNaN(SLOT_OAT),
    slotOrNaN(SLOT_MASS),
    newSegment,
  );
}

const SPACE = 0x20;
const TAB = 0x09;
const LF = 0x0a;
const CR = 0x0d;
const QUOTE = 0x22;
const COMMA = 0x2c;
const MINUS = 0x2d;
const DOT = 0x2e;
const DIGIT_0 = 0x30;
const DIGIT_9 = 0x39;
const COLON = 0x3a;
const OPEN_BRACE = 0x7b;
const CLOSE_BRACE = 0x7d;

/** Index of the first byte at or after i (before end) that is not JSON whitespace. */
function skipJsonSpace(bytes: Uint8Array, i: number, end: number): number {
  while (i < end) {
    const c = bytes[i]!;
    if (c !== SPACE && c !== TAB && c !== LF && c !== CR) return i;
    i++;
  }
  return i;
}

function isDigitAt(bytes: Uint8Array, i: number, end: number): boolean {
  if (i >= end) return false;
  const c = bytes[i]!;
  return c >= DIGIT_0 && c <= DIGIT_9;
}

/** Powers of ten held exactly by a double (10^0 … 10^22). */
const EXACT_POWERS_OF_TEN = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));
/** Decimal digits of an integer that a double always holds exactly (< 2^53). */
const EXACT_DIGITS = 15;

/**
 * Reads the JSON number (RFC 8259 grammar) starting at `start` into slotNumbers[slot] (when slot ≥ 0) and returns
 * where it ends, or -1 when there is none. The value is the one JSON.parse gives: with at most 15 significant
 * digits and a power of ten up to 22, the digits and the power are exact doubles and one IEEE division or product
 * rounds correctly (the classic exact case of decimal-to-binary conversion); other numbers go through Number(),
 * which rounds correctly too.
 */
function scanJsonNumber(bytes: Uint8Array, start: number, end: number, slot: number): number {
  let i = start;
  const negative = bytes[i] === MINUS;
  if (negative) i++;
  let mantissa = 0;
  let digits = 0;
  if (!isDigitAt(bytes, i, end)) return -1;
  if (bytes[i] === DIGIT_0) i++;
  else {
    for (; isDigitAt(bytes, i, end); i++) {
      mantissa = mantissa * 10 + (bytes[i]! - DIGIT_0);
      digits++;
    }
  }
  let fractionDigits = 0;
  if (i < end && bytes[i] === DOT) {
    const fractionStart = ++i;
    for (; isDigitAt(bytes, i, end); i++) {
      mantissa = mantissa * 10 + (bytes[i]! - DIGIT_0);
      if (mantissa !== 0) digits++;
    }
    fractionDigits = i - fractionStart;
    if (fractionDigits === 0) return -1;
  }
  let exponent = 0;
  let exactExponent = true;
  if (i < end && (bytes[i]! | 0x20) === 0x65 /* e or E */) {
    i++;
    const sign = i < end ? bytes[i] : undefined;
    if (sign === 0x2b || sign === MINUS) i++;
    const exponentStart = i;
    for (; isDigitAt(bytes, i, end); i++) exponent = exponent * 10 + (bytes[i]! - DIGIT_0);
    if (i === exponentStart) return -1;
    if (i - exponentStart > 3) exactExponent = false;
    if (sign === MINUS) exponent = -exponent;
  }
  if (slot < 0) return i;
  const power = exponent - fractionDigits;
  if (!exactExponent || digits > EXACT_DIGITS || power > 22 || power < -22) {
    slotNumbers[slot] = Number(Buffer.from(bytes.buffer, bytes.byteOffset + start, i - start).toString('latin1'));
  } else {
    const magnitude = power < 0 ? mantissa / EXACT_POWERS_OF_TEN[-power]! : mantissa * EXACT_POWERS_OF_TEN[power]!;
    slotNumbers[slot] = negative ? -magnitude : magnitude;
  }
  return i;
}

/** End of the JSON string whose opening quote is at i (just after its closing quote), or -1 for escapes or controls. */
function plainJsonStringEnd(bytes: Uint8Array, i: number, end: number): number {
  for (let j = i + 1; j < end; j++) {
    const c = bytes[j]!;
    if (c === QUOTE) return j + 1;
    if (c === 0x5c /* backslash */ || c < SPACE) return -1;
  }
  return -1;
}

const FRAME_KEY_BYTES = FRAME_KEY_NAMES.map((name) => Buffer.from(name, 'latin1'));

/** Which frame key the bytes from start (length bytes) name: its index in FRAME_KEY_NAMES, or -1. */
function frameKeyAt(bytes: Uint8Array, start: number, length: number): number {
  // The candidate from the length and the first letter, then a check of every byte.
  const first = bytes[start];
  let k = -1;
  if (length === 2) k = 6;
  else if (length === 3) k = 0;
  else if (length === 5) k = first === 0x61 /* a */ ? 4 : 7;
  else if (length === 7) k = first === 0x69 /* i */ ? 1 : first === 0x63 /* c */ ? 2 : first === 0x74 /* t */ ? 3 : 8;
  else if (length === 8) k = 5;
  if (k < 0) return -1;
  const name = FRAME_KEY_BYTES[k]!;
  if (name.length !== length) return -1;
  for (let j = 0; j < length; j++) if (bytes[start + j] !== name[j]) return -1;
  return k;
}

function matchesWord(bytes: Uint8Array, i: number, end: number, word: string): boolean {
  if (i + word.length > end) return false;
  for (let j = 0; j < word.length; j++) if (bytes[i + j] !== word.charCodeAt(j)) return false;
  return true;
}

/**
 * Reads ASCII JSON text bytes[start, end) that is exactly one flat object of plain values (numbers, null, true,
 * false, strings without escapes) into the frame-key slots and returns true; false for any other text — which
 * then takes the JSON.parse path. For the texts it reads, numbers and nulls are those JSON.parse gives, a later
 * duplicate key winning as there; strings and booleans count as "anything else".
 */
function scanFlatFrameBytes(bytes: Uint8Array, start: number, end: number): boolean {
  if (bytes[start] !== OPEN_BRACE) return false;
  slotKinds.fill(KIND_NULLISH);
  let i = skipJsonSpace(bytes, start + 1, end);
  if (i < end && bytes[i] === CLOSE_BRACE) return i + 1 === end;
  for (;;) {
    if (i >= end || bytes[i] !== QUOTE) return false;
    const keyEnd = plainJsonStringEnd(bytes, i, end);
    if (keyEnd < 0) return false;
    const slot = frameKeyAt(bytes, i + 1, keyEnd - i - 2);
    i = skipJsonSpace(bytes, keyEnd, end);
    if (i >= end || bytes[i] !== COLON) return false;
    i = skipJsonSpace(bytes, i + 1, end);
    if (i >= end) return false;
    const c = bytes[i];
    let kind: number;
    if (c === QUOTE) {
      const valueEnd = plainJsonStringEnd(bytes, i, end);
      if (valueEnd < 0) return false;
      kind = KIND_OTHER;
      i = valueEnd;
    } else if (c === 0x6e /* n */) {
      if (!matchesWord(bytes, i, end, 'null')) return false;
      kind = KIND_NULLISH;
      i += 4;
    } else if (c === 0x74 /* t */) {
      if (!matchesWord(bytes, i, end, 'true')) return false;
      kind = KIND_OTHER;
      i += 4;
    } else if (c === 0x66 /* f */) {
      if (!matchesWord(bytes, i, end, 'false')) return false;
      kind = KIND_OTHER;
      i += 5;
    } else {
      i = scanJsonNumber(bytes, i, end, slot);
      if (i < 0) return false;
      kind = KIND_NUMBER;
    }
    if (slot >= 0) slotKinds[slot] = kind;
    i = skipJsonSpace(bytes, i, end);
    if (i >= end) return false;
    const next = bytes[i];
    if (next === COMMA) {
      i = skipJsonSpace(bytes, i + 1, end);
      continue;
    }
    return next === CLOSE_BRACE && i + 1 === end;
  }
}
