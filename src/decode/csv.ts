/** Minimal CSV line handling for telemetry logs: one record per line, double-quoted fields with "" escapes. Pure. */

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

/** A cell as a value: a decimal number, absent when empty, otherwise the text (so validation can name it). */
export function cellValue(cell: string): number | string | undefined {
  if (cell === '') return undefined;
  return DECIMAL.test(cell) ? Number(cell) : cell;
}

export type CsvRow = { ok: true; row: Record<string, unknown> } | { ok: false; reason: string };

export function csvRow(header: readonly string[], line: string, delimiter = ','): CsvRow {
  const cells = splitCsvLine(line, delimiter);
  if (cells.length !== header.length)
    return { ok: false, reason: `expected ${header.length} columns (got ${cells.length})` };
  const row: Record<string, unknown> = {};
  header.forEach((name, i) => {
    const value = cellValue(cells[i]!);
    if (value !== undefined) row[name] = value;
  });
  return { ok: true, row };
}
