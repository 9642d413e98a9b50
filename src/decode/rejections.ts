/**
 * Why a line was rejected, as data with a stable code, and the one place where the words for it are made. Every
 * output carries both: the `--no-ui` stderr line, `review` rejects, link health (counted by code) and `serve` error
 * answers. Codes never change meaning; the words may be reworded.
 */
import { AIRSPEED_GROUP_WORDS, ATTITUDE_GROUP_WORDS, ruleWords } from './frame-keys.js';

/** The stable codes (README lists them with their meaning). */
export const REJECT_CODES = [
  'empty_line',
  'binary_noise',
  'invalid_json',
  'not_an_object',
  'missing_key',
  'wrong_type',
  'out_of_range',
  'conflicting_keys',
  'time_not_increasing',
  'line_too_long',
  'column_count',
  'bad_record',
  'empty_message',
] as const;

export type RejectCode = (typeof REJECT_CODES)[number];

export interface Rejection {
  code: RejectCode;
  /** The frame key at fault, when one is. */
  key?: string;
  /** The offending value as text (JSON text of the value, cut at 40 characters), when there is one. */
  got?: string;
  /**
   * Words for this instance that the code alone does not give: a limit, a hint, or a rule checked outside the
   * frame-key table (e.g. "above the subsonic range (Mach 1.02)" for an `out_of_range` airspeed).
   */
  detail?: string;
}

/** A rejected verdict: the data and its words. */
export type Rejected = Rejection & { ok: false; reason: string };

/** The words for a rejection, e.g. `tas_mps must be a number from 0 to 300 m/s (got "fast")`. */
export function rejectionWords(r: Rejection): string {
  const got = r.got === undefined ? '' : ` (got ${r.got})`;
  switch (r.code) {
    case 'empty_line':
      return 'empty line';
    case 'binary_noise':
      return 'binary noise (control or invalid bytes)';
    case 'invalid_json':
      return r.detail === undefined ? 'invalid JSON' : `invalid JSON (${r.detail})`;
    case 'not_an_object':
      return `not a JSON object${got}`;
    case 'missing_key':
      return r.key !== undefined ? `${r.key} is required` : (r.detail ?? 'a required key is missing');
    case 'wrong_type':
    case 'out_of_range': {
      const key = r.key ?? 'a value';
      if (r.detail !== undefined) return `${r.key === undefined ? '' : `${r.key} `}${r.detail}${got}`;
      return `${key} must be ${ruleWords(key)}${got}`;
    }
    case 'conflicting_keys':
      return `exactly one airspeed key is allowed${got}`;
    case 'time_not_increasing':
      return 'time not increasing';
    case 'line_too_long':
      return `line longer than ${r.detail ?? 'the limit of'} bytes (cut)`;
    case 'column_count':
      return `expected ${r.detail ?? 'another number of'} columns${got}`;
    case 'bad_record':
      return r.detail ?? 'not a recording record (expected receive time, TAB, line)';
    case 'empty_message':
      return 'empty message (no frame in it)';
  }
}

/** The rejected verdict of a rejection: its data and its words. */
export function rejected(r: Rejection): Rejected {
  return { ok: false, reason: rejectionWords(r), ...r };
}

/** The words of a group of rejections (link health counts): the words without the offending value. */
export function rejectionGroupWords(r: Rejection): string {
  const { got: _got, ...rest } = r;
  return rejectionWords(rest);
}

/** A value as shown after "got": JSON text, cut at 40 characters. */
export function shownValue(value: unknown): string {
  let text: string;
  if (typeof value === 'string') text = JSON.stringify(value);
  else if (value === undefined) text = 'nothing';
  // JSON.parse turns an overflowing literal such as 1e999 into ±Infinity, which JSON.stringify would print as null.
  else if (typeof value === 'number' && !Number.isFinite(value)) text = `${value} (number too large)`;
  else text = JSON.stringify(value) ?? String(value);
  return text.length > 40 ? `${text.slice(0, 37)}...` : text;
}

// The rejections the decoders make, built here so that their words stay in this module.
export const EMPTY_LINE: Rejected = rejected({ code: 'empty_line' });
export const BINARY_NOISE: Rejected = rejected({ code: 'binary_noise' });
export const INVALID_JSON: Rejected = rejected({ code: 'invalid_json' });
export const TRUNCATED_JSON: Rejected = rejected({ code: 'invalid_json', detail: 'truncated line?' });
export const NOT_FINITE_JSON: Rejected = rejected({
  code: 'invalid_json',
  detail: 'NaN or Infinity is not a finite number',
});
export const TIME_NOT_INCREASING: Rejected = rejected({ code: 'time_not_increasing' });
export const NO_AIRSPEED: Rejected = rejected({
  code: 'missing_key',
  detail: `an airspeed is required (${AIRSPEED_GROUP_WORDS})`,
});
export const NO_ATTITUDE: Rejected = rejected({ code: 'missing_key', detail: `${ATTITUDE_GROUP_WORDS} is required` });

export function lineTooLong(maxLineBytes: number): Rejected {
  return rejected({ code: 'line_too_long', detail: String(maxLineBytes) });
}

export function columnCount(expected: number, got: number): Rejected {
  return rejected({ code: 'column_count', detail: String(expected), got: String(got) });
}
