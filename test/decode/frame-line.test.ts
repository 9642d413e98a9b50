import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseFrameLine } from '../../src/decode/frame-line.js';

function reason(line: string): string {
  const v = parseFrameLine(line);
  if (v.ok) throw new Error(`expected a rejection for ${line}`);
  return v.reason;
}

function codeOf(line: string): string {
  const v = parseFrameLine(line);
  if (v.ok) throw new Error(`expected a rejection for ${line}`);
  return v.code;
}

describe('parseFrameLine', () => {
  it('accepts a full frame and maps the wire keys to the solver frame', () => {
    const v = parseFrameLine(
      '{"t_s":12.5,"tas_mps":21,"alt_m":150,"bank_deg":-35,"nz":1.2,"oat_c":12,"mass_kg":3.4,"rssi":-70}',
    );
    expect(v).toEqual({
      ok: true,
      frame: {
        tS: 12.5,
        airspeedKind: 'tas',
        airspeedMps: 21,
        altM: 150,
        bankDeg: -35,
        nz: 1.2,
        oatC: 12,
        massKg: 3.4,
      },
      raw: { t_s: 12.5, tas_mps: 21, alt_m: 150, bank_deg: -35, nz: 1.2, oat_c: 12, mass_kg: 3.4, rssi: -70 },
    });
  });

  it('accepts each airspeed kind and nz without bank', () => {
    const ias = parseFrameLine('{"t_s":0,"ias_mps":15,"alt_m":0,"nz":1}');
    const cas = parseFrameLine('{"t_s":0,"cas_mps":15,"alt_m":0,"nz":1}');
    expect(ias.ok && ias.frame.airspeedKind).toBe('ias');
    expect(cas.ok && cas.frame.airspeedKind).toBe('cas');
  });

  it('ignores a UTF-8 BOM, a trailing CR and surrounding blanks', () => {
    expect(parseFrameLine('\uFEFF{"t_s":0,"tas_mps":15,"alt_m":0,"nz":1}\r').ok).toBe(true);
    expect(parseFrameLine('  {"t_s":0,"tas_mps":15,"alt_m":0,"nz":1}  ').ok).toBe(true);
  });

  it('treats null optional keys as not sent', () => {
    const v = parseFrameLine('{"t_s":0,"tas_mps":15,"alt_m":0,"bank_deg":10,"nz":null,"oat_c":null}');
    expect(v.ok && v.frame).toEqual({ tS: 0, airspeedKind: 'tas', airspeedMps: 15, altM: 0, bankDeg: 10 });
  });

  it.each([
    ['not JSON', 'hello world', 'invalid JSON', 'invalid_json'],
    ['a truncated line', '{"t_s":1,"tas_mps":2', 'invalid JSON (truncated line?)', 'invalid_json'],
    ['binary noise with NUL bytes', '\u0000\u0001{"t_s":1}', 'binary noise (control or invalid bytes)', 'binary_noise'],
    [
      'invalid UTF-8 (replacement character)',
      '{"t_s":1,\uFFFD}',
      'binary noise (control or invalid bytes)',
      'binary_noise',
    ],
    [
      'NaN',
      '{"t_s":1,"tas_mps":NaN,"alt_m":0,"nz":1}',
      'invalid JSON (NaN or Infinity is not a finite number)',
      'invalid_json',
    ],
    [
      'Infinity',
      '{"t_s":1,"tas_mps":20,"alt_m":-Infinity,"nz":1}',
      'invalid JSON (NaN or Infinity is not a finite number)',
      'invalid_json',
    ],
    ['an array', '[1,2]', 'not a JSON object (got an array)', 'not_an_object'],
    ['a bare number', '42', 'not a JSON object (got 42)', 'not_an_object'],
    [
      'a wrong type',
      '{"t_s":1,"tas_mps":"fast","alt_m":0,"nz":1}',
      'tas_mps must be a number from 0 to 300 m/s (got "fast")',
      'wrong_type',
    ],
    [
      'a negative airspeed',
      '{"t_s":1,"tas_mps":-3,"alt_m":0,"nz":1}',
      'tas_mps must be a number from 0 to 300 m/s (got -3)',
      'out_of_range',
    ],
    ['a missing t_s', '{"tas_mps":3,"alt_m":0,"nz":1}', 't_s is required', 'missing_key'],
    [
      'a string t_s',
      '{"t_s":"12","tas_mps":3,"alt_m":0,"nz":1}',
      't_s must be a number from -1000000000 to 1000000000 s (got "12")',
      'wrong_type',
    ],
    // A sender clock gone wild would otherwise make every later frame "time not increasing".
    [
      'a t_s of 1e308',
      '{"t_s":1e308,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      't_s must be a number from -1000000000 to 1000000000 s (got 1e+308)',
      'out_of_range',
    ],
    [
      'a t_s below -1e9 s',
      '{"t_s":-1000000000.5,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      't_s must be a number from -1000000000 to 1000000000 s (got -1000000000.5)',
      'out_of_range',
    ],
    // Beyond the subsonic range of the airspeed relations (CAS 500 m/s at 15 km would be TAS ≈ 787 m/s).
    [
      'an IAS of 1000 m/s',
      '{"t_s":1,"ias_mps":1000,"alt_m":100,"bank_deg":10}',
      'ias_mps must be a number from 0 to 300 m/s (got 1000)',
      'out_of_range',
    ],
    [
      'a CAS of 500 m/s',
      '{"t_s":1,"cas_mps":500,"alt_m":15000,"bank_deg":10}',
      'cas_mps must be a number from 0 to 300 m/s (got 500)',
      'out_of_range',
    ],
    [
      'a TAS just above 300 m/s',
      '{"t_s":1,"tas_mps":300.001,"alt_m":0,"nz":1}',
      'tas_mps must be a number from 0 to 300 m/s (got 300.001)',
      'out_of_range',
    ],
    [
      'no airspeed',
      '{"t_s":1,"alt_m":0,"nz":1}',
      'an airspeed is required (one of ias_mps, cas_mps, tas_mps)',
      'missing_key',
    ],
    [
      'two airspeed keys',
      '{"t_s":1,"ias_mps":20,"tas_mps":21,"alt_m":0,"nz":1}',
      'exactly one airspeed key is allowed (got ias_mps and tas_mps)',
      'conflicting_keys',
    ],
    ['a missing altitude', '{"t_s":1,"tas_mps":20,"nz":1}', 'alt_m is required', 'missing_key'],
    [
      'an altitude above 20 000 m',
      '{"t_s":1,"tas_mps":20,"alt_m":25000,"nz":1}',
      'alt_m must be a number from -500 to 20000 m (got 25000)',
      'out_of_range',
    ],
    [
      'an altitude below -500 m',
      '{"t_s":1,"tas_mps":20,"alt_m":-600,"nz":1}',
      'alt_m must be a number from -500 to 20000 m (got -600)',
      'out_of_range',
    ],
    ['neither bank nor nz', '{"t_s":1,"tas_mps":20,"alt_m":0}', 'bank_deg or nz is required', 'missing_key'],
    [
      'a bank beyond 180°',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"bank_deg":190}',
      'bank_deg must be a number from -180 to 180 deg (got 190)',
      'out_of_range',
    ],
    [
      'an nz beyond 20 g',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":-21}',
      'nz must be a number from -20 to 20 g (got -21)',
      'out_of_range',
    ],
    [
      'a zero mass',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"mass_kg":0}',
      'mass_kg must be a number from 0.05 to 10000 kg (got 0)',
      'out_of_range',
    ],
    ['an empty line', '   ', 'empty line', 'empty_line'],
    // The mass bounds are the ones the airframe file and --mass use (src/core/units.ts).
    [
      'a mass below 50 g',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"mass_kg":0.049}',
      'mass_kg must be a number from 0.05 to 10000 kg (got 0.049)',
      'out_of_range',
    ],
    [
      'a throttle above full',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"throttle":1.2}',
      'throttle must be a number from 0 to 1 (got 1.2)',
      'out_of_range',
    ],
    [
      'a negative throttle',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"throttle":-0.1}',
      'throttle must be a number from 0 to 1 (got -0.1)',
      'out_of_range',
    ],
    [
      'a throttle in words',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"throttle":"full"}',
      'throttle must be a number from 0 to 1 (got "full")',
      'wrong_type',
    ],
    [
      'a simulated flag as a number',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"simulated":1}',
      'simulated must be true or false (got 1)',
      'wrong_type',
    ],
    [
      'a simulated flag as text',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"simulated":"true"}',
      'simulated must be true or false (got "true")',
      'wrong_type',
    ],
  ])('rejects %s with a clear reason and a stable code', (_name, line, expected, code) => {
    expect(reason(line)).toBe(expected);
    expect(codeOf(line)).toBe(code);
  });

  it('carries the code, the key at fault and the offending value as data beside the words', () => {
    expect(parseFrameLine('{"t_s":1,"tas_mps":400,"alt_m":0,"nz":1}')).toEqual({
      ok: false,
      reason: 'tas_mps must be a number from 0 to 300 m/s (got 400)',
      code: 'out_of_range',
      key: 'tas_mps',
      got: '400',
    });
    expect(parseFrameLine('{"tas_mps":3,"alt_m":0,"nz":1}')).toEqual({
      ok: false,
      reason: 't_s is required',
      code: 'missing_key',
      key: 't_s',
    });
    expect(parseFrameLine('{"t_s":1,"ias_mps":20,"tas_mps":21,"alt_m":0,"nz":1}')).toEqual({
      ok: false,
      reason: 'exactly one airspeed key is allowed (got ias_mps and tas_mps)',
      code: 'conflicting_keys',
      got: 'ias_mps and tas_mps',
    });
    expect(parseFrameLine('oops')).toEqual({ ok: false, reason: 'invalid JSON', code: 'invalid_json' });
  });

  it('accepts throttle and the simulated flag, and maps them to the frame', () => {
    const v = parseFrameLine('{"t_s":2,"tas_mps":18,"alt_m":100,"nz":1.1,"throttle":0.62,"simulated":true}');
    expect(v.ok && v.frame).toEqual({
      tS: 2,
      airspeedKind: 'tas',
      airspeedMps: 18,
      altM: 100,
      nz: 1.1,
      throttle: 0.62,
      simulated: true,
    });
    const edges = parseFrameLine('{"t_s":2,"tas_mps":18,"alt_m":100,"nz":1,"throttle":0,"simulated":false}');
    expect(edges.ok && [edges.frame.throttle, edges.frame.simulated]).toEqual([0, false]);
    expect(parseFrameLine('{"t_s":2,"tas_mps":18,"alt_m":100,"nz":1,"throttle":1}').ok).toBe(true);
    const nulls = parseFrameLine('{"t_s":2,"tas_mps":18,"alt_m":100,"nz":1,"throttle":null,"simulated":null}');
    expect(nulls.ok && nulls.frame).toEqual({ tS: 2, airspeedKind: 'tas', airspeedMps: 18, altM: 100, nz: 1 });
  });

  it('names an overflowing number as too large rather than null', () => {
    const v = parseFrameLine('{"t_s":0.5,"tas_mps":1e999,"alt_m":100,"bank_deg":10}');
    expect(v.ok).toBe(false);
    if (!v.ok) expect(v.reason).toBe('tas_mps must be a number from 0 to 300 m/s (got Infinity (number too large))');
  });

  it('refuses text that cannot start a JSON value as JSON.parse would, with the same words for junk', () => {
    // RFC 8259 §2 and §3: a JSON text is a value after whitespace, and a value starts with one of { [ " - 0-9 t f n.
    const starts = new Set('{["-0123456789tfn');
    fc.assert(
      fc.property(fc.string({ maxLength: 30 }), (tail) => {
        for (const head of ['N', 'x', '$', '}', ']', ':', ',', 'T', 'é', '+', '.', '#']) {
          const text = head + tail;
          expect(starts.has(head)).toBe(false);
          expect(() => JSON.parse(text)).toThrow(SyntaxError);
          const v = parseFrameLine(text);
          expect(v.ok).toBe(false);
          if (!v.ok) expect(['invalid_json', 'binary_noise']).toContain(v.code);
        }
      }),
      { numRuns: 200 },
    );
    expect(reason('NOISE $GPGGA,123519,4807.038,N,01131.000,E*47')).toBe('invalid JSON');
    expect(reason('NaN')).toBe('invalid JSON (NaN or Infinity is not a finite number)');
    expect(reason('  Infinity')).toBe('invalid JSON (NaN or Infinity is not a finite number)');
    expect(reason('nul')).toBe('invalid JSON');
    expect(reason('{"t_s": 1')).toBe('invalid JSON (truncated line?)');
    expect(codeOf('nul')).toBe('invalid_json');
  });

  it('accepts the edges of the plausible ranges', () => {
    expect(parseFrameLine('{"t_s":1,"tas_mps":0,"alt_m":-500,"bank_deg":-180}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":1,"tas_mps":0,"alt_m":20000,"nz":20}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":1000000000,"ias_mps":300,"alt_m":0,"nz":1}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":-1000000000,"cas_mps":300,"alt_m":0,"nz":1}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":-1e9,"tas_mps":300,"alt_m":0,"nz":1}').ok).toBe(true);
  });
});
