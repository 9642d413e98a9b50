/** Number and unit formatting for the dashboard: speed units, fixed-width numbers, durations, sizes. Pure. */
import { KMH_MPS, KNOT_MPS } from '../core/units.js';

export type SpeedUnit = 'mps' | 'kt' | 'kmh';

export const SPEED_UNITS: readonly SpeedUnit[] = ['mps', 'kt', 'kmh'];

const SPEED_UNIT_MPS: Record<SpeedUnit, number> = { mps: 1, kt: KNOT_MPS, kmh: KMH_MPS };
const SPEED_UNIT_LABEL: Record<SpeedUnit, string> = { mps: 'm/s', kt: 'kt', kmh: 'km/h' };

export function speedUnitLabel(unit: SpeedUnit): string {
  return SPEED_UNIT_LABEL[unit];
}

/** The unit after `unit` in the cycle m/s → kt → km/h → m/s (the `u` key). */
export function nextSpeedUnit(unit: SpeedUnit): SpeedUnit {
  return SPEED_UNITS[(SPEED_UNITS.indexOf(unit) + 1) % SPEED_UNITS.length]!;
}

export function speedFromMps(mps: number, unit: SpeedUnit): number {
  return mps / SPEED_UNIT_MPS[unit];
}

export function speedToMps(value: number, unit: SpeedUnit): number {
  return value * SPEED_UNIT_MPS[unit];
}

/** A number with fixed decimals, or an em dash for null / not finite. */
export function formatFixed(value: number | null | undefined, decimals: number): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const text = value.toFixed(decimals);
  // "-0.0" reads as a sign error on a margin; show it as zero.
  return /^-0(\.0*)?$/.test(text) ? text.slice(1) : text;
}

/** A signed number: "+0.54", "−0.12" (true minus sign), "0.00". */
export function formatSigned(value: number | null | undefined, decimals: number): string {
  const text = formatFixed(value, decimals);
  if (text === '—' || Number(text) === 0) return text;
  return text.startsWith('-') ? `−${text.slice(1)}` : `+${text}`;
}

/** Speed in the chosen unit with its label: "17.3 m/s", "33.6 kt", "62 km/h". */
export function formatSpeed(mps: number | null | undefined, unit: SpeedUnit): string {
  if (mps === null || mps === undefined || !Number.isFinite(mps)) return `— ${speedUnitLabel(unit)}`;
  const value = speedFromMps(mps, unit);
  return `${formatFixed(value, unit === 'kmh' ? 0 : 1)} ${speedUnitLabel(unit)}`;
}

/** Utilization as a whole percentage: 0.723 → "72 %". */
export function formatPercent(ratio: number | null | undefined): string {
  if (ratio === null || ratio === undefined || !Number.isFinite(ratio)) return '— %';
  return `${Math.round(ratio * 100)} %`;
}

/** Seconds as m:ss.s ("1:05.3"), or h:mm:ss beyond an hour. */
export function formatClock(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return '—';
  const sign = seconds < 0 ? '−' : '';
  const s = Math.abs(seconds);
  if (s >= 3600) {
    const h = Math.floor(s / 3600);
    const m = Math.floor((s % 3600) / 60);
    const sec = Math.floor(s % 60);
    return `${sign}${h}:${String(m).padStart(2, '0')}:${String(sec).padStart(2, '0')}`;
  }
  const m = Math.floor(s / 60);
  const rest = s - m * 60;
  // Round first so 59.96 s shows as 1:00.0, not 0:60.0.
  const tenths = Math.round(rest * 10);
  const mm = tenths >= 600 ? m + 1 : m;
  const ss = tenths >= 600 ? 0 : tenths / 10;
  return `${sign}${mm}:${ss.toFixed(1).padStart(4, '0')}`;
}

/** Age of the last frame: "0.02 s", "3.4 s", "2 min 5 s". */
export function formatAge(seconds: number | null | undefined): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return '—';
  if (seconds < 1) return `${seconds.toFixed(2)} s`;
  if (seconds < 60) return `${seconds.toFixed(1)} s`;
  const m = Math.floor(seconds / 60);
  return `${m} min ${Math.floor(seconds - m * 60)} s`;
}

/** Byte count in B, kB, MB, GB (powers of 1000). */
export function formatBytes(bytes: number): string {
  if (!Number.isFinite(bytes) || bytes < 0) return '—';
  if (bytes < 1000) return `${Math.round(bytes)} B`;
  const units = ['kB', 'MB', 'GB', 'TB'];
  let value = bytes;
  let i = -1;
  while (value >= 1000 && i < units.length - 1) {
    value /= 1000;
    i++;
  }
  return `${value < 10 ? value.toFixed(2) : value < 100 ? value.toFixed(1) : value.toFixed(0)} ${units[i]}`;
}

/** Cut `text` to `width` columns with an ellipsis, or pad it on the right. */
export function fitText(text: string, width: number): string {
  if (width <= 0) return '';
  const chars = Array.from(text);
  if (chars.length <= width) return text + ' '.repeat(width - chars.length);
  if (width === 1) return '…';
  return chars.slice(0, width - 1).join('') + '…';
}

/** Cut a file path to its tail so the file name stays visible: "…/flights/today.rec". */
export function fitPathTail(path: string, width: number): string {
  const chars = Array.from(path);
  if (chars.length <= width) return path;
  if (width <= 1) return '…'.slice(0, width);
  return '…' + chars.slice(chars.length - (width - 1)).join('');
}

/**
 * Words wrapped to lines of at most `width` columns (a word longer than a line is cut); at most `maxLines` lines,
 * the last ending in "…" when text is left over.
 */
export function wrapWords(text: string, width: number, maxLines = Number.POSITIVE_INFINITY): string[] {
  const lines: string[] = [];
  let current = '';
  const len = (s: string) => Array.from(s).length;
  for (const word of text.split(/\s+/).filter((w) => w !== '')) {
    const candidate = current === '' ? word : `${current} ${word}`;
    if (len(candidate) <= width) {
      current = candidate;
      continue;
    }
    if (current !== '') lines.push(current);
    current = len(word) <= width ? word : fitText(word, width);
  }
  if (current !== '') lines.push(current);
  if (lines.length <= maxLines) return lines;
  const kept = lines.slice(0, maxLines);
  const last = kept[maxLines - 1]!;
  kept[maxLines - 1] = len(last) < width ? `${last}…` : fitText(last, width);
  return kept;
}
