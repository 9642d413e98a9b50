/**
 * Validation of one telemetry line (NDJSON object text) into a Frame. Pure and stateless: the time-order rule lives
 * in time-gate.ts and is applied by the stateful decoder. What a frame may hold is the frame-key table
 * (frame-keys.ts); the zod schema and the fast checks below are both derived from it.
 *
 * Speed: a table-driven check (`acceptFrameFast`, and `judgeAsciiFrameBytes` straight from a line's bytes) passes
 * the frames the schema accepts without building zod's result; anything it does not pass goes through the schema,
 * which names the reason. Tests hold the two to the same verdicts, key by key.
 *
 * A rejection is data with a stable code (rejections.ts, where its words are made): shown per line, counted in link
 * health and listed by review.
 */
import * as z from 'zod';
import type { AirspeedKind, Frame } from '../core/frame.js';
import { builtOnFirstUse } from '../core/validation.js';
import { AIRSPEED_KINDS, FRAME_SLOTS, PACKED_AIRSPEED, PACKED_AIRSPEED_KIND, PACKED_KEYS } from './frame-batch.js';
import {
  AIRSPEED_KEYS,
  ATTITUDE_KEYS,
  compileFrameBuilder,
  FRAME_KEYS,
  frameKeyRule,
  type FrameKeyRule,
} from './frame-keys.js';
import {
  BINARY_NOISE,
  EMPTY_LINE,
  INVALID_JSON,
  NO_AIRSPEED,
  NO_ATTITUDE,
  NOT_FINITE_JSON,
  rejected,
  shownValue,
  TRUNCATED_JSON,
  type Rejected,
} from './rejections.js';

export type LineVerdict = { ok: true; frame: Frame; raw: Record<string, unknown> } | Rejected;

/** A verdict for readers that need only the frame (review): an accepted frame may come without its raw object. */
export type FrameVerdict = { ok: true; frame: Frame; raw?: Record<string, unknown> } | Rejected;

// Control characters other than tab, CR and LF mean line noise rather than a malformed frame.
// eslint-disable-next-line no-control-regex
const CONTROL_BYTES = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F\uFFFD]/;

function keySchema(rule: FrameKeyRule): z.ZodType {
  if (rule.type === 'boolean') return z.boolean().nullish();
  // zod numbers are finite: NaN and ±Infinity fail.
  const n = z.number().min(rule.min).max(rule.max);
  return rule.presence === 'required' ? n : n.nullish();
}

/** The frame keys of the table as a zod schema; other keys pass through untouched. */
const frameSchema = builtOnFirstUse(() =>
  z.looseObject(Object.fromEntries(FRAME_KEYS.map((rule) => [rule.key, keySchema(rule)]))),
);

/**
 * The frame keys' values as the fast check sees them, one slot per row of the table: a kind and, for a number, its
 * value. Filled from an object (acceptFrameFast) or straight from the bytes of a line (scanFlatFrameBytes); checked
 * by slotsAccepted.
 */
const KEY_COUNT = FRAME_KEYS.length;
const KIND_NULLISH = 0;
const KIND_NUMBER = 1;
const KIND_TRUE = 2;
const KIND_FALSE = 3;
const KIND_OTHER = 4;
const slotKinds = new Uint8Array(KEY_COUNT);
const slotNumbers = new Float64Array(KEY_COUNT);

/** The airspeed kind of each row (airspeed rows only). */
const ruleAirspeedKind = FRAME_KEYS.map((r) => (r.presence === 'airspeed' ? (r.field as AirspeedKind) : 'tas'));
/** The packed code of each row's airspeed kind (frame-batch.ts). */
const ruleAirspeedCode = Float64Array.from(ruleAirspeedKind, (kind) => AIRSPEED_KINDS.indexOf(kind));

/**
 * The fast check, compiled from the table into straight-line code (one test per key with its bounds inline: the
 * same speed as a hand-written check, and nothing to keep in step by hand). Returns the row of the frame's airspeed
 * when the slots pass the schema with exactly one airspeed and at least one attitude key, else -1 (the caller then
 * lets the schema name the reason).
 */
