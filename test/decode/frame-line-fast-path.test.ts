/**
 * The hand-written fast path of frame validation must give exactly the schema's verdicts: the same frames for the
 * objects it accepts, and (by falling back to the schema) the same reasons for everything else.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  acceptFrameFast,
  judgeAsciiFrameBytes,
  parseAsciiFrameLine,
  parseFrameLine,
  validateFrameObject,
  validateWithSchema,
  type FrameVerdict,
} from '../../src/decode/frame-line.js';
import { FRAME_KEYS as FRAME_KEY_TABLE } from '../../src/decode/frame-keys.js';

const FRAME_KEYS = FRAME_KEY_TABLE.map((r) => r.key);

/** Just beyond x (a step well above the rounding of x, so that the neighbour is a different double). */
const beyond = (x: number, sign: 1 | -1): number => x + sign * Math.max(Math.abs(x) * 1e-15, 1e-9);

/**
 * Numbers at and just beyond every bound of the table, and the awkward ones (−0, NaN, ±Infinity, the smallest
 * positive).
 */
const EDGE_NUMBERS = [
  0,
  -0,
  1,
  -1,
  15,
  Number.MIN_VALUE,
  -Number.MIN_VALUE,
  NaN,
  Infinity,
  -Infinity,
  Number.MAX_VALUE,
  1e308,
  -1e308,
  500,
  1000,
  ...FRAME_KEY_TABLE.flatMap((r) =>
    r.type === 'number' ? [r.min, r.max, beyond(r.min, -1), beyond(r.max, 1), -r.max, beyond(-r.max, -1)] : [],
  ),
];

const anyValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 6, arbitrary: fc.constantFrom(...EDGE_NUMBERS) },
  { weight: 4, arbitrary: fc.double() },
  { weight: 2, arbitrary: fc.constantFrom(null, undefined) },
  {
    weight: 1,
    arbitrary: fc.oneof(fc.string(), fc.boolean(), fc.constant([1]), fc.constant({ v: 1 }), fc.constant('12')),
  },
);

/** Objects built from the frame keys (each present or not) plus an occasional foreign key. */
const frameLikeObject: fc.Arbitrary<Record<string, unknown>> = fc
  .record(
    Object.fromEntries(FRAME_KEYS.map((k) => [k, anyValue])) as Record<
      (typeof FRAME_KEYS)[number],
      fc.Arbitrary<unknown>
    >,
    { requiredKeys: [] },
  )
  .chain((obj) =>
    fc.option(fc.tuple(fc.string(), anyValue)).map((extra) => (extra ? { ...obj, [extra[0]]: extra[1] } : obj)),
  );

/** Mostly valid frames with one key disturbed, so that the accepting branches are exercised too. */
const nearlyValidFrame: fc.Arbitrary<Record<string, unknown>> = fc
  .tuple(
    fc.constantFrom('ias_mps', 'cas_mps', 'tas_mps'),
    fc.constantFrom<ReadonlyArray<string>>(['bank_deg'], ['nz'], ['bank_deg', 'nz']),
    fc.constantFrom(...FRAME_KEYS, 'none'),
    fc.constantFrom<unknown>(undefined, true, false),
    anyValue,
    fc.boolean(),
  )
  .map(([speedKey, attitude, disturbed, simulated, value, withOptional]) => {
    const obj: Record<string, unknown> = { t_s: 12.5, [speedKey]: 18, alt_m: 120 };
    for (const k of attitude) obj[k] = k === 'nz' ? 1.3 : -35;
    if (withOptional) Object.assign(obj, { oat_c: 11, mass_kg: 3.2, throttle: 0.75 });
    if (simulated !== undefined) obj['simulated'] = simulated;
    if (disturbed !== 'none') obj[disturbed] = value;
    return obj;
  });

