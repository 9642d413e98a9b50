/**
 * The report of `turnmargin fit`: JSON, Markdown and an SVG plot (CD against CL² with the fitted line, its 95 %
 * confidence band and the file's line; the Ps residual against time). Pure: data in, text out.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { Envelope } from '../core/envelope.js';
import type { FitFrameCounts, FitResult } from '../core/fit.js';
import { meanResponseBand } from '../core/least-squares.js';

export interface FitConditions {
  altitudeM: number;
  temperatureC: number;
  massKg: number;
}

export interface FitReportInput {
  files: string[];
  aircraftFile: string;
  aircraft: Aircraft;
  rateWindowS: number;
  counts: FitFrameCounts;
  fit: FitResult;
  clDemonstrated: number | null;
  conditions: FitConditions;
  envelopeFile: Envelope;
  envelopeFitted: Envelope;
  warnings: string[];
  /** The Ps residual against time, decimated, one series per file (for the plot). */
  residuals: Array<Array<[number, number]>>;
}

const round = (x: number, digits = 6): number => Number(x.toPrecision(digits));

function envelopeSummary(env: Envelope): Record<string, unknown> {
  const opt = (o: { value: number; speedMps: number } | null) =>
    o === null ? null : { value: round(o.value), speed_mps: round(o.speedMps) };
  return {
    stall_speed_mps: round(env.stallSpeedMps),
    corner_speed_mps: round(env.cornerSpeedMps),
    max_sustained_load_factor: opt(env.maxSustainedLoadFactor),
    max_sustained_turn_rate_dps: opt(env.maxSustainedTurnRateDps),
    min_sustained_radius_m: opt(env.minSustainedRadiusM),
  };
}

const estimateJson = (e: { value: number; ci95: [number, number] }) => ({
  value: round(e.value),
  ci95: [round(e.ci95[0]), round(e.ci95[1])],
});

export function fitToJson(input: FitReportInput): Record<string, unknown> {
  const { fit, counts } = input;
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
    independent_samples: fit.independent,
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
    fit.thrustScale === null ? null : { ...estimateJson(fit.thrustScale.scale), samples: fit.thrustScale.samples };
  if (fit.thrustReason !== null) out['thrust_scale_reason'] = fit.thrustReason;
  out['cl_demonstrated'] = input.clDemonstrated === null ? null : round(input.clDemonstrated);
  out['airframe'] = { cd0: input.aircraft.cd0, k: round(input.aircraft.k), cl_max: input.aircraft.clMax };
  out['envelope'] = {
    conditions: {
      altitude_m: round(input.conditions.altitudeM),
      temperature_c: round(input.conditions.temperatureC),
      mass_kg: round(input.conditions.massKg),
    },
    file: envelopeSummary(input.envelopeFile),
    fitted: envelopeSummary(input.envelopeFitted),
  };
  out['warnings'] = input.warnings;
  return out;
}

const f = (x: number | null | undefined, digits: number): string =>
  x === null || x === undefined || !Number.isFinite(x) ? '—' : x.toFixed(digits);

export function fitToMarkdown(input: FitReportInput): string {
  const { fit, counts } = input;
  const L: string[] = [];
  L.push(`# Model fit — ${input.aircraft.name}`, '');
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
      'measured over the rate window (the energy method of performance flight testing). Idle frames (throttle ≤ 0.02, ' +
      'T = 0) give CD = D/(q·S) against CL² = (n·W/(q·S))², fitted by least squares to CD = CD0 + k·CL². Full-throttle ' +
      "frames (throttle ≥ 0.98) give T = D_polar(CL) + W·Ps/V, compared with the file's thrust: T ≈ s·T_model. " +
      `Frames are used when flying, steady (bank changing by less than 10 °/s) and a whole rate window (${input.rateWindowS} s) ` +
      'after any break; the intervals use one sample per rate window, as neighbouring frames are not independent.',
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
    L.push(
      `| CD0 | ${f(input.aircraft.cd0, 4)} | ${f(p.cd0.value, 4)} | ${f(p.cd0.ci95[0], 4)} … ${f(p.cd0.ci95[1], 4)} |`,
    );
    L.push(`| k | ${f(input.aircraft.k, 4)} | ${f(p.k.value, 4)} | ${f(p.k.ci95[0], 4)} … ${f(p.k.ci95[1], 4)} |`, '');
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
        `${fit.thrustScale.samples} independent samples${fit.polar === null ? ", with the file's polar" : ', with the fitted polar'}.`,
      '',
    );
  }
  L.push('## Demonstrated lift', '');
  L.push(
    `Highest CL held for 0.5 s: ${f(input.clDemonstrated, 3)} (file cl_max ${f(input.aircraft.clMax, 3)}). ` +
      'fit never raises cl_max by itself.',
    '',
  );
  L.push('## What the fit changes', '');
  const c = input.conditions;
  L.push(
    `Envelope at the flights' median conditions: ${f(c.altitudeM, 0)} m, ${f(c.temperatureC, 1)} °C, ${f(c.massKg, 2)} kg.`,
    '',
  );
  const a = envelopeSummary(input.envelopeFile) as Record<string, { value: number; speed_mps: number } | number | null>;
  const b = envelopeSummary(input.envelopeFitted) as typeof a;
  const opt = (o: unknown, d: number): string => {
    const v = o as { value: number; speed_mps: number } | null;
    return v === null ? '—' : `${v.value.toFixed(d)} at ${v.speed_mps.toFixed(1)} m/s`;
  };
  L.push('| | file model | fitted model |', '|---|---:|---:|');
  L.push(
    `| stall speed Vs1 (TAS) | ${f(a['stall_speed_mps'] as number, 1)} m/s | ${f(b['stall_speed_mps'] as number, 1)} m/s |`,
  );
  L.push(
    `| corner speed (TAS) | ${f(a['corner_speed_mps'] as number, 1)} m/s | ${f(b['corner_speed_mps'] as number, 1)} m/s |`,
  );
  L.push(
    `| max sustained load factor | ${opt(a['max_sustained_load_factor'], 2)} | ${opt(b['max_sustained_load_factor'], 2)} |`,
  );
  L.push(
    `| max sustained turn rate, °/s | ${opt(a['max_sustained_turn_rate_dps'], 1)} | ${opt(b['max_sustained_turn_rate_dps'], 1)} |`,
  );
  L.push(
    `| min sustained radius, m | ${opt(a['min_sustained_radius_m'], 0)} | ${opt(b['min_sustained_radius_m'], 0)} |`,
    '',
  );
  if (input.warnings.length) {
    L.push('## Warnings', '');
    for (const w of input.warnings) L.push(`- ${w}`);
    L.push('');
  }
  return L.join('\n');
}

