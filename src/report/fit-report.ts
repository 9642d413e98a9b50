/**
 * The report of `turnmargin fit`: JSON, Markdown and an SVG plot (CD against CL² with the fitted line, its 95 %
 * confidence band and the file's line; the Ps residual against time with the file's and the fitted model). Pure:
 * data in, text out.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { Envelope } from '../core/envelope.js';
import {
  CL_HOLD_S,
  FULL_THROTTLE,
  IDLE_THROTTLE,
  MAX_BANK_RATE_DPS,
  MAX_LOAD_FACTOR_SPREAD,
  type FitFrameCounts,
} from '../core/fit.js';
import type { FitOutcome } from '../core/fit-run.js';
import { meanResponseBand } from '../core/least-squares.js';
import { TONE_COLOURS } from '../core/nv-plane.js';
import { envelopeToJson } from './envelope-report.js';
import { escapeXml } from './nv-plot-svg.js';

export interface FitReportInput {
  /** The flight files as given (shown as given: the user typed them). */
  files: string[];
  aircraftFile: string;
  aircraft: Aircraft;
  rateWindowS: number;
  counts: FitFrameCounts;
  outcome: FitOutcome;
  /** Ps measured − modelled with the file's model against t_s, per file, decimated (for the plot). */
  residuals: Array<Array<[number, number]>>;
  /** The file given to --write-airframe, when one is written (the Markdown says how to look at it). */
  writtenAirframe?: string;
}

/** Numbers in the JSON: 6 significant digits, never NaN (null instead). */
const round = (x: number, digits = 6): number | null => (Number.isFinite(x) ? Number(x.toPrecision(digits)) : null);

/** The envelope figures compared, under the same keys as `turnmargin envelope --format json`. */
export function envelopeSummary(env: Envelope): Record<string, unknown> {
  const json = envelopeToJson(env, { notes: [] });
  return {
    stall_speed_mps: json.stall_speed_mps,
    corner_speed_mps: json.corner_speed_mps,
    max_sustained: json.max_sustained,
    max_sustained_turn_rate: json.max_sustained_turn_rate,
    min_sustained_radius: json.min_sustained_radius,
  };
}

const estimateJson = (e: { value: number; ci95: [number, number] }) => ({
  value: round(e.value),
  ci95: [round(e.ci95[0]), round(e.ci95[1])],
});

export function fitToJson(input: FitReportInput): Record<string, unknown> {
  const { counts } = input;
  const { fit, conditions } = input.outcome;
  const out: Record<string, unknown> = {
    files: input.files,
    frames: {
      total: counts.total,
      usable: counts.usable,
      idle: counts.idle,
      full: counts.full,
      without_throttle: counts.withoutThrottle,
    },
    rate_window_s: input.rateWindowS,
    independent_samples: { idle: fit.independent.idle, full: fit.independent.full },
    polar:
      fit.polar === null
        ? null
        : {
            cd0: estimateJson(fit.polar.cd0),
            k: estimateJson(fit.polar.k),
            r2: round(fit.polar.r2),
            cl2_range: [round(fit.polar.cl2Range[0]), round(fit.polar.cl2Range[1])],
            samples: fit.polar.samples,
          },
  };
  if (fit.polarReason !== null) out['polar_reason'] = fit.polarReason;
  out['thrust_scale'] =
    fit.thrustScale === null
      ? null
      : {
          ...estimateJson(fit.thrustScale.scale),
          samples: fit.thrustScale.samples,
          // The polar the drag came from: the one fitted here, or the airframe file's when none could be.
          polar: fit.thrustScale.polar,
        };
  if (fit.thrustReason !== null) out['thrust_scale_reason'] = fit.thrustReason;
  out['cl_demonstrated'] = input.outcome.clDemonstrated === null ? null : round(input.outcome.clDemonstrated);
  out['airframe'] = { cd0: round(input.aircraft.cd0), k: round(input.aircraft.k), cl_max: input.aircraft.clMax };
  out['conditions'] = {
    altitude_m: conditions.altitudeM,
    isa_deviation_c: conditions.isaDeviationK,
    mass_kg: conditions.massKg,
  };
  out['envelope'] = {
    file: envelopeSummary(input.outcome.envelopeFile),
    fitted: envelopeSummary(input.outcome.envelopeFitted),
  };
  out['warnings'] = input.outcome.warnings;
  return out;
}