const checkSlots = ((): ((kinds: Uint8Array, numbers: Float64Array) => number) => {
  const lines = ['let speed = -1, speeds = 0, attitudes = 0, v = 0;'];
  FRAME_KEYS.forEach((rule, row) => {
    const kind = `kinds[${row}]`;
    const valid =
      rule.type === 'boolean'
        ? `if (${kind} !== ${KIND_TRUE} && ${kind} !== ${KIND_FALSE}) return -1;`
        : // Finite bounds: NaN and ±Infinity fail, as in zod. String(x) of a double reads back as the same double.
          `if (${kind} !== ${KIND_NUMBER}) return -1; v = numbers[${row}]; ` +
          `if (!(v >= ${String(rule.min)} && v <= ${String(rule.max)})) return -1;`;
    const counted =
      rule.presence === 'airspeed' ? ` speeds++; speed = ${row};` : rule.presence === 'attitude' ? ' attitudes++;' : '';
    lines.push(
      rule.presence === 'required' ? `${valid}${counted}` : `if (${kind} !== ${KIND_NULLISH}) { ${valid}${counted} }`,
    );
  });
  lines.push(`if (speeds !== 1${ATTITUDE_KEYS.length > 0 ? ' || attitudes === 0' : ''}) return -1;`, 'return speed;');
  return new Function('kinds', 'numbers', `'use strict'; ${lines.join('\n')}`) as (
    kinds: Uint8Array,
    numbers: Float64Array,
  ) => number;
})();

/** The airspeed row of the slots last accepted by slotsAccepted. */
let acceptedSpeedSlot = -1;

/** Whether the slots pass the fast check (then acceptedSpeedSlot names the airspeed). */
function slotsAccepted(): boolean {
  const speed = checkSlots(slotKinds, slotNumbers);
  if (speed < 0) return false;
  acceptedSpeedSlot = speed;
  return true;
}

const buildFromSlots = compileFrameBuilder<[Uint8Array, Float64Array, number, readonly AirspeedKind[]]>({
  params: ['kinds', 'numbers', 'speed', 'speedKinds'],
  airspeedKind: 'speedKinds[speed]',
  airspeedMps: 'numbers[speed]',
  value: (rule, row) => (rule.type === 'boolean' ? `kinds[${row}] === ${KIND_TRUE}` : `numbers[${row}]`),
  present: (_rule, row) => `kinds[${row}] !== ${KIND_NULLISH}`,
});

/** The frame of the slots when slotsAccepted, else null. Its keys come in table order. */
function frameFromSlots(): Frame | null {
  if (!slotsAccepted()) return null;
  return buildFromSlots(slotKinds, slotNumbers, acceptedSpeedSlot, ruleAirspeedKind);
}

function setSlot(slot: number, value: unknown): void {
  if (value === undefined || value === null) slotKinds[slot] = KIND_NULLISH;
  else if (typeof value === 'number') {
    slotKinds[slot] = KIND_NUMBER;
    slotNumbers[slot] = value;
  } else if (value === true) slotKinds[slot] = KIND_TRUE;
  else if (value === false) slotKinds[slot] = KIND_FALSE;
  else slotKinds[slot] = KIND_OTHER;
}

/**
 * The frame of an object that passes the schema with exactly one airspeed and an attitude key, or null for anything
 * else (the caller then lets the schema name the reason). Same verdicts as the schema path, without its cost.
 */
