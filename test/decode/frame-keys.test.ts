/**
 * Everything derived from the frame-key table agrees, key by key: the schema path, the fast object path, the fast
 * byte path, the CSV mapping and the packed batch give the same verdicts and the same frames for values at, inside
 * and beyond every bound of every key (the newer keys throttle and simulated included).
 */
import { readFileSync } from 'node:fs';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { Frame } from '../../src/core/frame.js';
import { FRAME_SLOTS, packFrame, unpackFrame } from '../../src/decode/frame-batch.js';
import { FRAME_KEYS, frameKeyRule, ruleWords, type FrameKeyRule } from '../../src/decode/frame-keys.js';
import {
  acceptAsciiFrameBytes,
  judgeAsciiFrameBytes,
  packAcceptedFrame,
  parseFrameLine,
  validateFrameObject,
  validateWithSchema,
  type FrameVerdict,
} from '../../src/decode/frame-line.js';
import { applyMapping, parseMapping } from '../../src/decode/mapping.js';
import { readFrameBatches, readFramePackedBatches } from '../../src/decode/read-frames.js';
import { REJECT_CODES } from '../../src/decode/rejections.js';

/** A valid frame without the key under test (another airspeed or attitude key keeps it valid). */
function baseFor(rule: FrameKeyRule): Record<string, unknown> {
  const base: Record<string, unknown> = { t_s: 5, alt_m: 100 };
  base[rule.key === 'tas_mps' ? 'cas_mps' : 'tas_mps'] = 18;
  base[rule.key === 'nz' ? 'bank_deg' : 'nz'] = 1.2;
  if (rule.presence === 'airspeed') delete base['tas_mps'];
  if (rule.presence === 'airspeed' && rule.key === 'tas_mps') delete base['cas_mps'];
  return base;
}

/** Values at, inside and beyond the key's rule, and of the wrong type. */
function probeValues(rule: FrameKeyRule): unknown[] {
  const wrongTypes = ['12', null, [1], { v: 1 }];
  if (rule.type === 'boolean') return [true, false, 0, 1, 'true', ...wrongTypes];
  const step = (x: number): number => Math.max(Math.abs(x) * 1e-12, 1e-9);
  return [
    rule.min,
    rule.max,
    (rule.min + rule.max) / 2,
    rule.min - step(rule.min),
    rule.max + step(rule.max),
    true,
    ...wrongTypes,
  ];
}

function withoutRaw(v: FrameVerdict): FrameVerdict {
  return v.ok ? { ok: true, frame: v.frame } : v;
}

function packedOf(frame: Frame, newSegment: boolean): Float64Array {
  const target = new Float64Array(FRAME_SLOTS);
  packFrame(target, 0, frame, newSegment);
  return target;
}

