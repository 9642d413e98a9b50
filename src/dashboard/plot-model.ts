/**
 * The n–V plane as drawing instructions: axes with ticks and units, the stall-limited curve (and its caution
 * line), the thrust-limited (sustained) curve and the structural limit at the present density and mass, the trail
 * and the current point. Coordinates are braille pixels (2 per column, 4 per row); text goes to cells. Pure.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { Level } from '../core/margin-record.js';
import { LEVEL_MARKS, NV_LINES, sampleNvCurves } from '../core/nv-plane.js';
import { stallSpeedMps } from '../core/performance.js';
import type { AlertThresholds } from '../core/thresholds.js';
import type { Tone } from './format-tags.js';
import { speedFromMps, speedToMps, speedUnitLabel, type SpeedUnit } from './format-units.js';
import type { TrailPoint } from './trail.js';

export interface EnvelopeConditions {
  densityKgM3: number;
  massKg: number;
  /** vne_mps (CAS) as TAS at the present conditions, when known (the axis then reaches it). */
  vneTasMps?: number | null;
}

/** A change of density or mass above this fraction redraws the curves (smaller ones would only make them shimmer). */
export const MATERIAL_CHANGE = 0.005;

export function isMaterialChange(drawn: EnvelopeConditions | null, now: EnvelopeConditions): boolean {
  if (drawn === null) return true;
  return (
    Math.abs(now.densityKgM3 - drawn.densityKgM3) > MATERIAL_CHANGE * drawn.densityKgM3 ||
    Math.abs(now.massKg - drawn.massKg) > MATERIAL_CHANGE * drawn.massKg
  );
}

export interface PlotInput {
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  conditions: EnvelopeConditions;
  trail: readonly TrailPoint[];
  /** Newest data time, s (the trail fades by age from it). */
  nowTS: number | null;
  current: {
    tasMps: number;
    n: number;
    level: Level;
    /** The record's sustained_band_mps: drawn as a segment at max(1, n) from lo to hi. */
    sustainedBandMps?: readonly [number, number] | null;
  } | null;
  /** The test point shown (--card): its target speed and load factor, marked on the plane with its id. */
  target?: { tasMps: number; n: number; id: string } | null;
  stale: boolean;
  units: SpeedUnit;
  /** Canvas size in cells (inside the border). */
  cols: number;
  rows: number;
}

export type Px = readonly [number, number];

export interface Polyline {
  name: 'stall' | 'stall-caution' | 'thrust' | 'structure' | 'axis' | 'trail-old' | 'trail-new' | 'band';
  tone: Tone;
  /** Every `dotEvery`-th pixel only (a dotted line), or solid when absent. */
  dotEvery?: number;
  points: Px[];
}

export interface PlotText {
  col: number;
  row: number;
  text: string;
  tone: Tone;
}

export interface PlotModel {
  xMinMps: number;
  xMaxMps: number;
  yMin: number;
  yMax: number;
  /** Plotting area in pixels. */
  area: { left: number; top: number; width: number; height: number };
  polylines: Polyline[];
  marker: { x: number; y: number; tone: Tone } | null;
  texts: PlotText[];
}

const LEFT_CELLS = 5; // room for the n tick labels
const BOTTOM_CELLS = 1; // room for the speed tick labels
export const TRAIL_BRIGHT_S = 3;

/** A "nice" step (1, 2 or 5 × 10^k) giving about `target` intervals over `span`. */
export function niceStep(span: number, target: number): number {
  if (!(span > 0) || !(target > 0)) return 1;
  const raw = span / target;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const f = raw / mag;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * mag;
}

/** The speed range: from 0 to past the fastest of vne (as TAS), 1.3 × corner speed, 2.5 × Vs1 and the data shown. */
export function speedAxisMaxMps(aircraft: Aircraft, c: EnvelopeConditions, dataMaxMps: number): number {
  const vs1 = stallSpeedMps(aircraft, c.densityKgM3, c.massKg);
  const corner = vs1 * Math.sqrt(aircraft.nLimitPos);
  const base = Math.max(c.vneTasMps ?? aircraft.vneMps ?? 0, corner * 1.3, vs1 * 2.5);
  const wanted = Math.max(base, dataMaxMps * 1.1);
  // Round up to a whole step so the last tick sits at the edge.
  const step = niceStep(wanted, 6);
  return Math.ceil(wanted / step) * step;
}

export function loadAxisMax(aircraft: Aircraft, dataMaxN: number): number {
  return Math.ceil(Math.max(aircraft.nLimitPos * 1.15, dataMaxN * 1.1) * 2) / 2;
}