function esc(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

function niceTicks(lo: number, hi: number, count = 5): number[] {
  const span = hi - lo || 1;
  const raw = span / count;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
  const ticks: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) ticks.push(Number(t.toPrecision(12)));
  return ticks;
}

interface Panel {
  x0: number;
  y0: number;
  w: number;
  h: number;
  xLo: number;
  xHi: number;
  yLo: number;
  yHi: number;
}

function axes(p: Panel, xLabel: string, yLabel: string, title: string): string[] {
  const out: string[] = [];
  const px = (x: number) => p.x0 + ((x - p.xLo) / (p.xHi - p.xLo)) * p.w;
  const py = (y: number) => p.y0 + p.h - ((y - p.yLo) / (p.yHi - p.yLo)) * p.h;
  out.push(`<rect x="${p.x0}" y="${p.y0}" width="${p.w}" height="${p.h}" fill="none" stroke="#444"/>`);
  for (const t of niceTicks(p.xLo, p.xHi)) {
    const x = px(t).toFixed(1);
    out.push(`<line x1="${x}" y1="${p.y0 + p.h}" x2="${x}" y2="${p.y0 + p.h + 4}" stroke="#444"/>`);
    out.push(`<text x="${x}" y="${p.y0 + p.h + 16}" text-anchor="middle">${t}</text>`);
  }
  for (const t of niceTicks(p.yLo, p.yHi)) {
    const y = py(t).toFixed(1);
    out.push(`<line x1="${p.x0 - 4}" y1="${y}" x2="${p.x0}" y2="${y}" stroke="#444"/>`);
    out.push(`<line x1="${p.x0}" y1="${y}" x2="${p.x0 + p.w}" y2="${y}" stroke="#ddd"/>`);
    out.push(`<text x="${p.x0 - 6}" y="${y}" text-anchor="end" dominant-baseline="middle">${t}</text>`);
  }
  out.push(`<text x="${p.x0 + p.w / 2}" y="${p.y0 + p.h + 34}" text-anchor="middle">${esc(xLabel)}</text>`);
  out.push(
    `<text x="${p.x0 - 48}" y="${p.y0 + p.h / 2}" text-anchor="middle" transform="rotate(-90 ${p.x0 - 48} ${p.y0 + p.h / 2})">${esc(yLabel)}</text>`,
  );
  out.push(`<text x="${p.x0}" y="${p.y0 - 10}" font-weight="bold">${esc(title)}</text>`);
  return out;
}