describe('the frame-key table', () => {
  it('has one row per key, each with a Frame field, units for the CSV mapping and rule words', () => {
    const keys = FRAME_KEYS.map((r) => r.key);
    expect(new Set(keys).size).toBe(keys.length);
    for (const rule of FRAME_KEYS) {
      expect(frameKeyRule(rule.key)).toBe(rule);
      expect(Object.keys(rule.units).length, rule.key).toBeGreaterThan(0);
      expect(ruleWords(rule.key), rule.key).not.toBe('valid');
      if (rule.type === 'number') expect(rule.min, rule.key).toBeLessThan(rule.max);
    }
    expect(keys).toEqual(expect.arrayContaining(['throttle', 'simulated']));
  });

  it('gives the same verdict on every path for every key at, inside and beyond its bounds', () => {
    let accepted = 0;
    let rejected = 0;
    for (const rule of FRAME_KEYS) {
      for (const value of probeValues(rule)) {
        const obj = { ...baseFor(rule), [rule.key]: value };
        const where = `${rule.key} = ${JSON.stringify(value)}`;
        const schema = validateWithSchema(obj);
        expect(validateFrameObject(obj), where).toEqual(schema);
        const text = JSON.stringify(obj);
        expect(withoutRaw(parseFrameLine(text)), where).toEqual(withoutRaw(schema));
        const bytes = Buffer.from(text, 'latin1');
        expect(withoutRaw(judgeAsciiFrameBytes(bytes, 0, bytes.length, text)), where).toEqual(withoutRaw(schema));
        expect(acceptAsciiFrameBytes(bytes, 0, bytes.length), where).toBe(schema.ok);
        if (schema.ok) {
          accepted++;
          // Packed straight from the bytes or from the frame: the same numbers; unpacked: the same frame.
          const fromBytes = new Float64Array(FRAME_SLOTS);
          packAcceptedFrame(fromBytes, 0, true);
          expect([...fromBytes], where).toEqual([...packedOf(schema.frame, true)]);
          expect(unpackFrame(fromBytes, 0), where).toEqual(schema.frame);
        } else {
          rejected++;
          expect(REJECT_CODES, where).toContain(schema.code);
          if (value !== null) expect(schema.key, where).toBe(rule.key);
        }
      }
    }
    expect(accepted).toBeGreaterThan(FRAME_KEYS.length * 2);
    expect(rejected).toBeGreaterThan(FRAME_KEYS.length * 3);
  });

  it('rejects a value beyond a bound as out_of_range and a value of another type as wrong_type, naming the key', () => {
    for (const rule of FRAME_KEYS) {
      const verdict = (value: unknown) => validateWithSchema({ ...baseFor(rule), [rule.key]: value });
      expect(verdict('12'), rule.key).toMatchObject({ ok: false, code: 'wrong_type', key: rule.key, got: '"12"' });
      if (rule.type === 'number') {
        const above = rule.max * 2 + 1;
        expect(verdict(above), rule.key).toEqual({
          ok: false,
          code: 'out_of_range',
          key: rule.key,
          got: String(above),
          reason: `${rule.key} must be ${ruleWords(rule.key)} (got ${above})`,
        });
      } else {
        expect(verdict(1), rule.key).toMatchObject({ ok: false, code: 'wrong_type', key: rule.key, got: '1' });
      }
    }
  });

  it('maps every key from a CSV column in each of its units to the frame the JSON path gives', () => {
    for (const rule of FRAME_KEYS) {
      const inside = rule.type === 'boolean' ? true : (rule.min + rule.max) / 2;
      const expected = validateWithSchema({ ...baseFor(rule), [rule.key]: inside });
      expect(expected.ok, rule.key).toBe(true);
      // The key's own unit (the first of its units) converts nothing.
      const [ownUnit] = Object.keys(rule.units);
      const parsed = parseMapping({ keys: { [rule.key]: { column: 'log_col', unit: ownUnit } } }, 'm.json');
      if (!parsed.ok) throw new Error(parsed.problems.join('; '));
      const row = { ...baseFor(rule), log_col: inside };
      expect(withoutRaw(validateFrameObject(applyMapping(row, parsed.mapping))), rule.key).toEqual(
        withoutRaw(expected),
      );
      for (const unit of Object.keys(rule.units)) {
        expect(parseMapping({ keys: { [rule.key]: { column: 'c', unit } } }, 'm.json').ok, `${rule.key} ${unit}`).toBe(
          true,
        );
      }
    }
    expect(parseMapping({ keys: { throttle: { column: 'c', unit: 'kt' } } }, 'm.json')).toEqual({
      ok: false,
      problems: [expect.stringContaining('keys.throttle.unit must be one of fraction, %')],
    });
  });

  it('reads throttle in % or as a fraction, and the simulated flag from true/false or 1/0 cells of a CSV log', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'frame-keys-'));
    const log = join(dir, 'log.csv');
    writeFileSync(
      log,
      'time_ms,KTAS,alt,roll,thr,sim\n' + '0,40,100,10,62,1\n' + '100,40,100,10,100,0\n' + '200,40,100,10,101,true\n',
    );
    const mapping = join(dir, 'm.json');
    writeFileSync(
      mapping,
      JSON.stringify({
        keys: {
          t_s: { column: 'time_ms', unit: 'ms' },
          tas_mps: { column: 'KTAS', unit: 'kt' },
          alt_m: { column: 'alt', unit: 'm' },
          bank_deg: { column: 'roll', unit: 'deg' },
          throttle: { column: 'thr', unit: '%' },
          simulated: { column: 'sim', unit: 'bool' },
        },
      }),
    );
    const lines = [];
    for await (const batch of readFrameBatches(log, { mappingPath: mapping })) lines.push(...batch);
    expect(
      lines.map((l) => (l.verdict.ok ? [l.verdict.frame.throttle, l.verdict.frame.simulated] : l.verdict.code)),
    ).toEqual([[0.62, true], [1, false], 'out_of_range']);
    // The packed path of the review worker carries the same frames and the rejection's code.
    const packed = [];
    for await (const batch of readFramePackedBatches(log, { mappingPath: mapping })) packed.push(batch);
    expect(packed.flatMap((b) => Array.from({ length: b.count }, (_, i) => unpackFrame(b.frames, i).throttle))).toEqual(
      [0.62, 1],
    );
    expect(packed.flatMap((b) => b.rejects)).toEqual([
      4,
      'throttle must be a number from 0 to 1 (got 1.01)',
      'out_of_range',
      'throttle',
      '1.01',
    ]);
  });

  it('is the table README shows: every key in the frame table and every rejection code in the codes table', () => {
    const readme = readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
    for (const rule of FRAME_KEYS) expect(readme, rule.key).toContain(`\`${rule.key}\``);
    for (const code of REJECT_CODES) expect(readme, code).toMatch(new RegExp(`\\| \`${code}\` \\|`));
  });
});
