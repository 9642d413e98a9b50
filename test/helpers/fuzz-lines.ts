/**
 * Seeded generator of abusive telemetry lines for the fault suite: valid frames, frames mutated the way a noisy
 * radio link or a buggy sender mangles them, and random garbage. Deterministic for a seed, so a failure can be
 * replayed. No generated line holds an LF (one generated line = one physical line) and none is blank.
 */

import { createUniform } from '../../src/sim/noise.js';

/** Seeded uniform generator on [0, 1): the simulator's (mulberry32, common practice for reproducible data). */
export const seededRandom = createUniform;

export interface FuzzLine {
  bytes: Buffer;
  /** How the line was made, for failure messages and the mix check. */
  kind: 'valid' | 'random' | `mutated:${string}`;
}

const KEYS = ['t_s', 'ias_mps', 'cas_mps', 'tas_mps', 'alt_m', 'bank_deg', 'nz', 'oat_c', 'mass_kg'] as const;
const HUGE = ['1e308', '1e400', '-1e400', '123456789012345678901234567890', '9007199254740993', '-0', '1e-400'];
const NOT_FINITE = ['NaN', 'Infinity', '-Infinity', '"NaN"', 'nan', 'null', 'true', '[]', '{}', '"20"'];

function validFrameText(tS: number, rand: () => number): string {
  const speedKey = ['tas_mps', 'cas_mps', 'ias_mps'][Math.floor(rand() * 3)]!;
  const fields: Record<string, number> = {
    t_s: Number(tS.toFixed(3)),
    [speedKey]: Number((14 + rand() * 12).toFixed(2)),
    alt_m: Number((50 + rand() * 300).toFixed(1)),
  };
  const r = rand();
  if (r < 0.4) fields['bank_deg'] = Number((rand() * 120 - 60).toFixed(2));
  else if (r < 0.7) fields['nz'] = Number((0.5 + rand() * 2.5).toFixed(3));
  else {
    fields['bank_deg'] = Number((rand() * 120 - 60).toFixed(2));
    fields['nz'] = Number((0.5 + rand() * 2.5).toFixed(3));
  }
  if (rand() < 0.2) fields['oat_c'] = Number((rand() * 40 - 10).toFixed(1));
  if (rand() < 0.1) fields['mass_kg'] = Number((2 + rand() * 2).toFixed(2));
  return JSON.stringify(fields);
}

type Mutation = (text: string, rand: () => number) => Buffer;

const pick = <T>(items: readonly T[], rand: () => number): T => items[Math.floor(rand() * items.length)]!;
const utf8 = (s: string): Buffer => Buffer.from(s, 'utf8');

/** Replace the value of one key (the text after `"key":` up to the next , or }). */
function replaceValue(text: string, key: string, value: string): string {
  return text.replace(new RegExp(`("${key}":)([^,}]*)`), `$1${value}`);
}

