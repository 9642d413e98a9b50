/**
 * The n–V plane as both the dashboard and the reports draw it: which curves there are, how they are sampled over
 * the speed axis, and what each thing looks like (tone, colour, line pattern, marker shape), so the terminal plot and
 * the SVG plot show the same things the same way. Pure data and arithmetic.
 */
import type { Aircraft } from './aircraft.js';
import type { Level } from './margin-record.js';
import { cornerSpeedMps, stallLoadFactor, stallSpeedMps, thrustLoadFactor } from './performance.js';

/** The meaning a mark carries; the dashboard maps it to terminal colours, the reports to the colours below. */
export type PlotTone = 'ok' | 'caution' | 'warning' | 'dim' | 'plain';

/** Colours on white paper for each tone (dark enough to print; every mark also has a pattern or a label). */
export const TONE_COLOURS: Record<PlotTone, string> = {
  ok: '#2e7d32',
  caution: '#a86b00',
  warning: '#c62828',
  dim: '#6b6b6b',
  plain: '#222222',
};

export interface NvLineStyle {
  tone: PlotTone;
  /** SVG stroke width, px. */
  width: number;
  /** SVG dash pattern ('' for solid). */
  dash: string;
  /** Terminal: every n-th pixel only (a dotted line), or solid when absent. */
  dotEvery?: number;
  label: string;
}

export type NvLineName =
  'stall' | 'stallNeg' | 'stallCaution' | 'stallWarning' | 'thrust' | 'structure' | 'vne' | 'sustainedBand';

export const NV_LINES: Record<NvLineName, NvLineStyle> = {
  stall: { tone: 'warning', width: 2.5, dash: '', label: 'stall (CLmax)' },
  stallNeg: { tone: 'warning', width: 2, dash: '2 4', label: 'stall, negative g (CLmin)' },
  stallCaution: { tone: 'caution', width: 1.5, dash: '2 3', dotEvery: 3, label: 'stall caution' },
  stallWarning: { tone: 'warning', width: 1.5, dash: '7 3', dotEvery: 2, label: 'stall warning' },
  thrust: { tone: 'caution', width: 2.5, dash: '12 4', label: 'thrust (sustained turn)' },
  structure: { tone: 'warning', width: 3, dash: '', label: 'structure (n limit)' },
  vne: { tone: 'dim', width: 1.5, dash: '6 3 1 3', label: 'V_NE' },
  // A record's sustained_band_mps: the speeds at which the turn at the present n can be held, drawn at that n.
  sustainedBand: { tone: 'ok', width: 3, dash: '1 2', dotEvery: 2, label: 'sustained band at the present n' },
};

export type MarkerShape = 'circle' | 'triangle' | 'square';

/** Flight points by level: the tone, the shape (so they read without colour) and the word. */
export const LEVEL_MARKS: Record<Level, { tone: PlotTone; shape: MarkerShape; word: string }> = {
  normal: { tone: 'ok', shape: 'circle', word: 'normal' },
  caution: { tone: 'caution', shape: 'triangle', word: 'CAUTION' },
  warning: { tone: 'warning', shape: 'square', word: 'WARNING' },
};

export interface NvCurves {
  speedsMps: readonly number[];
  stall: number[];
  /** The stall curve times the caution and warning thresholds: where the stall alerts come on. */
  stallCaution: number[];
  stallWarning: number[];
  /** null where the thrust cannot hold level flight (n_thrust < 1), is unknown, or lies above the stall curve. */
  thrust: Array<number | null>;
  vs1Mps: number;
  cornerMps: number;
}

/** The thrust-limited load factor as drawn: only where a level turn is sustainable and flyable. */
export function drawnThrustLoadFactor(nThrust: number | null, nStall: number): number | null {
  return nThrust !== null && nThrust >= 1 && nThrust <= nStall ? nThrust : null;
}

/** The curves at one density and mass over the given speeds (TAS). */
export function sampleNvCurves(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  thresholds: { stallCaution: number; stallWarning: number },
  speedsMps: readonly number[],
): NvCurves {
  const stall: number[] = [];
  const thrust: Array<number | null> = [];
  for (const v of speedsMps) {
    const nStall = stallLoadFactor(aircraft, v, densityKgM3, massKg);
    stall.push(nStall);
    thrust.push(drawnThrustLoadFactor(thrustLoadFactor(aircraft, v, densityKgM3, massKg), nStall));
  }
  return {
    speedsMps,
    stall,
    stallCaution: stall.map((n) => n * thresholds.stallCaution),
    stallWarning: stall.map((n) => n * thresholds.stallWarning),
    thrust,
    vs1Mps: stallSpeedMps(aircraft, densityKgM3, massKg),
    cornerMps: cornerSpeedMps(aircraft, densityKgM3, massKg),
  };
}

/** `count` + 1 evenly spaced speeds from lo to hi. */
export function speedGrid(loMps: number, hiMps: number, count: number): number[] {
  return Array.from({ length: count + 1 }, (_, i) => loMps + ((hiMps - loMps) * i) / count);
}
