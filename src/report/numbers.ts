/** Number formatting shared by the reports. */

/** Round for machine output (JSON/CSV): enough digits for independent checks, no float noise. */
export function roundTo(value: number, decimals = 6): number {
  const f = 10 ** decimals;
  return Math.round(value * f) / f;
}

export function roundOrNull(value: number | null | undefined, decimals = 6): number | null {
  return value === null || value === undefined || !Number.isFinite(value) ? null : roundTo(value, decimals);
}

/** Fixed decimals for tables; a dash for a missing value. */
export function fixed(value: number | null | undefined, decimals: number): string {
  return value === null || value === undefined || !Number.isFinite(value) ? '—' : value.toFixed(decimals);
}

/** One CSV field: quoted when it holds a comma, quote or newline. */
export function csvField(value: string | number | boolean | null | undefined): string {
  if (value === null || value === undefined) return '';
  const text = String(value);
  return /[",\n\r]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

export function csvRow(values: ReadonlyArray<string | number | boolean | null | undefined>): string {
  return values.map(csvField).join(',');
}

/** Align columns of text; numbers right-aligned, text left-aligned. */
export function alignTable(header: string[], rows: string[][], rightAligned: boolean[]): string[] {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const fmt = (cells: string[]) =>
    cells
      .map((c, i) => (rightAligned[i] ? c.padStart(widths[i]!) : c.padEnd(widths[i]!)))
      .join('  ')
      .trimEnd();
  return [fmt(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(fmt)];
}