const MUTATIONS: ReadonlyArray<readonly [string, Mutation]> = [
  [
    'byte-flip',
    (t, r) => {
      const b = utf8(t);
      const flips = 1 + Math.floor(r() * 3);
      for (let i = 0; i < flips; i++) b[Math.floor(r() * b.length)] = Math.floor(r() * 256);
      return b;
    },
  ],
  ['truncate', (t, r) => utf8(t.slice(0, 1 + Math.floor(r() * (t.length - 1))))],
  [
    'drop-char',
    (t, r) => {
      const i = Math.floor(r() * t.length);
      return utf8(t.slice(0, i) + t.slice(i + 1));
    },
  ],
  [
    'key-swap',
    (t, r) => {
      // Rename one key to another (duplicates, two airspeeds, a missing required key).
      const from = pick(KEYS, r);
      const to = pick([...KEYS, 'speed', 'T_S', ''], r);
      return utf8(t.replace(`"${from}"`, `"${to}"`));
    },
  ],
  [
    'value-swap',
    (t, r) => {
      // Two values exchanged: altitude as time, bank as speed…
      const obj = JSON.parse(t) as Record<string, unknown>;
      const keys = Object.keys(obj);
      const a = pick(keys, r);
      const b = pick(keys, r);
      [obj[a], obj[b]] = [obj[b], obj[a]];
      return utf8(JSON.stringify(obj));
    },
  ],
  ['huge-number', (t, r) => utf8(replaceValue(t, pick(KEYS, r), pick(HUGE, r)))],
  [
    'not-finite',
    (t, r) =>
      utf8(
        replaceValue(
          t,
          pick(['t_s', 'tas_mps', 'cas_mps', 'ias_mps', 'alt_m', 'bank_deg', 'nz'], r),
          pick(NOT_FINITE, r),
        ),
      ),
  ],
  [
    'out-of-range',
    (t, r) => {
      const [key, value] = pick(
        [
          ['bank_deg', '181'],
          ['bank_deg', '-720'],
          ['nz', '25'],
          ['alt_m', '-600'],
          ['alt_m', '20001'],
          ['tas_mps', '-3'],
          ['oat_c', '500'],
          ['mass_kg', '0'],
        ] as const,
        r,
      );
      return utf8(t.includes(`"${key}"`) ? replaceValue(t, key, value) : t.replace('{', `{"${key}":${value},`));
    },
  ],
  [
    'nul',
    (t, r) => {
      const i = Math.floor(r() * t.length);
      return Buffer.concat([utf8(t.slice(0, i)), Buffer.from([0]), utf8(t.slice(i))]);
    },
  ],
  [
    'invalid-utf8',
    (t, r) => {
      const bad = pick(
        [[0xff], [0xc3], [0xe2, 0x82], [0xed, 0xa0, 0x80], [0xf8, 0x88, 0x80, 0x80, 0x80], [0xc0, 0xaf]],
        r,
      );
      const i = Math.floor(r() * t.length);
      return Buffer.concat([utf8(t.slice(0, i)), Buffer.from(bad), utf8(t.slice(i))]);
    },
  ],
  [
    'very-long',
    (t, r) => {
      // Either over the 64 KiB cap (cut) or long but under it (an extra key: accepted if the rest is valid).
      const size = r() < 0.1 ? 66_000 + Math.floor(r() * 8_000) : 1000 + Math.floor(r() * 5_000);
      return utf8(t.replace('{', `{"pad":"${'x'.repeat(size)}",`));
    },
  ],
  ['wrong-type', (t, r) => utf8(replaceValue(t, pick(KEYS, r), pick(['"fast"', '[1,2]', '{"v":1}', 'false'], r)))],
  ['not-an-object', (t, r) => utf8(pick([`[${t}]`, JSON.stringify(t), '42', 'null', `${t}${t}`, `${t},`], r))],
  ['crlf-bom', (t, r) => utf8(pick([`${t}\r`, `\uFEFF${t}`, `\uFEFF${t}\r`, `  ${t}\t`], r))],
];

/** Make one random garbage line: bytes of any value (LF excluded), or printable junk. */
function randomLine(rand: () => number): Buffer {
  const length = 1 + Math.floor(rand() * (rand() < 0.05 ? 5000 : 120));
  const b = Buffer.alloc(length);
  const printable = rand() < 0.5;
  for (let i = 0; i < length; i++) b[i] = printable ? 0x20 + Math.floor(rand() * 95) : Math.floor(rand() * 256);
  return b;
}

/** An LF would split the line; a blank line is skipped rather than judged. Keep one non-blank physical line. */
function oneLine(bytes: Buffer): Buffer {
  for (let i = 0; i < bytes.length; i++) if (bytes[i] === 0x0a) bytes[i] = 0x3f;
  const text = bytes
    .toString('utf8')
    .replace(/^\uFEFF/, '')
    .replace(/\r$/, '');
  return text.trim() === '' ? Buffer.concat([bytes, Buffer.from('?')]) : bytes;
}

/**
 * `count` lines: about 35 % valid frames (t_s advancing 0.02 s per line), 50 % mutated frames, 15 % random bytes.
 * The first line is always a valid frame (so a file of these reads as NDJSON).
 */
export function fuzzLines(count: number, seed: number): FuzzLine[] {
  const rand = seededRandom(seed);
  const lines: FuzzLine[] = [];
  for (let i = 0; i < count; i++) {
    const text = validFrameText(i * 0.02, rand);
    const r = i === 0 ? 0 : rand();
    if (r < 0.35) {
      lines.push({ bytes: utf8(text), kind: 'valid' });
    } else if (r < 0.85) {
      const [name, mutate] = pick(MUTATIONS, rand);
      lines.push({ bytes: oneLine(mutate(text, rand)), kind: `mutated:${name}` });
    } else {
      lines.push({ bytes: oneLine(randomLine(rand)), kind: 'random' });
    }
  }
  return lines;
}

/** Every reason the decoder may give, by shape: a bad line always carries one of these. */
export const KNOWN_REASON = new RegExp(
  '^(' +
    [
      'invalid JSON( \\((truncated line\\?|NaN or Infinity is not a finite number)\\))?',
      'binary noise \\(control or invalid bytes\\)',
      'not a JSON object \\(got .+\\)',
      '[\\w]+ is required',
      '[\\w]+ must be .+ \\(got .+\\)',
      'an airspeed is required \\(one of ias_mps, cas_mps, tas_mps\\)',
      'exactly one airspeed key is allowed \\(got .+\\)',
      'bank_deg or nz is required',
      'time not increasing',
      'line longer than 65536 bytes \\(cut\\)',
    ].join('|') +
    ')$',
  's',
);