describe('frame validation fast path', () => {
  it('gives the schema verdict for every object in a corpus of good and bad frames', () => {
    const corpus: unknown[] = [
      { t_s: 1, tas_mps: 20, alt_m: 100, bank_deg: 30 },
      { t_s: 1, ias_mps: 20, alt_m: 100, nz: 1.2, oat_c: null, mass_kg: null },
      { t_s: 1, cas_mps: 0, alt_m: -500, bank_deg: -180, nz: -20, oat_c: -90, mass_kg: 10_000 },
      { t_s: 1, tas_mps: 20, alt_m: 20_000, bank_deg: 180, nz: 20, oat_c: 70, mass_kg: Number.MIN_VALUE },
      { t_s: 1, tas_mps: 20, ias_mps: null, cas_mps: null, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 20, ias_mps: 20, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 20, ias_mps: 20, cas_mps: 3, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: -0, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: -1e-300, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 20, alt_m: 0 },
      { t_s: 1, tas_mps: 20, alt_m: 0, bank_deg: null, nz: null },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, mass_kg: 0 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, mass_kg: -0 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, mass_kg: 10_000.5 },
      { t_s: Infinity, tas_mps: 20, alt_m: 0, nz: 1 },
      { t_s: NaN, tas_mps: 20, alt_m: 0, nz: 1 },
      { t_s: null, tas_mps: 20, alt_m: 0, nz: 1 },
      { t_s: '1', tas_mps: 20, alt_m: 0, nz: 1 },
      { tas_mps: 20, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 20, nz: 1 },
      { t_s: 1, tas_mps: 20, alt_m: null, nz: 1 },
      { t_s: 1, tas_mps: 'fast', alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: true },
      { t_s: 1, tas_mps: 20, alt_m: 0, bank_deg: [30] },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, oat_c: 71 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, oat_c: '15' },
      { t_s: 1e308, tas_mps: 20, alt_m: 100, bank_deg: 10 },
      { t_s: 1e9, tas_mps: 20, alt_m: 100, bank_deg: 10 },
      { t_s: -1e9, tas_mps: 20, alt_m: 100, bank_deg: 10 },
      { t_s: 1e9 + 1e-6, tas_mps: 20, alt_m: 100, bank_deg: 10 },
      { t_s: -1e9 - 1e-6, tas_mps: 20, alt_m: 100, bank_deg: 10 },
      { t_s: 1, ias_mps: 300, alt_m: 0, nz: 1 },
      { t_s: 1, cas_mps: 300, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 300, alt_m: 0, nz: 1 },
      { t_s: 1, ias_mps: 300 + 1e-9, alt_m: 0, nz: 1 },
      { t_s: 1, cas_mps: 300 + 1e-9, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 300 + 1e-9, alt_m: 0, nz: 1 },
      { t_s: 1, ias_mps: 1000, alt_m: 100, bank_deg: 10 },
      { t_s: 1, cas_mps: 500, alt_m: 15_000, bank_deg: 10 },
      { t_s: 1, tas_mps: 20, ias_mps: 1000, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: Infinity, alt_m: 0, nz: 1 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, throttle: 0, simulated: true },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, throttle: 1, simulated: false },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, throttle: null, simulated: null },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, throttle: 1.01 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, throttle: -0.01 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, throttle: true },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, simulated: 1 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, simulated: 'true' },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: true },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, mass_kg: 0.05 },
      { t_s: 1, tas_mps: 20, alt_m: 0, nz: 1, mass_kg: 0.0499 },
      JSON.parse('{"__proto__":{"t_s":1},"tas_mps":20,"alt_m":0,"nz":1}'),
      {},
      [],
      [1, 2],
      null,
      42,
      'text',
      true,
    ];
    for (const obj of corpus) expect(validateFrameObject(obj)).toEqual(validateWithSchema(obj));
  });

  it('accepts a plain valid frame without the schema and maps it like the schema path', () => {
    const raw = { t_s: 3, cas_mps: 17, alt_m: 90, bank_deg: 25, nz: 1.1, oat_c: 9, mass_kg: 2.8, rssi: -60 };
    expect(acceptFrameFast(raw)).toEqual({
      tS: 3,
      airspeedKind: 'cas',
      airspeedMps: 17,
      altM: 90,
      bankDeg: 25,
      nz: 1.1,
      oatC: 9,
      massKg: 2.8,
    });
    expect(acceptFrameFast({ ...raw, nz: 21 })).toBeNull();
  });

  it('gives the schema verdict on random objects of frame keys (property)', () => {
    fc.assert(
      fc.property(frameLikeObject, (obj) => {
        expect(validateFrameObject(obj)).toEqual(validateWithSchema(obj));
      }),
      { numRuns: 3000 },
    );
  });

  it('gives the schema verdict on valid frames with one key disturbed (property)', () => {
    fc.assert(
      fc.property(nearlyValidFrame, (obj) => {
        const fast = validateFrameObject(obj);
        expect(fast).toEqual(validateWithSchema(obj));
        if (fast.ok) expect(fast.raw).toBe(obj);
      }),
      { numRuns: 3000 },
    );
  });

  it('judges a line free of U+007F and U+FFFD like parseFrameLine, control characters included (property)', () => {
    const control = fc.constantFrom('\u0000', '\u0001', '\u0008', '\u000B', '\u000C', '\u001B', '\u001F', '\t', '\r');
    const line = fc.oneof(
      nearlyValidFrame.map((o) => JSON.stringify(o)),
      fc
        .tuple(
          nearlyValidFrame.map((o) => JSON.stringify(o)),
          fc.nat(),
          control,
        )
        .map(([text, at, ch]) => text.slice(0, at % (text.length + 1)) + ch + text.slice(at % (text.length + 1))),
      fc.string().filter((s) => !/[\u007F\uFFFD]/.test(s)),
      fc.constantFrom(
        '\uFEFF{"t_s":1,"tas_mps":2,"alt_m":0,"nz":1}\r',
        '  {"t_s":1',
        '{"t_s":NaN}',
        '',
        ' \t ',
        '\u000B{"t_s":1}\u000C',
      ),
    );
    fc.assert(
      fc.property(line, (text) => {
        expect(parseAsciiFrameLine(text)).toEqual(parseFrameLine(text));
      }),
      { numRuns: 2000 },
    );
  });
});

