/**
 * The n–V plot of a reviewed flight as a standalone SVG: the stall-limited curve (and its negative-g branch with
 * cl_min), the thrust-limited (sustained-turn) curve and the structural limit lines, at the flight's median density
 * and mass, with the flight's points marked by level — by colour and by shape, so the plot reads without colour.
 * Pure: data in, SVG text out.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { PlotPoint } from '../core/flight-review.js';
import type { Level } from '../core/margin-record.js';
import { LEVEL_MARKS, NV_LINES, TONE_COLOURS, sampleNvCurves, speedGrid, type NvLineStyle } from '../core/nv-plane.js';
import { negativeStallLoadFactor, stallSpeedMps } from '../core/performance.js';

export interface NvPlotInput {
  aircraft: Aircraft;
  densityKgM3: number;
  massKg: number;
  points: readonly PlotPoint[];
  /** Accepted frames the points were sampled from. */
  pointsOf: number;
  /** Shown under the title, e.g. the telemetry file name. */
  source: string;
  /** The alert thresholds in force (the caution and warning curves); the airframe's when absent. */
  thresholds?: { stallCaution: number; stallWarning: number };
  /** V_NE as TAS at the plot's conditions, when known (vne_mps is a calibrated airspeed). */
  vneTasMps?: number;
  /** Prefix for the element ids, so several plots can sit in one HTML page. */
  idPrefix?: string;
  /** Leave out the XML declaration (for a plot inlined in HTML). */
  inline?: boolean;
}

const WIDTH = 960;
const HEIGHT = 620;
const PLOT = { left: 80, top: 78, right: 700, bottom: 540 };
const CURVE_STEPS = 240;

function stroke(style: NvLineStyle): { stroke: string; width: number; dash: string } {
  return { stroke: TONE_COLOURS[style.tone], width: style.width, dash: style.dash };
}

const STYLE = {
  stall: stroke(NV_LINES.stall),
  stallNeg: stroke(NV_LINES.stallNeg),
  stallCaution: stroke(NV_LINES.stallCaution),
  stallWarning: stroke(NV_LINES.stallWarning),
  thrust: stroke(NV_LINES.thrust),
  structure: stroke(NV_LINES.structure),
  vne: stroke(NV_LINES.vne),
} as const;

/** Darker outlines so the filled shapes keep an edge in grey print. */
const OUTLINE: Record<Level, string> = { normal: TONE_COLOURS.ok, caution: '#4d3100', warning: '#4a0009' };

