/**
 * Utilization bars: one character row per limit, 0 … `scaleMax` of the limit, with the caution and warning
 * thresholds marked so they stay visible without colour. Pure.
 */
import { seg, type Line, type Tone } from './format-tags.js';

export interface UtilizationBarSpec {
  /** Load factor in use ÷ limit; null where the limit is undefined (drawn empty). */
  utilization: number | null;
  cautionAt: number | null;
  warningAt: number | null;
  /** Columns. */
  width: number;
  /** Utilization at the right end of the bar. Default 1.25, so the 100 % point is visible with room past it. */
  scaleMax?: number;
}

export const DEFAULT_BAR_SCALE = 1.25;

export const BAR_FILLED = '█';
export const BAR_EMPTY = '·';
/** A threshold mark in the filled part: a notch, so the mark still shows once the bar has passed it. */
export const BAR_MARK_FILLED = '▌';
export const BAR_MARK_CAUTION = '│';
export const BAR_MARK_WARNING = '┃';
export const BAR_OVERFLOW = '»';

/** Column of a threshold: the first cell whose range starts at or above it. */
export function barMarkIndex(threshold: number, width: number, scaleMax = DEFAULT_BAR_SCALE): number {
  return Math.min(width - 1, Math.max(0, Math.floor((threshold / scaleMax) * width + 1e-9)));
}

/** Number of filled cells for a utilization (rounded, clamped to the bar). */
export function barFilledCells(utilization: number | null, width: number, scaleMax = DEFAULT_BAR_SCALE): number {
  if (utilization === null || !Number.isFinite(utilization) || utilization <= 0) {
    return utilization === Number.POSITIVE_INFINITY ? width : 0;
  }
  return Math.min(width, Math.round((utilization / scaleMax) * width));
}

export function buildUtilizationBar(spec: UtilizationBarSpec): Line {
  const { width, cautionAt, warningAt } = spec;
  const scaleMax = spec.scaleMax ?? DEFAULT_BAR_SCALE;
  if (width <= 0) return [];
  const filled = barFilledCells(spec.utilization, width, scaleMax);
  const cautionIdx = cautionAt === null ? -1 : barMarkIndex(cautionAt, width, scaleMax);
  const warningIdx = warningAt === null ? -1 : barMarkIndex(warningAt, width, scaleMax);
  const overflow = spec.utilization !== null && spec.utilization > scaleMax;
  const cells: Array<{ ch: string; tone: Tone }> = [];
  for (let i = 0; i < width; i++) {
    const zone: Tone =
      warningIdx >= 0 && i >= warningIdx ? 'warning' : cautionIdx >= 0 && i >= cautionIdx ? 'caution' : 'ok';
    const isFilled = i < filled;
    const isMark = i === cautionIdx || i === warningIdx;
    let ch: string;
    let tone: Tone;
    if (overflow && i === width - 1) {
      ch = BAR_OVERFLOW;
      tone = zone;
    } else if (isFilled) {
      ch = isMark ? BAR_MARK_FILLED : BAR_FILLED;
      tone = zone;
    } else if (isMark) {
      ch = i === warningIdx ? BAR_MARK_WARNING : BAR_MARK_CAUTION;
      tone = i === warningIdx ? 'warning' : 'caution';
    } else {
      ch = BAR_EMPTY;
      tone = 'dim';
    }
    cells.push({ ch, tone });
  }
  // Merge runs of one tone into segments.
  const line: Line = [];
  for (const c of cells) {
    const last = line[line.length - 1];
    if (last && last.tone === c.tone) last.text += c.ch;
    else line.push(seg(c.ch, c.tone));
  }
  return line;
}