/** A verdict without the raw object, to compare with judgeAsciiFrameBytes. */
function withoutRaw(v: FrameVerdict): FrameVerdict {
  return v.ok ? { ok: true, frame: v.frame } : v;
}

/** Number texts: valid JSON numbers of every shape, and near misses JSON.parse refuses. */
const numberText = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }).map((x) => JSON.stringify(x)),
  fc
    .tuple(
      fc.boolean(),
      fc.bigInt({ min: 0n, max: 10n ** 20n }),
      fc.nat({ max: 12 }),
      fc.option(fc.integer({ min: -30, max: 30 })),
    )
    .map(([negative, digits, point, exp]) => {
      const d = digits.toString();
      const cut = Math.min(point, d.length - 1);
      const body = cut > 0 ? `${d.slice(0, d.length - cut)}.${d.slice(d.length - cut)}` : d;
      return `${negative ? '-' : ''}${body}${exp === null ? '' : `e${exp}`}`;
    }),
  fc.constantFrom(
    '-0',
    '0',
    '0.0',
    '-0.0',
    '1e400',
    '-1e400',
    '1e-400',
    '01',
    '1.',
    '.5',
    '+1',
    '-',
    '1e',
    '1e+',
    '1E+2',
    '0e0',
    '-0e-0',
    '9007199254740993',
    '123456789012345.6',
    '0.1234567890123456789',
    '5e-324',
    '1.7976931348623157e308',
    '1e22',
    '1e23',
    '1e-22',
    '1e-23',
    '2.675',
    '1.005',
    '0.30000000000000004',
    '1.5e0003',
    '1.5e00001',
    '1e0000000000000000000001',
    '00',
  ),
);

const jsonSpace = fc.constantFrom('', '', ' ', '\t', '  ', '\n');
const valueText = fc.oneof(
  { weight: 6, arbitrary: numberText },
  {
    weight: 1,
    arbitrary: fc.constantFrom(
      'null',
      'true',
      'false',
      '"x"',
      '"a\\"b"',
      '[1]',
      '{"a":1}',
      'nul',
      'NaN',
      'Infinity',
      '"\u0001"',
    ),
  },
);
const keyText = fc.constantFrom(
  't_s',
  'tas_mps',
  'cas_mps',
  'ias_mps',
  'alt_m',
  'bank_deg',
  'nz',
  'oat_c',
  'mass_kg',
  'note',
  '__proto__',
  'constructor',
  'toString',
  'Nz',
  't_s ',
  'mass_kgx',
  'alt_',
  't\\u005fs',
  'oat_m',
  'tas_kgs',
  'throttle',
  'simulated',
  'throttlE',
  'simulate',
  'bank_dex',
);

/** Flat objects of frame keys in any order with any spacing, sometimes broken. */
const objectText = fc
  .tuple(
    fc.array(fc.tuple(keyText, jsonSpace, jsonSpace, valueText), { minLength: 0, maxLength: 9 }),
    fc.tuple(
      fc.constantFrom(12.5, 0, -3),
      fc.constantFrom('tas_mps', 'cas_mps', 'ias_mps'),
      fc.double({ min: 0, max: 40, noNaN: true }),
    ),
    fc.constantFrom('none', 'none', 'none', 'drop-brace', 'trailing-x', 'double-comma', 'leading-space'),
  )
  .map(([pairs, [tS, speedKey, speed], damage]) => {
    const base: Array<[string, string, string, string]> = [
      ['t_s', '', '', String(tS)],
      [speedKey, '', ' ', JSON.stringify(speed)],
      ['alt_m', '', '', '120'],
      ['nz', '', '', '1.2'],
    ];
    const all = [...base, ...pairs].map(([k, s1, s2, v]) => `"${k}"${s1}:${s2}${v}`);
    let text = `{${all.join(',')}}`;
    if (damage === 'drop-brace') text = text.slice(0, -1);
    if (damage === 'trailing-x') text += 'x';
    if (damage === 'double-comma') text = text.replace(',', ',,');
    if (damage === 'leading-space') text = ' ' + text;
    return text;
  });

