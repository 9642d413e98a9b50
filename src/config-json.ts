/**
 * JSON text of the user's configuration files (airframe, thresholds, plan, mapping): parsed with the line and column
 * of the first error, and refused when nested deeper than any such file needs (deep nesting would otherwise
 * overflow the stack of the code that walks the document). Pure: the caller reads the file.
 */

import { InputError } from './errors.js';

/** Deepest nesting of arrays and objects accepted; the configuration files need fewer than ten levels. */
export const MAX_CONFIG_DEPTH = 64;

export type ConfigJsonResult =
  { ok: true; value: unknown } | { ok: false; line: number; column: number; reason: string; kind: 'syntax' | 'depth' };

/** 1-based line and column (in characters) of an offset in the text. */
export function lineAndColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = text.indexOf('\n'); i >= 0 && i < offset; i = text.indexOf('\n', i + 1)) {
    line += 1;
    lineStart = i + 1;
  }
  return { line, column: offset - lineStart + 1 };
}

function describeChar(text: string, at: number): string {
  if (at >= text.length) return 'the end of the file';
  const ch = text[at]!;
  return /[\x20-\x7e]/.test(ch)
    ? `"${ch}"`
    : `character U+${ch.charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}`;
}

const NUMBER = /-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][+-]?\d+)?/y;

/**
 * Where and why the text is not JSON (RFC 8259), or where it nests too deep; null when it is valid. Iterative, so a
 * document nested a million levels deep is scanned without recursion.
 */
export function findJsonProblem(
  text: string,
  maxDepth = MAX_CONFIG_DEPTH,
): { offset: number; reason: string; kind: 'syntax' | 'depth' } | null {
  let i = 0;
  const n = text.length;
  // The open containers, innermost last.
  const stack: Array<'[' | '{'> = [];
  let opened = false; // the last value scanned opened a container
  let tooDeep = false;
  const ws = (): void => {
    while (i < n && (text[i] === ' ' || text[i] === '\t' || text[i] === '\n' || text[i] === '\r')) i++;
  };
  const fail = (reason: string) => ({ offset: i, reason, kind: 'syntax' as const });
  const scanString = (): string | null => {
    i++; // opening quote
    while (i < n) {
      const c = text.charCodeAt(i);
      if (c === 0x22) {
        i++;
        return null;
      }
      if (c === 0x5c) {
        const e = text[i + 1];
        if (e === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) return 'a \\u escape needs four hex digits';
          i += 6;
        } else if (e !== undefined && '"\\/bfnrt'.includes(e)) i += 2;
        else {
          i++;
          return `unknown escape \\${e ?? ''} in a text`;
        }
        continue;
      }
      if (c < 0x20) return 'a control character (e.g. a line break) inside a text; write it as an escape';
      i++;
    }
    return 'a text is not closed (missing ")';
  };
  const scanNumber = (): string | null => {
    NUMBER.lastIndex = i;
    const m = NUMBER.exec(text);
    if (!m) return `expected a value, found ${describeChar(text, i)}`;
    i += m[0].length;
    return null;
  };
  // One value (scalar, or the opening of a container); returns a reason on failure.
  const scanValue = (): string | null => {
    ws();
    if (i >= n) return 'the file ends where a value is expected';
    const c = text[i]!;
    if (c === '{' || c === '[') {
      if (stack.length >= maxDepth) {
        tooDeep = true;
        return `nested more than ${maxDepth} levels deep`;
      }
      stack.push(c);
      opened = true;
      i++;
      return null;
    }
    if (c === '"') return scanString();
    for (const word of ['true', 'false', 'null']) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return null;
      }
    }
    if (c === '-' || (c >= '0' && c <= '9')) return scanNumber();
    if (c === "'") return 'texts and names take double quotes ("), not \'';
    return `expected a value, found ${describeChar(text, i)}`;
  };

  ws();
  if (i >= n) return fail('the file is empty');
  let why = scanValue();
  for (;;) {
    if (why !== null) return tooDeep ? { offset: i, reason: why, kind: 'depth' } : fail(why);
    const top = stack[stack.length - 1];
    if (top === undefined) break;
    const justOpened = opened;
    opened = false;
    ws();
    if (top === '[') {
      if (justOpened && text[i] === ']') {
        stack.pop();
        i++;
        continue;
      }
      if (!justOpened) {
        if (text[i] === ']') {
          stack.pop();
          i++;
          continue;
        }
        if (text[i] !== ',') return fail(`expected "," or "]" after an array element, found ${describeChar(text, i)}`);
        i++;
      }
      why = scanValue();
      continue;
    }
    // Object: after "{" or a member value.
    if (justOpened && text[i] === '}') {
      stack.pop();
      i++;
      continue;
    }
    if (!justOpened) {
      if (text[i] === '}') {
        stack.pop();
        i++;
        continue;
      }
      if (text[i] !== ',') return fail(`expected "," or "}" after a member, found ${describeChar(text, i)}`);
      i++;
      ws();
      if (text[i] === '}') return fail('a "," before "}" (trailing commas are not JSON)');
    }
    ws();
    if (text[i] !== '"') {
      return fail(
        text[i] === "'"
          ? 'names take double quotes ("), not \''
          : `expected a member name in double quotes, found ${describeChar(text, i)}`,
      );
    }
    why = scanString();
    if (why !== null) continue;
    ws();
    if (text[i] !== ':') {
      why = `expected ":" after a member name, found ${describeChar(text, i)}`;
      continue;
    }
    i++;
    why = scanValue();
  }
  ws();
  if (i < n) return fail(`unexpected ${describeChar(text, i)} after the end of the document`);
  return null;
}

/** Parse a configuration file's text (a leading BOM is ignored). */
export function parseConfigJson(rawText: string, maxDepth = MAX_CONFIG_DEPTH): ConfigJsonResult {
  const text = rawText.replace(/^\uFEFF/, '');
  const offset = rawText.length - text.length;
  const problem = findJsonProblem(text, maxDepth);
  if (problem === null) {
    try {
      return { ok: true, value: JSON.parse(text) };
    } catch (err) {
      // The scan and JSON.parse disagree (should not happen): report the engine's own words at the start.
      return { ok: false, line: 1, column: 1, reason: (err as Error).message, kind: 'syntax' };
    }
  }
  const where = lineAndColumn(rawText, problem.offset + offset);
  return { ok: false, ...where, reason: problem.reason, kind: problem.kind };
}

/** The parsed document, or an InputError naming the file, the line and the column: "plan.json: line 3, column 8: …". */
export function configJsonOrThrow(text: string, label: string, what: string): unknown {
  const result = parseConfigJson(text);
  if (result.ok) return result.value;
  const head = `${label}: line ${result.line}, column ${result.column}:`;
  throw new InputError([
    result.kind === 'depth'
      ? `${head} the ${what} file is ${result.reason} (such a file needs a few levels at most)`
      : `${head} the ${what} file is not valid JSON (${result.reason})`,
  ]);
}
