/** Reading and validating the user's JSON input files (airframe, thresholds). */
import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { parseAircraft, type Aircraft } from '../core/aircraft.js';
import { ThresholdsSchema, resolveThresholds, type AlertThresholds } from '../core/thresholds.js';
import { parseLenient } from '../core/validation.js';
import { InputError } from '../errors.js';
import { systemErrorWords } from '../system-errors.js';

/** Read and parse a JSON input file; InputError naming the file when it cannot be read or parsed. */
export function readJson(path: string, what: string): unknown {
  const label = basename(path);
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    const why = systemErrorWords(err);
    throw new InputError([`${path}: cannot read the ${what} file (${why})`]);
  }
  try {
    return JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch (err) {
    throw new InputError([`${label}: not valid JSON (${(err as Error).message})`]);
  }
}

function warn(lines: readonly string[]): void {
  for (const line of lines) process.stderr.write(`turnmargin: warning: ${line}\n`);
}

export function loadAircraftFile(path: string): Aircraft {
  const json = readJson(path, 'airframe');
  const result = parseAircraft(json, basename(path));
  if (!result.ok) throw new InputError(result.problems);
  warn(result.warnings);
  return result.value;
}

/** Thresholds from a file, layered over the airframe's own (which are over the defaults). */
export function loadThresholdsFile(path: string, base: AlertThresholds): AlertThresholds {
  const json = readJson(path, 'thresholds');
  const result = parseLenient(ThresholdsSchema, json, basename(path));
  if (!result.ok) throw new InputError(result.problems);
  warn(result.warnings);
  return resolveThresholds(result.value, base);
}