const f = (x: number | null | undefined, digits: number): string =>
  x === null || x === undefined || !Number.isFinite(x) ? '—' : x.toFixed(digits);

/** The `envelope` command that shows the fitted envelope at the compared conditions. */
export function envelopeCommand(airframeFile: string, c: FitOutcome['conditions']): string {
  return `turnmargin envelope --aircraft ${airframeFile} --altitude ${c.altitudeM} --isa-dev ${c.isaDeviationK} --mass ${c.massKg}`;
}

export function fitToMarkdown(input: FitReportInput): string {
  const { counts, aircraft } = input;
  const { fit } = input.outcome;
  const L: string[] = [];
  L.push(`# Model fit — ${aircraft.name}`, '');
  L.push(
    '> Advisory only. A fitted model is only as good as its data: steady segments, calm air, a known throttle. ' +
      "Check it before use; the aircraft's approved limits, the operator's procedures and local aviation rules prevail.",
    '',
  );
  L.push(`Flights: ${input.files.map((x) => `\`${x}\``).join(', ')}  `);
  L.push(`Airframe file: \`${input.aircraftFile}\``, '');
  L.push('## Method', '');
  L.push(
    'In quasi-steady flight the energy relation gives the drag: D = T − W·Ps/V, with Ps = dh/dt + (V/g0)·dV/dt ' +
      `measured over the rate window of ${input.rateWindowS} s (the energy method of performance flight testing). ` +
      `Idle frames (throttle ≤ ${IDLE_THROTTLE}, T = 0) give CD = D/(q·S) against CL² = (n·W/(q·S))², fitted by least ` +
      `squares to CD = CD0 + k·CL². Full-throttle frames (throttle ≥ ${FULL_THROTTLE}) give T = D_polar(CL) + W·Ps/V ` +
      "with the fitted polar (the file's when none is fitted), and the thrust scale s in T ≈ s·T_model. " +
      `A frame is usable when flying, with its throttle known, the bank changing by less than ${MAX_BANK_RATE_DPS} °/s ` +
      'and a whole rate window since any break. Neighbouring frames are not independent: the fit keeps at most one ' +
      'usable frame per rate window (their windows share no frame), where the whole window held one throttle regime ' +
      `and the load factor within ${MAX_LOAD_FACTOR_SPREAD} g; the rates, slopes over the window, are paired with the ` +
      "smoothed state at the window's middle. The 95 % intervals (Student t) come from those samples; the thrust " +
      "scale's interval also carries the polar's uncertainty.",
    '',
  );
  L.push('## Frames', '');
  L.push('| total | usable | idle | full throttle | without throttle |', '|---:|---:|---:|---:|---:|');
  L.push(`| ${counts.total} | ${counts.usable} | ${counts.idle} | ${counts.full} | ${counts.withoutThrottle} |`, '');
  L.push(
    `Independent samples (one per rate window): ${fit.independent.idle} idle, ${fit.independent.full} full throttle.`,
    '',
  );
  L.push('## Drag polar', '');
  if (fit.polar === null) {
    L.push(`Not estimated: ${fit.polarReason}.`, '');
  } else {
    const p = fit.polar;
    L.push('| | file | fitted | 95 % interval |', '|---|---:|---:|---|');
    L.push(`| CD0 | ${f(aircraft.cd0, 4)} | ${f(p.cd0.value, 4)} | ${f(p.cd0.ci95[0], 4)} … ${f(p.cd0.ci95[1], 4)} |`);
    L.push(`| k | ${f(aircraft.k, 4)} | ${f(p.k.value, 4)} | ${f(p.k.ci95[0], 4)} … ${f(p.k.ci95[1], 4)} |`, '');
    L.push(
      `R² ${f(p.r2, 3)} over CL² ${f(p.cl2Range[0], 3)} … ${f(p.cl2Range[1], 3)}, ${p.samples} independent samples.`,
      '',
    );
  }
  L.push('## Thrust', '');
  if (fit.thrustScale === null) L.push(`No thrust scale: ${fit.thrustReason}.`, '');
  else {
    const s = fit.thrustScale.scale;
    L.push(
      `Measured thrust = ${f(s.value, 3)} × the file's (95 % interval ${f(s.ci95[0], 3)} … ${f(s.ci95[1], 3)}), ` +
        `${fit.thrustScale.samples} independent samples, with the ${fit.thrustScale.polar === 'fitted' ? 'fitted' : "file's"} polar.`,
      '',
    );
  }
  L.push('## Demonstrated lift', '');
  L.push(
    `Highest CL held for ${CL_HOLD_S} s: ${f(input.outcome.clDemonstrated, 3)} (file cl_max ${f(aircraft.clMax, 3)}). ` +
      'fit never raises cl_max by itself.',
    '',
  );
  L.push('## What the fit changes', '');
  const c = input.outcome.conditions;
  L.push(
    `Envelope at the flights' median conditions: ${c.altitudeM} m, ISA ${c.isaDeviationK >= 0 ? '+' : ''}${c.isaDeviationK} °C, ${c.massKg} kg.`,
    '',
  );
  const a = input.outcome.envelopeFile;
  const b = input.outcome.envelopeFitted;
  const opt = (o: { value: number; speedMps: number } | null, d: number): string =>
    o === null ? '—' : `${o.value.toFixed(d)} at ${o.speedMps.toFixed(1)} m/s`;
  L.push('| | file model | fitted model |', '|---|---:|---:|');
  L.push(`| stall speed Vs1 (TAS) | ${f(a.stallSpeedMps, 2)} m/s | ${f(b.stallSpeedMps, 2)} m/s |`);
  L.push(`| corner speed (TAS) | ${f(a.cornerSpeedMps, 2)} m/s | ${f(b.cornerSpeedMps, 2)} m/s |`);
  L.push(`| max sustained load factor | ${opt(a.maxSustainedLoadFactor, 3)} | ${opt(b.maxSustainedLoadFactor, 3)} |`);
  L.push(
    `| max sustained turn rate, °/s | ${opt(a.maxSustainedTurnRateDps, 1)} | ${opt(b.maxSustainedTurnRateDps, 1)} |`,
  );
  L.push(`| min sustained radius, m | ${opt(a.minSustainedRadiusM, 1)} | ${opt(b.minSustainedRadiusM, 1)} |`, '');
  if (input.writtenAirframe !== undefined)
    L.push(
      `The fitted airframe is written to \`${input.writtenAirframe}\`; its full envelope: \`${envelopeCommand(input.writtenAirframe, c)}\`.`,
      '',
    );
  if (input.outcome.warnings.length) {
    L.push('## Warnings', '');
    for (const w of input.outcome.warnings) L.push(`- ${w}`);
    L.push('');
  }
  return L.join('\n');
}