/** CD against CL² (points, fitted line with its band, file line) above the Ps residual against time. */
export function renderFitPlotSvg(input: FitReportInput): string {
  const W = 760;
  const H = 720;
  const out: string[] = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="sans-serif" font-size="12">`,
    `<rect width="${W}" height="${H}" fill="#fff"/>`,
    `<text x="20" y="24" font-size="15" font-weight="bold">Model fit — ${esc(input.aircraft.name)}</text>`,
  ];
  const pts = input.fit.idlePoints;
  const ac = input.aircraft;
  const xs = pts.map((p) => p[0]);
  const xHi = Math.max(0.1, ...xs) * 1.1;
  const fileAt = (x: number) => ac.cd0 + ac.k * x;
  const ys = [...pts.map((p) => p[1]), fileAt(0), fileAt(xHi)];
  const line = input.fit.polar?.line ?? null;
  if (line) ys.push(line.intercept.value, line.intercept.value + line.slope.value * xHi);
  const yLo = Math.min(0, ...ys);
  const yHi = Math.max(...ys) * 1.1 || 0.1;
  const p1: Panel = { x0: 80, y0: 60, w: 640, h: 260, xLo: 0, xHi, yLo, yHi };
  const px = (x: number) => (p1.x0 + ((x - p1.xLo) / (p1.xHi - p1.xLo)) * p1.w).toFixed(1);
  const py = (y: number) => (p1.y0 + p1.h - ((y - p1.yLo) / (p1.yHi - p1.yLo)) * p1.h).toFixed(1);
  out.push(...axes(p1, 'CL²', 'CD', 'Drag polar from idle frames (one point per rate window)'));
  if (line) {
    const upper: string[] = [];
    const lower: string[] = [];
    for (let i = 0; i <= 40; i++) {
      const x = (xHi * i) / 40;
      const [lo, hi] = meanResponseBand(line, x);
      upper.push(`${px(x)},${py(hi)}`);
      lower.unshift(`${px(x)},${py(lo)}`);
    }
    out.push(`<polygon points="${[...upper, ...lower].join(' ')}" fill="#9ecae1" fill-opacity="0.5" stroke="none"/>`);
    out.push(
      `<line x1="${px(0)}" y1="${py(line.intercept.value)}" x2="${px(xHi)}" y2="${py(line.intercept.value + line.slope.value * xHi)}" stroke="#08519c" stroke-width="2"/>`,
    );
  }
  out.push(
    `<line x1="${px(0)}" y1="${py(fileAt(0))}" x2="${px(xHi)}" y2="${py(fileAt(xHi))}" stroke="#a63603" stroke-width="2" stroke-dasharray="6 4"/>`,
  );
  for (const [x, y] of pts) out.push(`<circle cx="${px(x)}" cy="${py(y)}" r="2.5" fill="#333"/>`);
  const legendY = p1.y0 + 14;
  out.push(
    `<circle cx="${p1.x0 + 14}" cy="${legendY}" r="3" fill="#333"/><text x="${p1.x0 + 24}" y="${legendY + 4}">idle samples</text>`,
  );
  if (line)
    out.push(
      `<line x1="${p1.x0 + 120}" y1="${legendY}" x2="${p1.x0 + 150}" y2="${legendY}" stroke="#08519c" stroke-width="2"/><text x="${p1.x0 + 156}" y="${legendY + 4}">fitted, with 95 % band</text>`,
    );
  out.push(
    `<line x1="${p1.x0 + 320}" y1="${legendY}" x2="${p1.x0 + 350}" y2="${legendY}" stroke="#a63603" stroke-width="2" stroke-dasharray="6 4"/><text x="${p1.x0 + 356}" y="${legendY + 4}">airframe file</text>`,
  );
  if (!line) out.push(`<text x="${p1.x0 + 14}" y="${p1.y0 + 40}">polar not estimated (see the report)</text>`);

  // Ps residual against time, files one after the other on one axis (each offset by the previous file's end).
  const series: Array<Array<[number, number]>> = [];
  let offset = 0;
  for (const r of input.residuals) {
    if (r.length === 0) continue;
    const t0 = r[0]![0];
    series.push(r.map(([t, v]) => [offset + t - t0, v]));
    offset += r[r.length - 1]![0] - t0 + 1;
  }
  const all = series.flat();
  const tHi = Math.max(1, ...all.map((p) => p[0]));
  const vAbs = Math.max(0.5, ...all.map((p) => Math.abs(p[1])));
  const p2: Panel = { x0: 80, y0: 400, w: 640, h: 250, xLo: 0, xHi: tHi, yLo: -vAbs * 1.1, yHi: vAbs * 1.1 };
  const qx = (x: number) => (p2.x0 + ((x - p2.xLo) / (p2.xHi - p2.xLo)) * p2.w).toFixed(1);
  const qy = (y: number) => (p2.y0 + p2.h - ((y - p2.yLo) / (p2.yHi - p2.yLo)) * p2.h).toFixed(1);
  out.push(
    ...axes(
      p2,
      'flight time, s (files in order)',
      'Ps measured − modelled, m/s',
      'Ps residual at full throttle and idle',
    ),
  );
  out.push(`<line x1="${p2.x0}" y1="${qy(0)}" x2="${p2.x0 + p2.w}" y2="${qy(0)}" stroke="#444"/>`);
  for (const s of series) {
    if (s.length > 1)
      out.push(
        `<polyline points="${s.map(([t, v]) => `${qx(t)},${qy(v)}`).join(' ')}" fill="none" stroke="#08519c" stroke-width="1"/>`,
      );
  }
  if (all.length === 0) out.push(`<text x="${p2.x0 + 14}" y="${p2.y0 + 30}">no frame with a modelled Ps</text>`);
  out.push(
    `<text x="20" y="${H - 12}" fill="#555">Advisory only: a fitted model is only as good as its data. The aircraft's approved limits prevail.</text>`,
  );
  out.push('</svg>');
  return out.join('\n') + '\n';
}
