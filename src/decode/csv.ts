/** Minimal CSV line handling for telemetry logs: one record per line, double-quoted fields with "" escapes. Pure. */
import { columnCount, type Rejected } from './rejections.js';

export function splitCsvLine(line: string, delimiter = ','): string[] {
  const cells: string[] = [];
  let cell = '';
  let quoted = false;
  for (let i = 0; i < line.length; i++) {
    const ch = line[i]!;
    if (quoted) {
      if (ch === '"') {
        if (line[i + 1] === '"') {
          cell += '"';
          i++;
        } else quoted = false;
      } else cell += ch;
    } else if (ch === '"' && cell.trim() === '') {
      quoted = true;
      cell = '';
    } else if (ch === delimiter) {
      cells.push(cell);
      cell = '';
    } else cell += ch;
  }
  cells.push(cell);
  return cells.map((c) => c.trim());
}

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/**
 * A cell as a value: a decimal number, true or false (a flag key such as `simulated`), absent when empty, otherwise
 * the text (so validation can name it).
 */
function cellValue(cell: string): number | boolean | string | undefined {
  if (cell === '') return undefined;
  if (cell === 'true') return true;
  if (cell === 'false') return false;
  return DECIMAL.test(cell) ? Number(cell) : cell;
}

export type CsvRow = { ok: true; row: Record<string, unknown> } | Rejected;

export function csvRow(header: readonly string[], line: string, delimiter = ','): CsvRow {
  const cells = splitCsvLine(line, delimiter);
  if (cells.length !== header.length) return columnCount(header.length, cells.length);
  const row: Record<string, unknown> = {};
  header.forEach((name, i) => {
    const value = cellValue(cells[i]!);
    if (value !== undefined) row[name] = value;
  });
  return { ok: true, row };
}