describe('reading a frame straight from the bytes of an ASCII line', () => {
  it('gives the verdict of parseFrameLine, without the raw object (property)', () => {
    fc.assert(
      fc.property(objectText, fc.boolean(), (text, crlf) => {
        const bytes = Buffer.from(crlf ? text + '\r' : text, 'latin1');
        const v = judgeAsciiFrameBytes(bytes, 0, bytes.length, text);
        const expected = withoutRaw(parseFrameLine(text));
        expect(withoutRaw(v)).toEqual(expected);
        if (v.ok && expected.ok) {
          // −0 and the exact doubles of JSON.parse, key by key.
          for (const key of ['tS', 'airspeedMps', 'altM', 'bankDeg', 'nz', 'oatC', 'massKg', 'throttle'] as const) {
            expect(Object.is(v.frame[key], expected.frame[key])).toBe(true);
          }
        }
      }),
      { numRuns: 5000 },
    );
  });

  it('reads numbers exactly as JSON.parse does (property)', () => {
    fc.assert(
      fc.property(numberText, (number) => {
        const text = `{"t_s":1,"tas_mps":15,"alt_m":0,"nz":${number}}`;
        const bytes = Buffer.from(text, 'latin1');
        const v = judgeAsciiFrameBytes(bytes, 0, bytes.length, text);
        const expected = withoutRaw(parseFrameLine(text));
        expect(withoutRaw(v)).toEqual(expected);
        if (v.ok && expected.ok) expect(Object.is(v.frame.nz, expected.frame.nz)).toBe(true);
      }),
      { numRuns: 5000 },
    );
  });

  it('gives the same verdict on the time and airspeed bounds, just inside and just outside, on every path', () => {
    const lines = [
      '{"t_s":1e308,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      '{"t_s":1000000000,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      '{"t_s":-1000000000,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      '{"t_s":1e9,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      '{"t_s":1000000000.000001,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      '{"t_s":-1000000000.000001,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      '{"t_s":-1.0000000001e9,"tas_mps":20,"alt_m":100,"bank_deg":10}',
      ...['ias_mps', 'cas_mps', 'tas_mps'].flatMap((key) => [
        `{"t_s":1,"${key}":300,"alt_m":0,"nz":1}`,
        `{"t_s":1,"${key}":3e2,"alt_m":0,"nz":1}`,
        `{"t_s":1,"${key}":300.000000001,"alt_m":0,"nz":1}`,
        `{"t_s":1,"${key}":299.999999999,"alt_m":0,"nz":1}`,
        `{"t_s":1,"${key}":1000,"alt_m":15000,"bank_deg":10}`,
      ]),
    ];
    const verdicts = lines.map((text) => {
      const bytes = Buffer.from(text, 'latin1');
      const viaBytes = withoutRaw(judgeAsciiFrameBytes(bytes, 0, bytes.length, text));
      expect(withoutRaw(parseAsciiFrameLine(text))).toEqual(viaBytes);
      expect(withoutRaw(parseFrameLine(text))).toEqual(viaBytes);
      expect(withoutRaw(validateWithSchema(JSON.parse(text)))).toEqual(viaBytes);
      expect(withoutRaw(validateFrameObject(JSON.parse(text)))).toEqual(viaBytes);
      return viaBytes.ok ? 'ok' : viaBytes.reason;
    });
    expect(verdicts).toEqual([
      't_s must be a number from -1000000000 to 1000000000 s (got 1e+308)',
      'ok',
      'ok',
      'ok',
      't_s must be a number from -1000000000 to 1000000000 s (got 1000000000.000001)',
      't_s must be a number from -1000000000 to 1000000000 s (got -1000000000.000001)',
      't_s must be a number from -1000000000 to 1000000000 s (got -1000000000.1)',
      ...['ias_mps', 'cas_mps', 'tas_mps'].flatMap((key) => [
        'ok',
        'ok',
        `${key} must be a number from 0 to 300 m/s (got 300.000000001)`,
        'ok',
        `${key} must be a number from 0 to 300 m/s (got 1000)`,
      ]),
    ]);
  });

  it('reads a line in the middle of a larger buffer', () => {
    const line = '{"t_s":2.5,"tas_mps":17.25,"alt_m":-0,"bank_deg":-0.5e1,"note":"ok"}';
    const bytes = Buffer.from(`junk\n${line}\r\nmore`, 'latin1');
    const v = judgeAsciiFrameBytes(bytes, 5, 5 + line.length + 1, line);
    expect(v).toEqual({ ok: true, frame: { tS: 2.5, airspeedKind: 'tas', airspeedMps: 17.25, altM: -0, bankDeg: -5 } });
    expect(v.ok && Object.is(v.frame.altM, -0)).toBe(true);
  });
});
