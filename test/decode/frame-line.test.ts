import { describe, expect, it } from 'vitest';
import { parseFrameLine } from '../../src/decode/frame-line.js';

function reason(line: string): string {
  const v = parseFrameLine(line);
  if (v.ok) throw new Error(`expected a rejection for ${line}`);
  return v.reason;
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
    ['not JSON', 'hello world', 'invalid JSON'],
    ['a truncated line', '{"t_s":1,"tas_mps":2', 'invalid JSON (truncated line?)'],
    ['binary noise with NUL bytes', '\u0000\u0001{"t_s":1}', 'binary noise (control or invalid bytes)'],
    ['invalid UTF-8 (replacement character)', '{"t_s":1,\uFFFD}', 'binary noise (control or invalid bytes)'],
    ['NaN', '{"t_s":1,"tas_mps":NaN,"alt_m":0,"nz":1}', 'NaN or Infinity is not a finite number'],
    ['Infinity', '{"t_s":1,"tas_mps":20,"alt_m":-Infinity,"nz":1}', 'NaN or Infinity is not a finite number'],
    ['an array', '[1,2]', 'not a JSON object (got an array)'],
    ['a bare number', '42', 'not a JSON object (got 42)'],
    ['a wrong type', '{"t_s":1,"tas_mps":"fast","alt_m":0,"nz":1}', 'tas_mps must be a finite number ≥ 0 (got "fast")'],
    ['a negative airspeed', '{"t_s":1,"tas_mps":-3,"alt_m":0,"nz":1}', 'tas_mps must be a finite number ≥ 0 (got -3)'],
    ['a missing t_s', '{"tas_mps":3,"alt_m":0,"nz":1}', 't_s is required'],
    [
      'a string t_s',
      '{"t_s":"12","tas_mps":3,"alt_m":0,"nz":1}',
      't_s must be a number from -1000000000 to 1000000000 s (got "12")',
    ],
    // A sender clock gone wild would otherwise make every later frame "time not increasing".
    [
      'a t_s of 1e308',
      '{"t_s":1e308,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      't_s must be a number from -1000000000 to 1000000000 s (got 1e+308)',
    ],
    [
      'a t_s below -1e9 s',
      '{"t_s":-1000000000.5,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      't_s must be a number from -1000000000 to 1000000000 s (got -1000000000.5)',
    ],
    // Beyond the subsonic range of the airspeed relations (CAS 500 m/s at 15 km would be TAS ≈ 787 m/s).
    [
      'an IAS of 1000 m/s',
      '{"t_s":1,"ias_mps":1000,"alt_m":100,"bank_deg":10}',
      'ias_mps must be a number from 0 to 300 m/s (got 1000)',
    ],
    [
      'a CAS of 500 m/s',
      '{"t_s":1,"cas_mps":500,"alt_m":15000,"bank_deg":10}',
      'cas_mps must be a number from 0 to 300 m/s (got 500)',
    ],
    [
      'a TAS just above 300 m/s',
      '{"t_s":1,"tas_mps":300.001,"alt_m":0,"nz":1}',
      'tas_mps must be a number from 0 to 300 m/s (got 300.001)',
    ],
    ['no airspeed', '{"t_s":1,"alt_m":0,"nz":1}', 'an airspeed is required (one of ias_mps, cas_mps, tas_mps)'],
    [
      'two airspeed keys',
      '{"t_s":1,"ias_mps":20,"tas_mps":21,"alt_m":0,"nz":1}',
      'exactly one airspeed key is allowed (got ias_mps and tas_mps)',
    ],
    ['a missing altitude', '{"t_s":1,"tas_mps":20,"nz":1}', 'alt_m is required'],
    [
      'an altitude above 20 000 m',
      '{"t_s":1,"tas_mps":20,"alt_m":25000,"nz":1}',
      'alt_m must be a number from -500 to 20000 m (got 25000)',
    ],
    [
      'an altitude below -500 m',
      '{"t_s":1,"tas_mps":20,"alt_m":-600,"nz":1}',
      'alt_m must be a number from -500 to 20000 m (got -600)',
    ],
    ['neither bank nor nz', '{"t_s":1,"tas_mps":20,"alt_m":0}', 'bank_deg or nz is required'],
    [
      'a bank beyond 180°',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"bank_deg":190}',
      'bank_deg must be a number from -180 to 180 deg (got 190)',
    ],
    [
      'an nz beyond 20 g',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":-21}',
      'nz must be a number from -20 to 20 g (got -21)',
    ],
    [
      'a zero mass',
      '{"t_s":1,"tas_mps":20,"alt_m":0,"nz":1,"mass_kg":0}',
      'mass_kg must be a number above 0 and up to 10000 kg (got 0)',
    ],
    ['an empty line', '   ', 'empty line'],
  ])('rejects %s with a clear reason', (_name, line, expected) => {
    expect(reason(line)).toBe(expected);
  });

  it('names an overflowing number as too large rather than null', () => {
    const v = parseFrameLine('{"t_s":0.5,"tas_mps":1e999,"alt_m":100,"bank_deg":10}');
    expect(v.ok).toBe(false);
    if (!v.ok) expect(v.reason).toBe('tas_mps must be a finite number ≥ 0 (got Infinity (number too large))');
  });

  it('accepts the edges of the plausible ranges', () => {
    expect(parseFrameLine('{"t_s":1,"tas_mps":0,"alt_m":-500,"bank_deg":-180}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":1,"tas_mps":0,"alt_m":20000,"nz":20}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":1000000000,"ias_mps":300,"alt_m":0,"nz":1}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":-1000000000,"cas_mps":300,"alt_m":0,"nz":1}').ok).toBe(true);
    expect(parseFrameLine('{"t_s":-1e9,"tas_mps":300,"alt_m":0,"nz":1}').ok).toBe(true);
  });
});
