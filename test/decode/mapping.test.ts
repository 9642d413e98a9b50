import { describe, expect, it } from 'vitest';
import { applyMapping, missingColumnProblems, parseMapping } from '../../src/decode/mapping.js';
import { splitCsvLine, csvRow } from '../../src/decode/csv.js';

function convert(key: string, unit: string, raw: number, extra: { scale?: number; offset?: number } = {}): number {
  const parsed = parseMapping({ keys: { [key]: { column: 'c', unit, ...extra } } }, 'm.json');
  if (!parsed.ok) throw new Error(parsed.problems.join('; '));
  return applyMapping({ c: raw }, parsed.mapping)[key] as number;
}

describe('mapping units', () => {
  // Exact definitions: international knot 1852 m/h; statute mile 1609.344 m; international foot 0.3048 m
  // (NIST SP 811, appendix B); standard gravity 9.80665 m/s² (CGPM 1901, also USSA 1976); °C = (°F − 32)·5/9.
  it.each([
    ['t_s', 'ms', 1500, 1.5],
    ['t_s', 's', 1.5, 1.5],
    ['tas_mps', 'kt', 100, 51.444444444444],
    ['tas_mps', 'km/h', 72, 20],
    ['tas_mps', 'mph', 60, 26.8224],
    ['tas_mps', 'm/s', 20, 20],
    ['alt_m', 'ft', 1000, 304.8],
    ['alt_m', 'm', 120, 120],
    ['bank_deg', 'deg', 30, 30],
    ['bank_deg', 'rad', Math.PI / 6, 30],
    ['nz', 'g', 2, 2],
    ['nz', 'm/s²', 19.6133, 2],
    ['oat_c', '°C', 15, 15],
    ['oat_c', '°F', 59, 15],
    ['oat_c', '°F', -40, -40],
  ])('%s from %s: %f → %f', (key, unit, raw, expected) => {
    expect(convert(key, unit, raw)).toBeCloseTo(expected, 9);
  });

  it('applies scale and offset in the log unit before converting', () => {
    // A body-axis accelerometer reading −9.80665 m/s² in level flight (z down negative): scale −1 → 1 g.
    expect(convert('nz', 'm/s²', -9.80665, { scale: -1 })).toBeCloseTo(1, 12);
    // Centi-knots with an offset: (2000 × 0.01 + 0) kt = 20 kt.
    expect(convert('ias_mps', 'kt', 2000, { scale: 0.01 })).toBeCloseTo((20 * 1852) / 3600, 12);
    expect(convert('t_s', 's', 10, { offset: -10 })).toBe(0);
  });

  it('renames mapped columns and passes other columns through; text stays text so validation can name it', () => {
    const parsed = parseMapping({ keys: { tas_mps: { column: 'V', unit: 'kt' } } }, 'm.json');
    expect(parsed.ok).toBe(true);
    if (!parsed.ok) return;
    expect(applyMapping({ V: 'fast', alt_m: 3, note: 'x' }, parsed.mapping)).toEqual({
      tas_mps: 'fast',
      alt_m: 3,
      note: 'x',
    });
    expect(applyMapping({ alt_m: 3 }, parsed.mapping)).toEqual({ alt_m: 3 });
  });

  it('names each mapped column missing from a CSV header, with the columns there are', () => {
    const parsed = parseMapping(
      {
        keys: {
          t_s: { column: 'time_ms', unit: 'ms' },
          bank_deg: { column: 'missingcol', unit: 'deg' },
          nz: { column: 'az', unit: 'g' },
        },
      },
      'm.json',
    );
    if (!parsed.ok) throw new Error(parsed.problems.join('; '));
    expect(missingColumnProblems(parsed.mapping, ['time_ms', 'KIAS', 'az'], 'm.json', 'log.csv')).toEqual([
      'm.json: keys.bank_deg.column "missingcol" is not a column of log.csv (columns: time_ms, KIAS, az)',
    ]);
    expect(missingColumnProblems(parsed.mapping, ['time_ms', 'missingcol', 'az'], 'm.json', 'log.csv')).toEqual([]);
    // A wide log lists its first 12 columns only.
    const wide = Array.from({ length: 30 }, (_, i) => `c${i}`);
    expect(missingColumnProblems(parsed.mapping, wide, 'm.json', 'wide.csv')).toEqual(
      ['t_s', 'bank_deg', 'nz'].map((key) => {
        const column = { t_s: 'time_ms', bank_deg: 'missingcol', nz: 'az' }[key];
        return `m.json: keys.${key}.column "${column}" is not a column of wide.csv (columns: ${wide.slice(0, 12).join(', ')}, …)`;
      }),
    );
  });

  it('rejects unknown keys, wrong units and a bad delimiter with one line each', () => {
    const r = parseMapping(
      {
        delimiter: '|',
        keys: { alt_m: { column: 'h', unit: 'kt' }, bank_deg: { column: 'r', unit: 'deg', scale: 'x' } },
      },
      'm.json',
    );
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.problems).toEqual([
      'm.json: delimiter must be ",", ";" or "\\t" (got "|")',
      'm.json: keys.bank_deg.scale must be a number (got "x")',
    ]);
    const units = parseMapping({ keys: { alt_m: { column: 'h', unit: 'kt' } } }, 'm.json');
    expect(!units.ok && units.problems).toEqual(['m.json: keys.alt_m.unit must be one of m, ft for alt_m (got "kt")']);
  });
});

describe('CSV lines', () => {
  it('splits quoted cells with embedded delimiters and doubled quotes', () => {
    expect(splitCsvLine('1, "a,b" ,"say ""hi""",')).toEqual(['1', 'a,b', 'say "hi"', '']);
    expect(splitCsvLine('1;2;3', ';')).toEqual(['1', '2', '3']);
  });

  it('reads decimal numbers only; other text stays text; empty cells are absent', () => {
    expect(csvRow(['a', 'b', 'c', 'd'], '1.5e3,0x10,,-.5')).toEqual({ ok: true, row: { a: 1500, b: '0x10', d: -0.5 } });
  });
});