export function acceptFrameFast(raw: Record<string, unknown>): Frame | null {
  for (let k = 0; k < KEY_COUNT; k++) setSlot(k, raw[FRAME_KEYS[k]!.key]);
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

/** The schema path: the verdict and, for a rejection, the first problem in the table's key order. */
export function validateWithSchema(input: unknown): LineVerdict {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) {
    return rejected({ code: 'not_an_object', got: Array.isArray(input) ? 'an array' : shownValue(input) });
  }
  const raw = input as Record<string, unknown>;
  const result = frameSchema().safeParse(raw);
  if (!result.success) {
    // One reason per line: the first problem, in the key order of the schema.
    const key = String(result.error.issues[0]?.path[0] ?? '');
    const value = raw[key];
    if (value === undefined) return rejected({ code: 'missing_key', key });
    // A number where a number belongs is out of its range; anything else is of the wrong type.
    const outOfRange = typeof value === 'number' && frameKeyRule(key)?.type === 'number';
    return rejected({ code: outOfRange ? 'out_of_range' : 'wrong_type', key, got: shownValue(value) });
  }
  const data = result.data as Record<string, unknown>;
  const present = AIRSPEED_KEYS.filter((key) => data[key] != null);
  if (present.length === 0) return NO_AIRSPEED;
  if (present.length > 1) return rejected({ code: 'conflicting_keys', got: present.join(' and ') });
  if (ATTITUDE_KEYS.every((key) => data[key] == null)) return NO_ATTITUDE;
  const frame: Record<string, unknown> = {};
  for (const rule of FRAME_KEYS) {
    const value = data[rule.key];
    if (value == null) continue;
    if (rule.presence === 'airspeed') {
      frame['airspeedKind'] = rule.field;
      frame['airspeedMps'] = value;
    } else frame[rule.field] = value;
  }
  return { ok: true, frame: frame as unknown as Frame, raw };
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

/** The first characters a JSON text may have (RFC 8259: a value after whitespace, and the text is trimmed here). */
const JSON_START = new Uint8Array(128);
for (const c of '{["-0123456789tfn') JSON_START[c.charCodeAt(0)] = 1;
/** Marks a text refused before JSON.parse (never a parsed value). */
const NOT_JSON = Symbol('not JSON');

function judgeLineText(line: string, mayHoldDelOrReplacement: boolean): LineVerdict {
  const text = (line.charCodeAt(0) === 0xfeff ? line.slice(1) : line).trim();
  if (text === '') return EMPTY_LINE;
  if (mayHoldDelOrReplacement && CONTROL_BYTES.test(text)) return BINARY_NOISE;
  // Text that cannot start a JSON value is refused without the exception JSON.parse would throw (junk costs).
  let parsed: unknown = NOT_JSON;
  if (JSON_START[text.charCodeAt(0)] === 1) {
    try {
      parsed = JSON.parse(text);
    } catch {
      parsed = NOT_JSON;
    }
  }
  if (parsed === NOT_JSON) {
    if (!mayHoldDelOrReplacement && CONTROL_BYTES.test(text)) return BINARY_NOISE;
    if (/(?<![\w"])(NaN|-?Infinity)(?![\w"])/.test(text)) return NOT_FINITE_JSON;
    return text.startsWith('{') && !text.endsWith('}') ? TRUNCATED_JSON : INVALID_JSON;
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

const T_SLOT = FRAME_KEYS.findIndex((r) => r.key === 't_s');

/** t_s of the frame last accepted by acceptAsciiFrameBytes. */
export function acceptedFrameTime(): number {
  return slotNumbers[T_SLOT]!;
}

type PackSlots = (
  target: Float64Array,
  o: number,
  kinds: Uint8Array,
  numbers: Float64Array,
  speed: number,
  speedCodes: Float64Array,
  newSegment: boolean,
) => void;

/** Packs the slots into frame-batch.ts's layout, compiled from the table like checkSlots. */
const packSlots = ((): PackSlots => {
  const lines = [
    `target[o + ${PACKED_AIRSPEED_KIND}] = speedCodes[speed];`,
    `target[o + ${PACKED_AIRSPEED}] = numbers[speed];`,
  ];
  PACKED_KEYS.forEach((key, p) => {
    const row = FRAME_KEYS.findIndex((r) => r.key === key);
    const kind = `kinds[${row}]`;
    const value = FRAME_KEYS[row]!.type === 'boolean' ? `${kind} === ${KIND_TRUE} ? 1 : 0` : `numbers[${row}]`;
    lines.push(`target[o + ${PACKED_AIRSPEED + 1 + p}] = ${kind} === ${KIND_NULLISH} ? NaN : ${value};`);
  });
  lines.push(`target[o + ${FRAME_SLOTS - 1}] = newSegment ? 1 : 0;`);
  return new Function(
    'target',
    'o',
    'kinds',
    'numbers',
    'speed',
    'speedCodes',
    'newSegment',
    `'use strict'; ${lines.join('\n')}`,
  ) as PackSlots;
})();

/** Packs the frame last accepted by acceptAsciiFrameBytes at slot `index` (frame-batch.ts), as packFrame would. */
export function packAcceptedFrame(target: Float64Array, index: number, newSegment: boolean): void {
  packSlots(target, index * FRAME_SLOTS, slotKinds, slotNumbers, acceptedSpeedSlot, ruleAirspeedCode, newSegment);
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
export function skipJsonSpace(bytes: Uint8Array, i: number, end: number): number {
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
 * Reads the JSON number (RFC 8259 grammar) starting at `start` into target[at] (when at ≥ 0) and returns where it
 * ends, or -1 when there is none. The value is the one JSON.parse gives: with at most 15 significant
 * digits and a power of ten up to 22, the digits and the power are exact doubles and one IEEE division or product
 * rounds correctly (the classic exact case of decimal-to-binary conversion); other numbers go through Number(),
 * which rounds correctly too.
 */
export function scanJsonNumber(
  bytes: Uint8Array,
  start: number,
  end: number,
  target: Float64Array,
  at: number,
): number {
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
  if (at < 0) return i;
  const power = exponent - fractionDigits;
  if (!exactExponent || digits > EXACT_DIGITS || power > 22 || power < -22) {
    target[at] = Number(Buffer.from(bytes.buffer, bytes.byteOffset + start, i - start).toString('latin1'));
  } else {
    const magnitude = power < 0 ? mantissa / EXACT_POWERS_OF_TEN[-power]! : mantissa * EXACT_POWERS_OF_TEN[power]!;
    target[at] = negative ? -magnitude : magnitude;
  }
  return i;
}

/** End of the JSON string whose opening quote is at i (just after its closing quote), or -1 for escapes or controls. */
export function plainJsonStringEnd(bytes: Uint8Array, i: number, end: number): number {
  for (let j = i + 1; j < end; j++) {
    const c = bytes[j]!;
    if (c === QUOTE) return j + 1;
    if (c === 0x5c /* backslash */ || c < SPACE) return -1;
  }
  return -1;
}

const FRAME_KEY_BYTES = FRAME_KEYS.map((rule) => Buffer.from(rule.key, 'latin1'));
const LONGEST_KEY = Math.max(...FRAME_KEY_BYTES.map((b) => b.length));
const NO_KEY = -1;
const SEVERAL_KEYS = -2;
/** The table row of a key by (length, first byte): NO_KEY, the row, or SEVERAL_KEYS (then every row is tried). */
const KEY_BY_LENGTH_AND_FIRST = new Int16Array((LONGEST_KEY + 1) * 256).fill(NO_KEY);
FRAME_KEY_BYTES.forEach((name, k) => {
  const at = name.length * 256 + name[0]!;
  KEY_BY_LENGTH_AND_FIRST[at] = KEY_BY_LENGTH_AND_FIRST[at] === NO_KEY ? k : SEVERAL_KEYS;
});

function sameBytes(bytes: Uint8Array, start: number, name: Buffer): boolean {
  for (let j = 0; j < name.length; j++) if (bytes[start + j] !== name[j]) return false;
  return true;
}

/** Which frame key the bytes from start (length bytes) name: its row in the table, or -1. */
export function frameKeyAt(bytes: Uint8Array, start: number, length: number): number {
  // The candidate from the length and the first letter, then a check of every byte.
  if (length > LONGEST_KEY || length === 0) return -1;
  const k = KEY_BY_LENGTH_AND_FIRST[length * 256 + bytes[start]!]!;
  if (k === NO_KEY) return -1;
  if (k !== SEVERAL_KEYS) return sameBytes(bytes, start, FRAME_KEY_BYTES[k]!) ? k : -1;
  for (let row = 0; row < FRAME_KEY_BYTES.length; row++) {
    const name = FRAME_KEY_BYTES[row]!;
    if (name.length === length && sameBytes(bytes, start, name)) return row;
  }
  return -1;
}

export function matchesWord(bytes: Uint8Array, i: number, end: number, word: string): boolean {
  if (i + word.length > end) return false;
  for (let j = 0; j < word.length; j++) if (bytes[i + j] !== word.charCodeAt(j)) return false;
  return true;
}

/**
 * Reads ASCII JSON text bytes[start, end) that is exactly one flat object of plain values (numbers, null, true,
 * false, strings without escapes) into the frame-key slots and returns true; false for any other text — which
 * then takes the JSON.parse path. For the texts it reads, numbers and nulls are those JSON.parse gives, a later
 * duplicate key winning as there; strings count as "anything else".
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
      kind = KIND_TRUE;
      i += 4;
    } else if (c === 0x66 /* f */) {
      if (!matchesWord(bytes, i, end, 'false')) return false;
      kind = KIND_FALSE;
      i += 5;
    } else {
      i = scanJsonNumber(bytes, i, end, slotNumbers, slot);
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