function niceStep(span: number, count = 5): number {
  const raw = (span || 1) / count;
  const mag = 10 ** Math.floor(Math.log10(raw));
  return [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
}

function ticks(lo: number, hi: number): number[] {
  const step = niceStep(hi - lo);
  const out: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) out.push(Number(t.toPrecision(12)));
  return out;
}

const num = (x: number): string => (Math.round(x * 10) / 10).toString();

interface Panel {
  id: string;
  left: number;
  top: number;
  right: number;
  bottom: number;
  xLo: number;
  xHi: number;
  yLo: number;
  yHi: number;
}

const sx = (p: Panel, x: number): number => p.left + ((x - p.xLo) / (p.xHi - p.xLo)) * (p.right - p.left);
const sy = (p: Panel, y: number): number => p.bottom - ((y - p.yLo) / (p.yHi - p.yLo)) * (p.bottom - p.top);

/** Grid, frame, ticks and labels of one panel, in the look of the review's n–V plot. */
function panelFrame(p: Panel, xLabel: string, yLabel: string, title: string): string[] {
  const out: string[] = [];
  out.push(
    `<text x="${p.left}" y="${p.top - 12}" font-size="15" font-weight="bold">${escapeXml(title)}</text>`,
    `<g id="${p.id}-grid" stroke="#e3e3e3" stroke-width="1">`,
  );
  const xt = ticks(p.xLo, p.xHi);
  const yt = ticks(p.yLo, p.yHi);
  for (const t of xt) out.push(`<line x1="${num(sx(p, t))}" y1="${p.top}" x2="${num(sx(p, t))}" y2="${p.bottom}"/>`);
  for (const t of yt) out.push(`<line x1="${p.left}" y1="${num(sy(p, t))}" x2="${p.right}" y2="${num(sy(p, t))}"/>`);
  out.push('</g>', `<g id="${p.id}-axes" fill="#222222">`);
  out.push(
    `<rect x="${p.left}" y="${p.top}" width="${p.right - p.left}" height="${p.bottom - p.top}" fill="none" stroke="#444444" stroke-width="1"/>`,
  );
  for (const t of xt)
    out.push(`<text x="${num(sx(p, t))}" y="${p.bottom + 18}" text-anchor="middle">${escapeXml(String(t))}</text>`);
  for (const t of yt)
    out.push(`<text x="${p.left - 8}" y="${num(sy(p, t) + 4)}" text-anchor="end">${escapeXml(String(t))}</text>`);
  out.push(
    `<text x="${(p.left + p.right) / 2}" y="${p.bottom + 40}" text-anchor="middle" font-size="14">${escapeXml(xLabel)}</text>`,
  );
  const my = (p.top + p.bottom) / 2;
  out.push(
    `<text x="22" y="${my}" text-anchor="middle" font-size="14" transform="rotate(-90 22 ${my})">${escapeXml(yLabel)}</text>`,
  );
  out.push('</g>');
  return out;
}

