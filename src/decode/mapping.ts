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
import { z } from 'zod';
import { DEG_PER_RAD, FOOT_M, G0_MPS2, KELVIN_OFFSET, KMH_MPS, KNOT_MPS, MPH_MPS, POUND_KG } from '../core/units.js';
import { describeIssues } from '../core/validation.js';

type Convert = (x: number) => number;
const linear =
  (factor: number): Convert =>
  (x) =>
    x * factor;

/** Units accepted per frame key, each with its conversion to the key's own unit. */
const UNITS_BY_KIND = {
  time: { s: linear(1), ms: linear(0.001) },
  speed: { 'm/s': linear(1), kt: linear(KNOT_MPS), 'km/h': linear(KMH_MPS), mph: linear(MPH_MPS) },
  length: { m: linear(1), ft: linear(FOOT_M) },
  angle: { deg: linear(1), rad: linear(DEG_PER_RAD) },
  load: { g: linear(1), 'm/s²': linear(1 / G0_MPS2), 'm/s2': linear(1 / G0_MPS2) },
  temperature: {
    '°C': linear(1),
    C: linear(1),
    '°F': (x: number) => ((x - 32) * 5) / 9,
    F: (x: number) => ((x - 32) * 5) / 9,
    K: (x: number) => x - KELVIN_OFFSET,
  },
  mass: { kg: linear(1), lb: linear(POUND_KG) },
} as const satisfies Record<string, Record<string, Convert>>;

type Kind = keyof typeof UNITS_BY_KIND;

export const FRAME_KEY_KINDS: Readonly<Record<string, Kind>> = {
  t_s: 'time',
  ias_mps: 'speed',
  cas_mps: 'speed',
  tas_mps: 'speed',
  alt_m: 'length',
  bank_deg: 'angle',
  nz: 'load',
  oat_c: 'temperature',
  mass_kg: 'mass',
};

const KeyMappingSchema = z.strictObject({
  column: z.string({ error: 'must be the column name in the log (text)' }).min(1, { error: 'must not be empty' }),
  unit: z.string({ error: 'must be a unit name (text)' }),
  scale: z.number({ error: 'must be a number' }).optional(),
  offset: z.number({ error: 'must be a number' }).optional(),
});

export const MappingSchema = z
  .strictObject({
    description: z.string().optional(),
    delimiter: z.enum([',', ';', '\t'], { error: 'must be ",", ";" or "\\t"' }).optional(),
    keys: z.record(z.string(), KeyMappingSchema),
  })
  .check((ctx) => {
    for (const [key, entry] of Object.entries(ctx.value.keys)) {
      const kind = Object.hasOwn(FRAME_KEY_KINDS, key) ? FRAME_KEY_KINDS[key] : undefined; // not "constructor"…
      if (!kind) {
        ctx.issues.push({
          code: 'custom',
          input: key,
          path: ['keys', key],
          message: `is not a frame key (frame keys: ${Object.keys(FRAME_KEY_KINDS).join(', ')})`,
        });
        continue;
      }
      const units = Object.keys(UNITS_BY_KIND[kind]);
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

export interface ColumnMapping {
  delimiter: string;
  /** Frame key → how to compute it. */
  keys: ReadonlyArray<{ key: string; column: string; convert: Convert }>;
}

export type MappingResult = { ok: true; mapping: ColumnMapping } | { ok: false; problems: string[] };

export function parseMapping(input: unknown, label: string): MappingResult {
  const result = MappingSchema.safeParse(input);
  if (!result.success) return { ok: false, problems: describeIssues(label, input, result.error.issues) };
  const keys = Object.entries(result.data.keys).map(([key, entry]) => {
    const toUnit = (UNITS_BY_KIND[FRAME_KEY_KINDS[key]!] as Record<string, Convert>)[entry.unit]!;
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
