/**
 * Column mapping for foreign CSV logs (columns → frame keys, with units). Pure: parsing a mapping
 * document and applying it to one row.
 *
 * Document (JSON):
 *   {
 *     "delimiter": ",",                       // optional CSV delimiter: "," (default), ";" or "\t"
 *     "keys": {
 *       "<frame key>": { "column": "<name in the log>", "unit": "<unit>", "scale": 1, "offset": 0 }
 *     }
 *   }
 * The value is converted as  si = unit(raw × scale + offset): scale and offset act in the log's own unit.
 * Columns not named in "keys" pass through unchanged (a column already called tas_mps is used as is).
 */
import * as z from 'zod';
import { builtOnFirstUse, describeIssues } from '../core/validation.js';
import { FRAME_KEYS, frameKeyRule, type UnitConversion } from './frame-keys.js';

const mappingSchema = builtOnFirstUse(() => {
  const KeyMappingSchema = z.strictObject({
    column: z.string({ error: 'must be the column name in the log (text)' }).min(1, { error: 'must not be empty' }),
    unit: z.string({ error: 'must be a unit name (text)' }),
    scale: z.number({ error: 'must be a number' }).optional(),
    offset: z.number({ error: 'must be a number' }).optional(),
  });

  return z
    .strictObject({
      description: z.string().optional(),
      delimiter: z.enum([',', ';', '\t'], { error: 'must be ",", ";" or "\\t"' }).optional(),
      keys: z.record(z.string(), KeyMappingSchema),
    })
    .check((ctx) => {
      for (const [key, entry] of Object.entries(ctx.value.keys)) {
        const rule = frameKeyRule(key);
        if (!rule) {
          ctx.issues.push({
            code: 'custom',
            input: key,
            path: ['keys', key],
            message: `is not a frame key (frame keys: ${FRAME_KEYS.map((r) => r.key).join(', ')})`,
          });
          continue;
        }
        const units = Object.keys(rule.units);
        if (!units.includes(entry.unit)) {
          ctx.issues.push({
            code: 'custom',
            input: entry.unit,
            path: ['keys', key, 'unit'],
            message: `must be one of ${units.join(', ')} for ${key}`,
          });
        }
      }
    });
});

export interface ColumnMapping {
  delimiter: string;
  /** Frame key → how to compute it. */
  keys: ReadonlyArray<{ key: string; column: string; convert: UnitConversion }>;
}

export type MappingResult = { ok: true; mapping: ColumnMapping } | { ok: false; problems: string[] };

export function parseMapping(input: unknown, label: string): MappingResult {
  const result = mappingSchema().safeParse(input);
  if (!result.success) return { ok: false, problems: describeIssues(label, input, result.error.issues) };
  const keys = Object.entries(result.data.keys).map(([key, entry]) => {
    const toUnit = frameKeyRule(key)!.units[entry.unit]!;
    const scale = entry.scale ?? 1;
    const offset = entry.offset ?? 0;
    return { key, column: entry.column, convert: (x: number) => toUnit(x * scale + offset) };
  });
  return { ok: true, mapping: { delimiter: result.data.delimiter ?? ',', keys } };
}

/** Apply a mapping to one row: mapped keys are converted, other columns pass through. Non-numbers pass unconverted so validation names them. */
export function applyMapping(row: Record<string, unknown>, mapping: ColumnMapping): Record<string, unknown> {
  const out: Record<string, unknown> = { ...row };
  for (const { key, column, convert } of mapping.keys) {
    const value = row[column];
    if (column !== key) delete out[column];
    if (value === undefined || value === null) {
      delete out[key];
      continue;
    }
    out[key] = typeof value === 'number' ? convert(value) : value;
  }
  return out;
}

/** How many header columns a problem lists before "…". */
const COLUMNS_SHOWN = 12;

/**
 * The mapped columns missing from a CSV header, one problem each, e.g.
 * `m.json: keys.bank_deg.column "roll" is not a column of log.csv (columns: time_ms, KIAS, …)`; empty when all are there.
 */
export function missingColumnProblems(
  mapping: ColumnMapping,
  header: readonly string[],
  mappingLabel: string,
  logLabel: string,
): string[] {
  const present = new Set(header);
  const shown = header.slice(0, COLUMNS_SHOWN).join(', ') + (header.length > COLUMNS_SHOWN ? ', …' : '');
  return mapping.keys
    .filter(({ column }) => !present.has(column))
    .map(
      ({ key, column }) =>
        `${mappingLabel}: keys.${key}.column ${JSON.stringify(column)} is not a column of ${logLabel} (columns: ${shown})`,
    );
}