/** Points of the residual further apart than this, s, or 3 of their usual spacings (a decimated long flight), are not joined by a line. */
const RESIDUAL_GAP_S = 1.5;

function gapOf(series: ReadonlyArray<[number, number]>): number {
  const steps = series
    .slice(1)
    .map((p, i) => p[0] - series[i]![0])
    .sort((a, b) => a - b);
  return Math.max(RESIDUAL_GAP_S, 3 * (steps[steps.length >> 1] ?? 0));
}

/** Split a series where consecutive points are more than gapS apart. */
function runsOf(series: ReadonlyArray<[number, number]>, gapS: number): Array<Array<[number, number]>> {
  const runs: Array<Array<[number, number]>> = [];
  let run: Array<[number, number]> = [];
  for (const p of series) {
    if (run.length > 0 && p[0] - run[run.length - 1]![0] > gapS) {
      runs.push(run);
      run = [];
    }
    run.push(p);
  }
  if (run.length > 0) runs.push(run);
  return runs;
}

const WIDTH = 960;
const HEIGHT = 900;
const FITTED = '#1f4e99';
const BAND = '#9fb8e0';
const FILE_LINE = TONE_COLOURS.caution;

/**
 * CD against CL² (the independent idle samples, the fitted line with its 95 % band, the file's line) above the Ps
 * residual against time (the file's model along the flight, the fitted model at the independent samples).
 */