export function escapeXml(text: string): string {
  return text
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/"/g, '&quot;')
    .replace(/'/g, '&apos;');
}

/** A round tick step giving about `target` intervals over a span. */
export function niceStep(span: number, target = 8): number {
  const raw = span / target;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const norm = raw / mag;
  const step = norm <= 1 ? 1 : norm <= 2 ? 2 : norm <= 2.5 ? 2.5 : norm <= 5 ? 5 : 10;
  return step * mag;
}

function num(v: number): string {
  return (Math.round(v * 100) / 100).toString();
}

export function markerSvg(level: Level, x: number, y: number, size: number): string {
  const fill = level === 'normal' ? 'none' : TONE_COLOURS[LEVEL_MARKS[level].tone];
  const edge = OUTLINE[level];
  switch (LEVEL_MARKS[level].shape) {
    case 'circle':
      return `<circle cx="${num(x)}" cy="${num(y)}" r="${num(size * 0.55)}" fill="${fill}" stroke="${edge}" stroke-width="1"/>`;
    case 'triangle': {
      const h = size;
      return `<path d="M${num(x)} ${num(y - h * 0.7)}L${num(x + h * 0.65)} ${num(y + h * 0.45)}L${num(x - h * 0.65)} ${num(y + h * 0.45)}Z" fill="${fill}" stroke="${edge}" stroke-width="0.8"/>`;
    }
    case 'square': {
      const h = size * 0.55;
      return `<rect x="${num(x - h)}" y="${num(y - h)}" width="${num(2 * h)}" height="${num(2 * h)}" fill="${fill}" stroke="${edge}" stroke-width="0.8"/>`;
    }
  }
}

function lineAttrs(style: { stroke: string; width: number; dash: string }): string {
  return `fill="none" stroke="${style.stroke}" stroke-width="${style.width}"${style.dash ? ` stroke-dasharray="${style.dash}"` : ''} stroke-linejoin="round"`;
}

export function renderNvPlotSvg(input: NvPlotInput): string {
  const { aircraft, densityKgM3: rho, massKg: mass, points } = input;
  const id = (name: string): string => `${input.idPrefix ?? ''}${name}`;
  const thresholds = input.thresholds ?? aircraft.thresholds;
  const vs1 = stallSpeedMps(aircraft, rho, mass);
  const corner = vs1 * Math.sqrt(aircraft.nLimitPos);
  // V_NE is a calibrated airspeed: drawn at its TAS when known, else at its own value with a note saying so.
  const vneX = input.vneTasMps ?? aircraft.vneMps;
  const maxPointV = points.reduce((m, p) => Math.max(m, p.tasMps), 0);
  // Past the corner speed, so the stall curve reaches the structural limit.
  const xMaxRaw = Math.max(vneX ?? 3 * vs1, corner * 1.15, maxPointV) * 1.05;
  const xStep = niceStep(xMaxRaw, 8);
  const xMax = Math.ceil(xMaxRaw / xStep) * xStep;

  const nPointsMin = points.reduce((m, p) => Math.min(m, p.n), 0);
  const nPointsMax = points.reduce((m, p) => Math.max(m, p.n), 0);
  const yMinRaw = Math.min(aircraft.nLimitNeg, nPointsMin) - 0.5;
  const yMaxRaw = Math.max(aircraft.nLimitPos, nPointsMax) + 0.5;
  const yStep = niceStep(yMaxRaw - yMinRaw, 8);
  const yMin = Math.floor(yMinRaw / yStep) * yStep;
  const yMax = Math.ceil(yMaxRaw / yStep) * yStep;

  const sx = (v: number) => PLOT.left + ((v - 0) / (xMax - 0)) * (PLOT.right - PLOT.left);
  const sy = (n: number) => PLOT.bottom - ((n - yMin) / (yMax - yMin)) * (PLOT.bottom - PLOT.top);

  // Curves, sampled over the speed axis; the clip path trims them to the plot area.
  const speeds = speedGrid(0, xMax, CURVE_STEPS);
  const curves = sampleNvCurves(aircraft, rho, mass, thresholds, speeds);
  const polyline = (values: Array<number | null>): string => {
    let d = '';
    let pen = false;
    values.forEach((n, i) => {
      if (n === null || !Number.isFinite(n)) {
        pen = false;
        return;
      }
      // Keep the path inside a margin around the plot so clipping stays clean.
      const y = Math.max(PLOT.top - 40, Math.min(PLOT.bottom + 40, sy(n)));
      d += `${pen ? 'L' : 'M'}${num(sx(speeds[i]!))} ${num(y)}`;
      pen = true;
    });
    return d;
  };
  const stallD = polyline(curves.stall);
  const stallCautionD = polyline(curves.stallCaution);
  const stallWarningD = polyline(curves.stallWarning);
  const stallNegD =
    aircraft.clMin !== undefined ? polyline(speeds.map((v) => negativeStallLoadFactor(aircraft, v, rho, mass))) : '';
  // Only where a level turn is sustainable and flyable (n_thrust ≥ 1, under the stall curve): no flat line at 0.
  const thrustD = polyline(curves.thrust);
  const structureD = `M${num(sx(0))} ${num(sy(aircraft.nLimitPos))}L${num(sx(xMax))} ${num(sy(aircraft.nLimitPos))}`;
  const structureNegD = `M${num(sx(0))} ${num(sy(aircraft.nLimitNeg))}L${num(sx(xMax))} ${num(sy(aircraft.nLimitNeg))}`;

  const out: string[] = [];
  if (input.inline !== true) out.push('<?xml version="1.0" encoding="UTF-8"?>');
  out.push(
    `<svg${input.inline === true ? '' : ' xmlns="http://www.w3.org/2000/svg"'} width="${WIDTH}" height="${HEIGHT}" viewBox="0 0 ${WIDTH} ${HEIGHT}" font-family="Helvetica, Arial, sans-serif" font-size="13">`,
  );
  out.push(`<title>${escapeXml(`n–V plot of ${input.source} (${aircraft.name})`)}</title>`);
  out.push(
    `<desc>${escapeXml(
      `Load factor against true airspeed. Limits at the flight's median density ${rho.toFixed(4)} kg/m³ and mass ${mass.toFixed(2)} kg. ` +
        `Points: ${points.length} of ${input.pointsOf} accepted frames.`,
    )}</desc>`,
  );
  out.push(
    `<defs><clipPath id="${id('plot-area')}"><rect x="${PLOT.left}" y="${PLOT.top}" width="${PLOT.right - PLOT.left}" height="${PLOT.bottom - PLOT.top}"/></clipPath></defs>`,
  );
  out.push(`<rect x="0" y="0" width="${WIDTH}" height="${HEIGHT}" fill="#ffffff"/>`);

  // Title block
  out.push(
    `<text x="${PLOT.left}" y="30" font-size="19" font-weight="bold">${escapeXml(`Load factor against airspeed — ${aircraft.name}`)}</text>`,
  );
  out.push(
    `<text x="${PLOT.left}" y="52" font-size="12.5" fill="#333333">${escapeXml(
      `${input.source} · limits at median density ${rho.toFixed(4)} kg/m³, mass ${mass.toFixed(2)} kg (Vs1 ${vs1.toFixed(1)} m/s TAS) · ${points.length} of ${input.pointsOf} frames shown`,
    )}</text>`,
  );

  // Grid, ticks and labels
  out.push(`<g id="${id('grid')}" stroke="#e3e3e3" stroke-width="1">`);
  for (let v = 0; v <= xMax + 1e-9; v += xStep)
    out.push(`<line x1="${num(sx(v))}" y1="${PLOT.top}" x2="${num(sx(v))}" y2="${PLOT.bottom}"/>`);
  for (let n = yMin; n <= yMax + 1e-9; n += yStep)
    out.push(`<line x1="${PLOT.left}" y1="${num(sy(n))}" x2="${PLOT.right}" y2="${num(sy(n))}"/>`);
  out.push('</g>');
  out.push(
    `<line x1="${PLOT.left}" y1="${num(sy(0))}" x2="${PLOT.right}" y2="${num(sy(0))}" stroke="#9a9a9a" stroke-width="1"/>`,
  );
  out.push(
    `<line x1="${PLOT.left}" y1="${num(sy(1))}" x2="${PLOT.right}" y2="${num(sy(1))}" stroke="#b0b0b0" stroke-width="1" stroke-dasharray="1 3"/>`,
  );
  out.push(`<g id="${id('axes')}" fill="#222222">`);
  out.push(
    `<rect x="${PLOT.left}" y="${PLOT.top}" width="${PLOT.right - PLOT.left}" height="${PLOT.bottom - PLOT.top}" fill="none" stroke="#444444" stroke-width="1"/>`,
  );
  for (let v = 0; v <= xMax + 1e-9; v += xStep) {
    out.push(`<text x="${num(sx(v))}" y="${PLOT.bottom + 18}" text-anchor="middle">${num(v)}</text>`);
  }
  for (let n = yMin; n <= yMax + 1e-9; n += yStep) {
    out.push(`<text x="${PLOT.left - 8}" y="${num(sy(n) + 4)}" text-anchor="end">${num(n)}</text>`);
  }
  out.push(
    `<text id="${id('x-label')}" x="${(PLOT.left + PLOT.right) / 2}" y="${PLOT.bottom + 42}" text-anchor="middle" font-size="14">True airspeed, TAS (m/s)</text>`,
  );
  out.push(
    `<text id="${id('y-label')}" x="22" y="${(PLOT.top + PLOT.bottom) / 2}" text-anchor="middle" font-size="14" transform="rotate(-90 22 ${(PLOT.top + PLOT.bottom) / 2})">Load factor n (g)</text>`,
  );
  out.push('</g>');

  // Limits
  out.push(`<g id="${id('limits')}" clip-path="url(#${id('plot-area')})">`);
  out.push(`<path id="${id('structural-limit')}" d="${structureD}" ${lineAttrs(STYLE.structure)}/>`);
  out.push(`<path id="${id('structural-limit-negative')}" d="${structureNegD}" ${lineAttrs(STYLE.structure)}/>`);
  out.push(`<path id="${id('stall-curve')}" d="${stallD}" ${lineAttrs(STYLE.stall)}/>`);
  if (stallNegD) out.push(`<path id="${id('stall-curve-negative')}" d="${stallNegD}" ${lineAttrs(STYLE.stallNeg)}/>`);
  out.push(`<path id="${id('stall-caution-curve')}" d="${stallCautionD}" ${lineAttrs(STYLE.stallCaution)}/>`);
  out.push(`<path id="${id('stall-warning-curve')}" d="${stallWarningD}" ${lineAttrs(STYLE.stallWarning)}/>`);
  if (thrustD) out.push(`<path id="${id('thrust-curve')}" d="${thrustD}" ${lineAttrs(STYLE.thrust)}/>`);
  if (vneX !== undefined) {
    out.push(
      `<line id="${id('vne')}" x1="${num(sx(vneX))}" y1="${PLOT.top}" x2="${num(sx(vneX))}" y2="${PLOT.bottom}" ${lineAttrs(STYLE.vne)}/>`,
    );
  }
  out.push('</g>');
  // Labels inside the plot get a white halo, so a curve running under one does not cut through its letters.
  const halo = 'stroke="#ffffff" stroke-width="3" stroke-linejoin="round" paint-order="stroke"';
  out.push(
    `<text x="${PLOT.left + 6}" y="${num(sy(aircraft.nLimitPos) - 6)}" font-size="12" ${halo}>n limit +${num(aircraft.nLimitPos)}</text>`,
  );
  out.push(
    `<text x="${PLOT.left + 6}" y="${num(sy(aircraft.nLimitNeg) + 15)}" font-size="12" ${halo}>n limit ${num(aircraft.nLimitNeg)}</text>`,
  );
  if (vneX !== undefined) {
    const vneText = input.vneTasMps !== undefined ? `V_NE ${num(input.vneTasMps)} TAS` : 'V_NE (CAS value)';
    out.push(
      `<text x="${num(sx(vneX) - 4)}" y="${PLOT.top + 14}" text-anchor="end" font-size="12" fill="${STYLE.vne.stroke}" ${halo}>${escapeXml(vneText)}</text>`,
    );
  }
  // Vs1 on the stall curve at n = 1 and the corner speed where it meets the structural limit.
  for (const [name, v, n, text] of [
    ['vs1-mark', vs1, 1, `Vs1 ${vs1.toFixed(1)}`],
    ['corner-mark', corner, aircraft.nLimitPos, `corner ${corner.toFixed(1)}`],
  ] as const) {
    if (v > xMax) continue;
    out.push(
      `<g id="${id(name)}"><line x1="${num(sx(v))}" y1="${num(sy(n))}" x2="${num(sx(v))}" y2="${PLOT.bottom}" stroke="#555555" stroke-width="1" stroke-dasharray="1 2"/>` +
        `<circle cx="${num(sx(v))}" cy="${num(sy(n))}" r="4" fill="#ffffff" stroke="${STYLE.stall.stroke}" stroke-width="2"/>` +
        `<text x="${num(sx(v) + 6)}" y="${PLOT.bottom - 6}" font-size="11.5" fill="#333333" ${halo}>${escapeXml(text)}</text></g>`,
    );
  }

  // Points: normal first, so alerts draw on top.
  out.push(`<g id="${id('points')}" clip-path="url(#${id('plot-area')})">`);
  for (const level of ['normal', 'caution', 'warning'] as const) {
    const size = level === 'normal' ? 5 : 9;
    const mine = points.filter((p) => p.level === level);
    out.push(`<g class="points-${level}" data-count="${mine.length}">`);
    for (const p of mine) out.push(markerSvg(level, sx(p.tasMps), sy(p.n), size));
    out.push('</g>');
  }
  out.push('</g>');

  // Legend
  const lx = PLOT.right + 24;
  let ly = PLOT.top + 6;
  const legend: string[] = [`<g id="${id('legend')}">`, `<text x="${lx}" y="${ly}" font-weight="bold">Limits</text>`];
  const legendLine = (style: { stroke: string; width: number; dash: string }, label: string, note?: string) => {
    ly += 24;
    legend.push(`<path d="M${lx} ${ly - 4}L${lx + 34} ${ly - 4}" ${lineAttrs(style)}/>`);
    legend.push(`<text x="${lx + 42}" y="${ly}">${escapeXml(label)}</text>`);
    if (note) {
      ly += 16;
      legend.push(`<text x="${lx + 42}" y="${ly}" font-size="11" fill="#555555">${escapeXml(note)}</text>`);
    }
  };
  legendLine(STYLE.stall, 'Stall (CLmax)', 'n = q·S·CLmax / W');
  if (stallNegD) legendLine(STYLE.stallNeg, 'Stall, negative g (CLmin)');
  legendLine(STYLE.stallCaution, 'Stall caution', `stall × ${thresholds.stallCaution.toFixed(2)}`);
  legendLine(STYLE.stallWarning, 'Stall warning', `stall × ${thresholds.stallWarning.toFixed(2)}`);
  legendLine(STYLE.thrust, 'Thrust (sustained turn)', 'largest n with thrust = drag, n ≥ 1');
  legendLine(STYLE.structure, 'Structure', `n limit +${num(aircraft.nLimitPos)} / ${num(aircraft.nLimitNeg)}`);
  ly += 34;
  legend.push(`<text x="${lx}" y="${ly}" font-weight="bold">Flight points</text>`);
  for (const level of ['normal', 'caution', 'warning'] as const) {
    ly += 24;
    const count = points.filter((p) => p.level === level).length;
    legend.push(markerSvg(level, lx + 17, ly - 4, level === 'normal' ? 8 : 11));
    legend.push(
      `<text x="${lx + 42}" y="${ly}">${escapeXml(`${level} (${LEVEL_MARKS[level].shape}) ×${count}`)}</text>`,
    );
  }
  ly += 30;
  for (const note of [
    'Curves at the median density and',
    'mass; each point was judged at',
    'its own density and mass.',
  ]) {
    legend.push(`<text x="${lx}" y="${ly}" font-size="11" fill="#555555">${escapeXml(note)}</text>`);
    ly += 15;
  }
  legend.push('</g>');
  out.push(...legend);

  out.push(
    `<text x="${PLOT.left}" y="${HEIGHT - 14}" font-size="11" fill="#555555">${escapeXml(
      "Advisory only, not flight-critical. The aircraft's approved limits, the operator's procedures and local aviation rules take precedence.",
    )}</text>`,
  );
  out.push('</svg>');
  return out.join('\n') + '\n';
}