export function buildPlotModel(input: PlotInput): PlotModel {
  const { aircraft, conditions: c, units } = input;
  const widthPx = Math.max(0, input.cols - LEFT_CELLS) * 2;
  const heightPx = Math.max(0, input.rows - BOTTOM_CELLS) * 4;
  const area = { left: LEFT_CELLS * 2, top: 0, width: widthPx, height: heightPx };
  let dataMaxMps = 0;
  let dataMaxN = 0;
  for (const p of input.trail) {
    dataMaxMps = Math.max(dataMaxMps, p.tasMps);
    dataMaxN = Math.max(dataMaxN, p.n);
  }
  if (input.current) {
    dataMaxMps = Math.max(dataMaxMps, input.current.tasMps);
    dataMaxN = Math.max(dataMaxN, input.current.n);
  }
  const xMinMps = 0;
  const xMaxMps = speedAxisMaxMps(aircraft, c, dataMaxMps);
  const yMin = 0;
  const yMax = loadAxisMax(aircraft, dataMaxN);
  const model: PlotModel = { xMinMps, xMaxMps, yMin, yMax, area, polylines: [], marker: null, texts: [] };
  if (widthPx < 8 || heightPx < 8) return model;

  const px = (v: number): number => Math.round(area.left + ((v - xMinMps) / (xMaxMps - xMinMps)) * (area.width - 1));
  const py = (n: number): number => {
    const clamped = Math.min(yMax, Math.max(yMin, n));
    return Math.round(area.top + (1 - (clamped - yMin) / (yMax - yMin)) * (area.height - 1));
  };
  const inRange = (n: number): boolean => n >= yMin && n <= yMax;

  // Axes.
  model.polylines.push({
    name: 'axis',
    tone: 'dim',
    points: [
      [area.left, area.top],
      [area.left, area.top + area.height - 1],
      [area.left + area.width - 1, area.top + area.height - 1],
    ],
  });

  // Curves over a speed grid of one step per pixel column.
  const stall: Px[] = [];
  const stallCaution: Px[] = [];
  const thrustRuns: Px[][] = [];
  let thrustRun: Px[] = [];
  const speeds = Array.from({ length: area.width }, (_, x) => xMinMps + (x / (area.width - 1)) * (xMaxMps - xMinMps));
  const curves = sampleNvCurves(aircraft, c.densityKgM3, c.massKg, input.thresholds, speeds);
  for (let x = 0; x < area.width; x++) {
    const v = speeds[x]!;
    const nStall = curves.stall[x]!;
    if (inRange(nStall)) stall.push([px(v), py(nStall)]);
    if (inRange(curves.stallCaution[x]!)) stallCaution.push([px(v), py(curves.stallCaution[x]!)]);
    const nThrust = curves.thrust[x]!;
    // Only where a level turn is both sustainable and flyable (the shared rule of nv-plane.ts).
    if (nThrust !== null && inRange(nThrust)) {
      thrustRun.push([px(v), py(nThrust)]);
    } else if (thrustRun.length) {
      thrustRuns.push(thrustRun);
      thrustRun = [];
    }
  }
  if (thrustRun.length) thrustRuns.push(thrustRun);
  const yStruct = py(aircraft.nLimitPos);
  model.polylines.push({
    name: 'structure',
    tone: NV_LINES.structure.tone,
    points: [
      [area.left, yStruct],
      [area.left + area.width - 1, yStruct],
    ],
  });
  const { stallCaution: sc, thrust: th, stall: st } = NV_LINES;
  model.polylines.push({ name: 'stall-caution', tone: sc.tone, dotEvery: sc.dotEvery!, points: stallCaution });
  for (const run of thrustRuns) model.polylines.push({ name: 'thrust', tone: th.tone, points: run });
  model.polylines.push({ name: 'stall', tone: st.tone, points: stall });

  // Ticks and labels: n on the left, speed in the chosen unit along the bottom.
  const yStep = niceStep(yMax - yMin, Math.max(2, Math.floor(input.rows / 3)));
  for (let n = yMin; n <= yMax + 1e-9; n += yStep) {
    const row = Math.min(input.rows - BOTTOM_CELLS - 1, Math.floor(py(n) / 4));
    model.texts.push({ col: 0, row, text: formatTick(n, yStep).padStart(LEFT_CELLS - 1), tone: 'dim' });
  }
  model.texts.push({ col: 0, row: 0, text: 'n g', tone: 'dim' });
  const maxDisplay = speedFromMps(xMaxMps, units);
  const xStep = niceStep(maxDisplay, Math.max(2, Math.floor((input.cols - LEFT_CELLS) / 9)));
  const unitText = `TAS ${speedUnitLabel(units)}`;
  const bottomRow = input.rows - 1;
  const unitCol = input.cols - unitText.length - 1;
  let lastEnd = -1;
  for (let s = 0; s <= maxDisplay + 1e-9; s += xStep) {
    const label = formatTick(s, xStep);
    const col = Math.floor(px(speedToMps(s, units)) / 2);
    const start = Math.max(LEFT_CELLS - 1, col - Math.floor(label.length / 2));
    if (start <= lastEnd + 1 || start + label.length >= unitCol - 1) continue;
    model.texts.push({ col: start, row: bottomRow, text: label, tone: 'dim' });
    lastEnd = start + label.length - 1;
  }
  model.texts.push({ col: unitCol, row: bottomRow, text: unitText, tone: 'dim' });

  // Curve names, so the curves are told apart without colour.
  const limLabel = `n limit ${formatTick(aircraft.nLimitPos, 0.1)}`;
  const limRow = Math.floor(yStruct / 4) - 1 >= 0 ? Math.floor(yStruct / 4) - 1 : Math.floor(yStruct / 4) + 1;
  model.texts.push({ col: input.cols - limLabel.length - 1, row: limRow, text: limLabel, tone: 'warning' });
  const stallTop = stall[stall.length - 1];
  if (stallTop) {
    const col = Math.max(LEFT_CELLS, Math.floor(stallTop[0] / 2) - 6);
    const row = Math.max(0, Math.floor(stallTop[1] / 4));
    if (row !== limRow) model.texts.push({ col, row, text: 'stall', tone: 'warning' });
  }
  const thrustPeak = thrustRuns
    .flat()
    .reduce<Px | null>((best, p) => (best === null || p[1] < best[1] ? p : best), null);
  if (thrustPeak) {
    const row = Math.floor(thrustPeak[1] / 4) + 1;
    const col = Math.floor(thrustPeak[0] / 2) - 3;
    if (row < input.rows - BOTTOM_CELLS && row !== limRow)
      model.texts.push({ col, row, text: 'thrust', tone: 'caution' });
  }

  // Trail: older part dim, the last few seconds bright; broken where the data have gaps.
  if (input.nowTS !== null && input.trail.length > 1) {
    let run: Px[] = [];
    let runBright = false;
    let prev: TrailPoint | null = null;
    const flush = (): void => {
      if (run.length)
        model.polylines.push({
          name: runBright ? 'trail-new' : 'trail-old',
          tone: runBright ? 'plain' : 'dim',
          points: run,
        });
      run = [];
    };
    for (const p of input.trail) {
      const bright = input.nowTS - p.tS <= TRAIL_BRIGHT_S;
      if (prev && (p.tS - prev.tS > 1 || bright !== runBright)) {
        const joinPrev = p.tS - prev.tS <= 1;
        flush();
        if (joinPrev) run.push([px(prev.tasMps), py(prev.n)]);
      }
      runBright = bright;
      run.push([px(p.tasMps), py(p.n)]);
      prev = p;
    }
    flush();
  }

  const band = input.current?.sustainedBandMps;
  if (input.current && band && Number.isFinite(band[0]) && Number.isFinite(band[1])) {
    const nBand = Math.max(1, input.current.n);
    if (inRange(nBand)) {
      const { sustainedBand: look } = NV_LINES;
      const y = py(nBand);
      model.polylines.push({
        name: 'band',
        tone: input.stale ? 'stale' : look.tone,
        dotEvery: look.dotEvery!,
        points: [
          [px(Math.min(band[0], xMaxMps)), y],
          [px(Math.min(band[1], xMaxMps)), y],
        ],
      });
    }
  }

  if (input.target && inRange(input.target.n) && input.target.tasMps <= xMaxMps) {
    // A cell-sized cross with the point's id, where it fits.
    const col = Math.floor(px(input.target.tasMps) / 2);
    const row = Math.floor(py(input.target.n) / 4);
    const label = `+${input.target.id}`;
    const fits = col + label.length <= input.cols;
    model.texts.push({
      col: fits ? col : Math.max(LEFT_CELLS, input.cols - label.length),
      row,
      text: label,
      tone: 'key',
    });
  }

  if (input.current) {
    const { tasMps, n, level } = input.current;
    const x = px(tasMps);
    const y = py(n);
    const tone: Tone = input.stale ? 'stale' : LEVEL_MARKS[level].tone;
    model.marker = { x, y, tone };
    const word = input.stale ? 'STALE' : level === 'normal' ? 'now' : level.toUpperCase();
    const label = `◀ ${word}${n < yMin ? ' n<0' : ''}`;
    const col = Math.floor(x / 2) + 2;
    const row = Math.floor(y / 4);
    const fits = col + label.length <= input.cols;
    model.texts.push({
      col: fits ? col : Math.max(0, Math.floor(x / 2) - label.length - 1),
      row,
      text: fits ? label : `${word} ▶`,
      tone,
    });
  }
  return model;
}

function formatTick(value: number, step: number): string {
  const decimals = step >= 1 ? 0 : step >= 0.1 ? 1 : 2;
  return value.toFixed(decimals);
}
