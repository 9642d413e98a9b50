import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { findJsonProblem, lineAndColumn, MAX_CONFIG_DEPTH, parseConfigJson } from '../../src/config-json.js';

// The reference for what is JSON: ECMAScript's JSON.parse (ECMA-404 / RFC 8259 grammar), a general-purpose parser
// outside the project.
function isJson(text: string): boolean {
  try {
    JSON.parse(text);
    return true;
  } catch {
    return false;
  }
}

describe('configuration JSON', () => {
  it('accepts exactly what JSON.parse accepts, on random texts built from JSON tokens', () => {
    const token = fc.constantFrom(
      '{',
      '}',
      '[',
      ']',
      ',',
      ':',
      '"',
      'a',
      '1',
      '-',
      '.',
      'e',
      'true',
      'null',
      ' ',
      '\n',
      '\\',
      '\\u00',
      '0',
      "'",
    );
    fc.assert(
      fc.property(fc.array(token, { maxLength: 14 }), (parts) => {
        const text = parts.join('');
        expect(findJsonProblem(text, 1000) === null).toBe(isJson(text));
      }),
      { numRuns: 20_000 },
    );
  });

  it('accepts any value JSON.stringify writes, and gives back the same value', () => {
    fc.assert(
      fc.property(fc.jsonValue({ maxDepth: 6 }), fc.constantFrom(0, 2), (value, indent) => {
        const text = JSON.stringify(value, null, indent);
        const result = parseConfigJson(text);
        expect(result.ok).toBe(true);
        if (result.ok) expect(result.value).toEqual(JSON.parse(text));
      }),
      { numRuns: 2000 },
    );
  });

  it('names the line and column of a trailing comma, a missing value and an unclosed text', () => {
    expect(parseConfigJson('{\n  "name": "x",\n  "mass_kg": 3,\n}\n')).toMatchObject({
      ok: false,
      line: 4,
      column: 1,
      reason: expect.stringContaining('trailing commas') as string,
    });
    expect(parseConfigJson('{\n  "a": 1,\n  "b": }')).toMatchObject({ ok: false, line: 3, column: 8 });
    expect(parseConfigJson('{"a": "open\n}')).toMatchObject({ ok: false, line: 1, column: 12 });
    expect(parseConfigJson("{'a': 1}")).toMatchObject({
      ok: false,
      reason: expect.stringContaining('double quotes') as string,
    });
    expect(parseConfigJson('')).toMatchObject({ ok: false, reason: 'the file is empty' });
  });

  it('counts columns after a byte-order mark as the editor shows them', () => {
    expect(parseConfigJson('\uFEFF{"a":1,}')).toMatchObject({ ok: false, line: 1, column: 9 });
    expect(parseConfigJson('\uFEFF{"a":1}')).toEqual({ ok: true, value: { a: 1 } });
  });

  it('refuses 100 000 nested brackets, closed or not, with a message instead of overflowing the stack', () => {
    for (const text of ['['.repeat(100_000), '['.repeat(100_000) + ']'.repeat(100_000), '{"a":'.repeat(100_000)]) {
      const result = parseConfigJson(text);
      expect(result).toMatchObject({ ok: false, kind: 'depth', line: 1 });
    }
    const deepestAllowed = '['.repeat(MAX_CONFIG_DEPTH) + ']'.repeat(MAX_CONFIG_DEPTH);
    expect(parseConfigJson(deepestAllowed).ok).toBe(true);
  });

  it('finds lines and columns by characters', () => {
    expect(lineAndColumn('ab\ncd\n', 4)).toEqual({ line: 2, column: 2 });
    expect(lineAndColumn('x', 0)).toEqual({ line: 1, column: 1 });
  });
});