export function renderFitPlotSvg(input: FitReportInput): string {
  const { aircraft } = input;
  const { fit } = input.outcome;
  const out: string[] = ['<?xml version="1.0" encoding="UTF-8"?>'];
  out.push(
    `<svg xmlns="http://www.w3.org/2000/svg" width="${WIDTH}" height="${HEIGHT}" viewBox="0 0 ${WIDTH} ${HEIGHT}" font-family="Helvetica, Arial, sans-serif" font-size="13">`,
    `<title>${escapeXml(`Model fit of ${aircraft.name}`)}</title>`,
    `<desc>${escapeXml(
      `Drag coefficient against lift coefficient squared from ${fit.independent.idle} independent idle samples, and the specific excess power residual against time.`,
    )}</desc>`,
    `<rect x="0" y="0" width="${WIDTH}" height="${HEIGHT}" fill="#ffffff"/>`,
    `<text x="80" y="30" font-size="19" font-weight="bold">${escapeXml(`Model fit — ${aircraft.name}`)}</text>`,
    `<text x="80" y="52" font-size="12.5" fill="#333333">${escapeXml(
      `${input.files.join(', ')} · rate window ${input.rateWindowS} s · one sample per rate window`,
    )}</text>`,
  );

  // Panel 1: the polar.
  const pts = fit.idlePoints;
  const line = fit.polar?.line ?? null;
  const xHi = Math.max(0.2, ...pts.map((p) => p[0])) * 1.1;
  const fileAt = (x: number) => aircraft.cd0 + aircraft.k * x;
  const ys = [...pts.map((p) => p[1]), fileAt(0), fileAt(xHi)];
  if (line) ys.push(...meanResponseBand(line, 0), ...meanResponseBand(line, xHi));
  const yLo = Math.min(0, ...ys);
  const yHi = Math.max(...ys) * 1.1 || 0.1;
  const p1: Panel = { id: 'polar', left: 80, top: 100, right: 700, bottom: 420, xLo: 0, xHi, yLo, yHi };
  out.push(...panelFrame(p1, 'Lift coefficient squared, CL²', 'Drag coefficient CD', 'Drag polar from idle frames'));
  out.push(
    `<defs><clipPath id="polar-area"><rect x="${p1.left}" y="${p1.top}" width="${p1.right - p1.left}" height="${p1.bottom - p1.top}"/></clipPath>` +
      `<clipPath id="residual-area"><rect x="80" y="520" width="620" height="300"/></clipPath></defs>`,
  );
  out.push(`<g clip-path="url(#polar-area)">`);
  if (line) {
    const upper: string[] = [];
    const lower: string[] = [];
    for (let i = 0; i <= 40; i++) {
      const x = (xHi * i) / 40;
      const [lo, hi] = meanResponseBand(line, x);
      upper.push(`${num(sx(p1, x))},${num(sy(p1, hi))}`);
      lower.unshift(`${num(sx(p1, x))},${num(sy(p1, lo))}`);
    }
    out.push(
      `<polygon id="polar-band" points="${[...upper, ...lower].join(' ')}" fill="${BAND}" fill-opacity="0.55" stroke="none"/>`,
      `<line id="polar-fitted" x1="${num(sx(p1, 0))}" y1="${num(sy(p1, line.intercept.value))}" x2="${num(sx(p1, xHi))}" y2="${num(sy(p1, line.intercept.value + line.slope.value * xHi))}" stroke="${FITTED}" stroke-width="2.2"/>`,
    );
  }
  out.push(
    `<line id="polar-file" x1="${num(sx(p1, 0))}" y1="${num(sy(p1, fileAt(0)))}" x2="${num(sx(p1, xHi))}" y2="${num(sy(p1, fileAt(xHi)))}" stroke="${FILE_LINE}" stroke-width="2" stroke-dasharray="7 4"/>`,
  );
  out.push(`<g id="polar-points">`);
  for (const [x, y] of pts)
    out.push(
      `<circle cx="${num(sx(p1, x))}" cy="${num(sy(p1, y))}" r="2.6" fill="#222222" stroke="#ffffff" stroke-width="0.6"/>`,
    );
  out.push('</g>', '</g>');
  if (!line)
    out.push(
      `<text x="${p1.left + 14}" y="${p1.top + 24}" fill="#555555">${escapeXml('polar not estimated (see the report for what to fly)')}</text>`,
    );

  // Legend of both panels.
  const lx = 724;
  let ly = 118;
  const legend: string[] = [`<g id="legend">`, `<text x="${lx}" y="${ly}" font-weight="bold">Polar</text>`];
  ly += 22;
  legend.push(
    `<circle cx="${lx + 16}" cy="${ly - 4}" r="3" fill="#222222"/><text x="${lx + 36}" y="${ly}">idle sample</text>`,
  );
  ly += 22;
  if (line) {
    legend.push(
      `<rect x="${lx}" y="${ly - 12}" width="32" height="12" fill="${BAND}" fill-opacity="0.55"/><line x1="${lx}" y1="${ly - 6}" x2="${lx + 32}" y2="${ly - 6}" stroke="${FITTED}" stroke-width="2.2"/><text x="${lx + 36}" y="${ly}">fitted, 95 % band</text>`,
    );
    ly += 22;
  }
  legend.push(
    `<line x1="${lx}" y1="${ly - 4}" x2="${lx + 32}" y2="${ly - 4}" stroke="${FILE_LINE}" stroke-width="2" stroke-dasharray="7 4"/><text x="${lx + 36}" y="${ly}">airframe file</text>`,
  );
  ly = 538;
  legend.push(`<text x="${lx}" y="${ly}" font-weight="bold">Ps residual</text>`);
  ly += 22;
  legend.push(
    `<line x1="${lx}" y1="${ly - 4}" x2="${lx + 32}" y2="${ly - 4}" stroke="${FILE_LINE}" stroke-width="1.4"/><text x="${lx + 36}" y="${ly}">file model</text>`,
  );
  ly += 22;
  legend.push(
    `<rect x="${lx + 13}" y="${ly - 7}" width="6" height="6" fill="${FITTED}"/><text x="${lx + 36}" y="${ly}">fitted model</text>`,
  );
  legend.push('</g>');

  // Panel 2: residuals against time, the files one after the other (each from its own first frame).
  let offset = 0;
  const residualSeries: Array<Array<[number, number]>> = [];
  const fittedSeries: Array<Array<[number, number]>> = [];
  input.residuals.forEach((r, i) => {
    const fitted = input.outcome.fittedResiduals[i] ?? [];
    const times = [...r.map((p) => p[0]), ...fitted.map((p) => p[0])];
    if (times.length === 0) {
      residualSeries.push([]);
      fittedSeries.push([]);
      return;
    }
    const t0 = Math.min(...times);
    const t1 = Math.max(...times);
    residualSeries.push(r.map(([t, v]) => [offset + t - t0, v]));
    fittedSeries.push(fitted.map(([t, v]) => [offset + t - t0, v]));
    offset += t1 - t0 + 5;
  });
  const all = [...residualSeries.flat(), ...fittedSeries.flat()];
  const tHi = Math.max(1, ...all.map((p) => p[0]));
  const vAbs = Math.min(20, Math.max(0.5, ...all.map((p) => Math.abs(p[1]))));
  const p2: Panel = {
    id: 'residual',
    left: 80,
    top: 520,
    right: 700,
    bottom: 820,
    xLo: 0,
    xHi: tHi,
    yLo: -vAbs * 1.1,
    yHi: vAbs * 1.1,
  };
  out.push(
    ...panelFrame(
      p2,
      input.files.length > 1 ? 'Flight time, s (files one after the other)' : 'Flight time, s',
      'Ps measured − modelled (m/s)',
      'Specific excess power residual at full throttle and idle',
    ),
  );
  out.push(
    `<line x1="${p2.left}" y1="${num(sy(p2, 0))}" x2="${p2.right}" y2="${num(sy(p2, 0))}" stroke="#9a9a9a" stroke-width="1"/>`,
  );
  out.push(`<g clip-path="url(#residual-area)">`);
  residualSeries.forEach((s, i) => {
    // One polyline per stretch with a modelled Ps: no line across part-throttle flying or a break.
    out.push(
      `<g id="residual-file-${i + 1}" fill="none" stroke="${FILE_LINE}" stroke-width="1.4" stroke-linejoin="round">`,
    );
    for (const run of runsOf(s, gapOf(s)))
      if (run.length > 1)
        out.push(`<polyline points="${run.map(([t, v]) => `${num(sx(p2, t))},${num(sy(p2, v))}`).join(' ')}"/>`);
    out.push('</g>');
  });
  fittedSeries.forEach((s, i) => {
    out.push(`<g id="residual-fitted-${i + 1}" fill="${FITTED}">`);
    for (const [t, v] of s)
      out.push(`<rect x="${num(sx(p2, t) - 3)}" y="${num(sy(p2, v) - 3)}" width="6" height="6"/>`);
    out.push('</g>');
  });
  out.push('</g>');
  if (all.length === 0)
    out.push(
      `<text x="${p2.left + 14}" y="${p2.top + 24}" fill="#555555">no frame with a modelled Ps (throttle at full or idle)</text>`,
    );
  out.push(...legend);
  out.push(
    `<text x="80" y="${HEIGHT - 20}" font-size="11" fill="#555555">${escapeXml(
      "Advisory only: a fitted model is only as good as its data (steady segments, calm air, a known throttle). The aircraft's approved limits prevail.",
    )}</text>`,
  );
  out.push('</svg>');
  return out.join('\n') + '\n';
}
