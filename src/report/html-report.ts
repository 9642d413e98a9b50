/**
 * The flight report as one self-contained HTML5 file: inline CSS and SVG, no script, no font or file loaded from
 * anywhere, printable (charts kept whole on a page). In the order a reader needs it: the verdict per limit and the
 * cautions; airframe, thresholds, conditions, assumptions and data quality; the exceedance table; the time
 * histories on one shared time axis; the n–V plane; the test points and the model check when the review has them.
 * Several flights give a summary table and one section each. Colour is never the only carrier: levels are also
 * words, marker shapes and hatching. Pure: reviews in, text out.
 */
import type { Aircraft } from '../core/aircraft.js';
import { computeEnvelope } from '../core/envelope.js';
import type { FlightReview } from '../core/flight-review.js';
import { TONE_COLOURS } from '../core/nv-plane.js';
import type { AlertThresholds } from '../core/thresholds.js';
import {
  alertBit,
  BREAK_KINDS,
  seriesPoints,
  type AlertLimit,
  type BreakKind,
  type SeriesName,
  type TimeHistory,
} from '../core/time-history.js';
import { fixed } from './numbers.js';
import { escapeXml, niceStep, renderNvPlotSvg, type NvPlotInput } from './nv-plot-svg.js';
import { ADVISORY_CAUTION, reviewToJson, type ReviewContext } from './review-report.js';

type ReviewJson = ReturnType<typeof reviewToJson>;
/** An event of `review --format json`, with the keys later work adds (ended_by, time to the stall caution). */
export type JsonEvent = ReviewJson['events'][number] & Record<string, unknown>;

export interface HtmlFlight {
  /** The review as `review --format json` gives it (keys added by later work are shown when present). */
  json: ReviewJson & Record<string, unknown>;
  history: TimeHistory;
  aircraft: Aircraft;
  thresholds: AlertThresholds;
  nvPlot: NvPlotInput;
}

export interface HtmlReportInput {
  flights: readonly HtmlFlight[];
  /** Test points over all flights (`test_points` of the JSON review), when a card was given. */
  testPoints?: readonly Record<string, unknown>[];
  /** The command that made the report, shown at the end so it can be made again. */
  command?: string;
}

/** One flight for the report, from its review (the same numbers `review --format json` prints). */
export function htmlFlightFrom(review: FlightReview, ctx: ReviewContext, index = 0): HtmlFlight {
  const json = reviewToJson(review, ctx) as ReviewJson & Record<string, unknown>;
  const nvPlot = { ...nvPlotInputFrom(review, ctx), idPrefix: `f${index + 1}-nv-`, inline: true };
  const history = review.timeHistory;
  if (history === null) throw new Error(`${ctx.source}: the HTML report needs the review's time history`);
  return { json, history, aircraft: ctx.aircraft, thresholds: review.options.thresholds, nvPlot };
}

/** The n–V plot of a reviewed flight: its points, the thresholds in force, V_NE at its TAS when the envelope has it. */
export function nvPlotInputFrom(review: FlightReview, ctx: ReviewContext): NvPlotInput {
  const c = review.conditions;
  const density = c.medianDensityKgM3 ?? 1.225;
  const mass = c.medianMassKg ?? ctx.aircraft.massKg;
  const nvPlot: NvPlotInput = {
    aircraft: ctx.aircraft,
    densityKgM3: density,
    massKg: mass,
    points: review.plotPoints,
    pointsOf: review.plotPointsOf,
    source: ctx.source,
    thresholds: review.options.thresholds,
  };
  const vneTas = vneTasAt(ctx.aircraft, review, mass);
  if (vneTas !== undefined) nvPlot.vneTasMps = vneTas;
  return nvPlot;
}

/** V_NE as TAS at the middle of the altitudes and temperatures flown, when the envelope provides it. */
function vneTasAt(aircraft: Aircraft, review: FlightReview, massKg: number): number | undefined {
  const c = review.conditions;
  if (aircraft.vneMps === undefined || c.altitudeM === null || c.temperatureK === null) return undefined;
  const env = computeEnvelope(
    aircraft,
    {
      altitudeM: (c.altitudeM.min + c.altitudeM.max) / 2,
      temperature: { oatC: (c.temperatureK.min + c.temperatureK.max) / 2 - 273.15 },
      massKg,
    },
    [],
  ) as { vneTasMps?: number | null };
  return typeof env.vneTasMps === 'number' && Number.isFinite(env.vneTasMps) ? env.vneTasMps : undefined;
}

// ---------------------------------------------------------------------------------------------------------------
// Text helpers

const esc = escapeXml;

function num(v: number): string {
  return (Math.round(v * 100) / 100).toString();
}

function pct(part: number, whole: number): string {
  return whole > 0 ? `${((part / whole) * 100).toFixed(1)} %` : '—';
}

function utilizationText(u: number | null | undefined): string {
  if (u === null || u === undefined) return '—';
  return `${(u * 100).toFixed(1)} %`;
}

const LIMIT_WORDS: Record<string, string> = {
  stall: 'Stall',
  structure: 'Structure',
  thrust: 'Thrust (sustained turn)',
  speed: 'Speed (V_NE)',
};

const ENDED_BY_WORDS: Record<string, string> = {
  cleared: 'cleared',
  data_gap: 'data gap',
  link_lost: 'link lost',
  seek: 'seek',
  clock_restart: 'clock restart',
  end_of_data: 'end of data',
};

const BREAK_WORDS: Record<BreakKind, string> = {
  data_gap: 'gap in the data over 1 s',
  clock_restart: "sender's clock ran back",
  link_lost: 'link lost',
  seek: 'seek in a replay',
  other: 'clock restart or reconnect',
};

/** A level as a word with a symbol, so it reads without colour. */
function levelBadge(level: string): string {
  const symbol = level === 'warning' ? '■' : level === 'caution' ? '▲' : '●';
  return `<span class="lvl lvl-${esc(level)}">${symbol} ${esc(level.toUpperCase())}</span>`;
}

function table(header: string[], rows: string[][], className = '', numeric: boolean[] = []): string {
  const th = header.map((h, i) => `<th${numeric[i] ? ' class="num"' : ''}>${h}</th>`).join('');
  const body = rows
    .map((r) => `<tr>${r.map((c, i) => `<td${numeric[i] ? ' class="num"' : ''}>${c}</td>`).join('')}</tr>`)
    .join('\n');
  return `<table${className ? ` class="${className}"` : ''}><thead><tr>${th}</tr></thead><tbody>\n${body}\n</tbody></table>`;
}

function kv(rows: Array<[string, string]>): string {
  return `<table class="kv"><tbody>\n${rows.map(([k, v]) => `<tr><th>${k}</th><td>${v}</td></tr>`).join('\n')}\n</tbody></table>`;
}

// ---------------------------------------------------------------------------------------------------------------
// Verdict

function limitsOf(flight: HtmlFlight): string[] {
  const limits = ['stall', 'structure', 'thrust'];
  if (flight.history.series.u_speed || flight.json.events.some((e) => e.limit === ('speed' as string)))
    limits.push('speed');
  return limits;
}

function worstLevel(events: readonly JsonEvent[], limit: string): 'normal' | 'caution' | 'warning' {
  let worst: 'normal' | 'caution' | 'warning' = 'normal';
  for (const e of events) {
    if (e.limit !== limit) continue;
    if (e.level === 'warning') return 'warning';
    worst = 'caution';
  }
  return worst;
}

function peakOf(json: HtmlFlight['json'], limit: string): { utilization: number | null; t_s: number | null } | null {
  const peaks = json.peaks as Record<string, { utilization: number | null; t_s: number | null } | undefined>;
  return peaks[limit] ?? null;
}

function verdictSection(flight: HtmlFlight): string {
  const events = flight.json.events as JsonEvent[];
  const items = limitsOf(flight).map((limit) => {
    const level = worstLevel(events, limit);
    const peak = peakOf(flight.json, limit);
    const count = events.filter((e) => e.limit === limit).length;
    const peakText =
      peak && peak.utilization !== null
        ? `peak ${utilizationText(peak.utilization)} of the limit${peak.t_s !== null ? ` at t = ${fixed(peak.t_s, 2)} s` : ''}`
        : 'never computable';
    return (
      `<li class="verdict-${level}">${levelBadge(level)} <strong>${esc(LIMIT_WORDS[limit] ?? limit)}</strong>: ` +
      `${level === 'normal' ? 'stayed below its caution threshold' : `${level} reached`} — ${esc(peakText)}` +
      `${count > 0 ? `; ${count} event${count === 1 ? '' : 's'}` : ''}</li>`
    );
  });
  return `<ul class="verdict">\n${items.join('\n')}\n</ul>`;
}

function worstOverall(flight: HtmlFlight): 'normal' | 'caution' | 'warning' {
  const events = flight.json.events as JsonEvent[];
  if (events.some((e) => e.level === 'warning')) return 'warning';
  return events.length > 0 ? 'caution' : 'normal';
}

// ---------------------------------------------------------------------------------------------------------------
// Airframe, thresholds, conditions, assumptions, data quality

function setupSection(flight: HtmlFlight): string {
  const a = flight.aircraft;
  const j = flight.json;
  const t = flight.thresholds;
  const c = j.conditions;
  const airframe = kv([
    ['Airframe', `${esc(a.name)} <span class="dim">(${esc(j.airframe_file)})</span>`],
    [
      'Mass, wing',
      `${fixed(a.massKg, 2)} kg; wing area ${fixed(a.wingAreaM2, 3)} m²; CLmax ${fixed(a.clMax, 2)}` +
        (a.clMin !== undefined ? `; CLmin ${fixed(a.clMin, 2)}` : ''),
    ],
    [
      'Limit load factors',
      `+${fixed(a.nLimitPos, 2)} (${esc(a.nLimitPosSource)}), ${fixed(a.nLimitNeg, 2)} (${esc(a.nLimitNegSource)})`,
    ],
    ['V_NE', a.vneMps !== undefined ? `${fixed(a.vneMps, 1)} m/s (calibrated airspeed)` : 'not given'],
  ]);
  const tRec = t as AlertThresholds & Record<string, unknown>;
  const speedT =
    typeof tRec['speedCaution'] === 'number'
      ? `; speed caution ${(tRec['speedCaution'] as number).toFixed(2)} / warning ${Number(tRec['speedWarning']).toFixed(2)}`
      : '';
  const thresholds = kv([
    [
      'Alert thresholds',
      `stall caution ${t.stallCaution.toFixed(2)} / warning ${t.stallWarning.toFixed(2)}; structure caution ` +
        `${t.structureCaution.toFixed(2)} / warning ${t.structureWarning.toFixed(2)}; thrust caution ` +
        `${t.thrustCaution.toFixed(2)}${speedT}; hysteresis ${t.hysteresis.toFixed(2)}` +
        (typeof tRec['clearS'] === 'number' ? `; clear after ${tRec['clearS']} s` : ''),
    ],
    ['Utilization', 'load factor ÷ the limit at the present TAS, density and mass (speed: CAS ÷ V_NE)'],
    [
      'Load-factor smoothing',
      j.smooth_tau_s > 0 ? `first-order low-pass, τ = ${j.smooth_tau_s} s` : 'off (--smooth 0)',
    ],
  ]);
  const range = (r: { min: number; max: number } | null, d: number, unit: string, shift = 0) =>
    r ? `${fixed(r.min + shift, d)} to ${fixed(r.max + shift, d)} ${unit}` : '—';
  const conditions = kv([
    [
      'Time span',
      j.first_t_s === null
        ? '—'
        : `t = ${fixed(j.first_t_s, 2)} s to ${fixed(j.last_t_s, 2)} s (${fixed(j.duration_s, 2)} s of data)`,
    ],
    ['Pressure altitude', range(c.altitude_m, 0, 'm')],
    ['TAS', range(c.tas_mps, 1, 'm/s')],
    ['Load factor n (smoothed)', range(c.n_measured, 2, '')],
    ['Air temperature', range(c.temperature_k, 1, '°C', -273.15)],
    ['Median density, mass', `${fixed(c.median_density_kg_m3, 4)} kg/m³, ${fixed(c.median_mass_kg, 2)} kg`],
  ]);

  // Assumptions in force, and for what share of the frames.
  const frames = flight.history.frames;
  const assumedRows: string[][] = [];
  const assumedWords: Record<string, string> = {
    n_from_bank: 'load factor from bank alone (no nz)',
    temperature_isa: 'temperature from the standard atmosphere (no oat_c)',
    n_limit_default: 'structural limit from the default formula',
  };
  // The review's own shares (assumed_share) when it has them, else the counts of the time history.
  const shares = j['assumed_share'] as Record<string, number | null> | undefined;
  if (shares && typeof shares === 'object') {
    for (const [flag, share] of Object.entries(shares))
      if (share !== null && share > 0)
        assumedRows.push([esc(assumedWords[flag] ?? flag), String(Math.round(share * j.accepted)), pct(share, 1)]);
  } else {
    for (const [flag, count] of Object.entries(flight.history.assumedFrames))
      assumedRows.push([esc(assumedWords[flag] ?? flag), String(count), pct(count, frames)]);
  }
  const assumptions =
    assumedRows.length > 0
      ? table(['Assumed', 'Frames', 'Share'], assumedRows, 'compact', [false, true, true])
      : '<p>No assumption flagged in the records.</p>';

  // Data quality.
  const byReason = new Map<string, number>();
  for (const r of j.rejects as Array<{ reason: string; code?: string }>) {
    const key = r.code ?? r.reason;
    byReason.set(key, (byReason.get(key) ?? 0) + 1);
  }
  const h = flight.history;
  const quality: Array<[string, string]> = [
    ['Lines read', `${j.frames}: ${j.accepted} accepted, ${j.rejected} rejected`],
  ];
  if (j.rejected > 0)
    quality.push([
      'Rejected by reason',
      [...byReason.entries()]
        .sort((x, y) => y[1] - x[1])
        .map(([k, n]) => `${esc(k)} ×${n}`)
        .join('; ') + (j.rejected > j.rejects.length ? ` (over the first ${j.rejects.length})` : ''),
    ]);
  quality.push(['Gaps over 1 s', c.gaps > 0 ? `${c.gaps}, ${fixed(c.gap_s, 2)} s in all` : 'none']);
  for (const kind of BREAK_KINDS) {
    if (kind === 'data_gap' || h.breakCounts[kind] === 0) continue;
    quality.push([esc(BREAK_WORDS[kind]), String(h.breakCounts[kind])]);
  }
  if (c.not_flying_frames > 0)
    quality.push(['Frames below 0.5·Vs1', `${c.not_flying_frames} (not flying: no alerts raised)`]);
  if (c.uncoordinated_s > 0) quality.push(['Uncoordinated', `${fixed(c.uncoordinated_s, 2)} s`]);

  return (
    `<div class="cols"><div><h3>Airframe</h3>${airframe}<h3>Thresholds</h3>${thresholds}</div>` +
    `<div><h3>Conditions flown</h3>${conditions}<h3>Assumptions</h3>${assumptions}` +
    `<h3>Data quality</h3>${kv(quality)}</div></div>`
  );
}

// ---------------------------------------------------------------------------------------------------------------
// Exceedance table

function lowestTimeToStall(e: JsonEvent): number | null {
  for (const [k, v] of Object.entries(e)) if (/time_to_stall_caution/.test(k) && typeof v === 'number') return v;
  return null;
}

export const EVENT_TABLE_HEADER = [
  '#',
  'Start (s)',
  'End (s)',
  'Duration (s)',
  'Limit',
  'Level',
  'Peak',
  'Peak at (s)',
  'TAS at peak (m/s)',
  'Ended by',
  'Lowest time to stall caution (s)',
];

function eventsSection(flight: HtmlFlight): string {
  const events = flight.json.events as JsonEvent[];
  if (events.length === 0) return '<p>No caution or warning: every limit stayed below its caution threshold.</p>';
  const rows = events.map((e, i) => {
    const endedBy = typeof e['ended_by'] === 'string' ? (ENDED_BY_WORDS[e['ended_by']] ?? e['ended_by']) : '—';
    const tts = lowestTimeToStall(e);
    return [
      String(i + 1),
      fixed(e.start_s, 2),
      fixed(e.end_s, 2),
      fixed(e.duration_s, 2),
      esc(LIMIT_WORDS[e.limit] ?? e.limit),
      levelBadge(e.level),
      e.peak_utilization === null ? 'unbounded (n_thrust = 0)' : utilizationText(e.peak_utilization),
      fixed(e.peak_t_s, 2),
      fixed(e.speed_at_peak_mps, 1),
      esc(endedBy),
      tts === null ? '—' : fixed(tts, 1),
    ];
  });
  return (
    table(EVENT_TABLE_HEADER, rows, 'events', [true, true, true, true, false, false, true, true, true, false, true]) +
    '<p class="note">One row per interval in which one (limit, level) alert was on; a warning lies inside its ' +
    'caution interval and both are listed.</p>'
  );
}

// ---------------------------------------------------------------------------------------------------------------
// Time histories: stacked panels on one time axis

const TH = { width: 1000, left: 64, right: 96, panelH: 92, gap: 30, top: 34, axisH: 40 };

interface LineSpec {
  name: SeriesName;
  label: string;
  colour: string;
  dash: string;
  width: number;
}

interface Panel {
  title: string;
  unit: string;
  lines: LineSpec[];
  /** Horizontal reference lines (thresholds, V_NE). */
  refs: Array<{ value: number; label: string; colour: string; dash: string }>;
  /** Alert shading from this limit's bits. */
  limit?: AlertLimit;
  /** Include 0 (and this value) in the range. */
  include?: number[];
}

function panelsFor(flight: HtmlFlight): Panel[] {
  const h = flight.history;
  const t = flight.thresholds as AlertThresholds & Record<string, unknown>;
  const has = (name: SeriesName) => h.series[name] !== undefined;
  const primary = TONE_COLOURS.plain;
  const second = '#1f5fa8';
  const caution = TONE_COLOURS.caution;
  const warning = TONE_COLOURS.warning;
  const refs = (c: number, w?: number) => [
    { value: c, label: `caution ${c.toFixed(2)}`, colour: caution, dash: '2 3' },
    ...(w !== undefined ? [{ value: w, label: `warning ${w.toFixed(2)}`, colour: warning, dash: '7 3' }] : []),
  ];
  const panels: Panel[] = [];
  const util = (name: SeriesName, limit: AlertLimit, title: string, c: number, w?: number) => {
    if (!has(name)) return;
    panels.push({
      title,
      unit: '',
      lines: [{ name, label: title.toLowerCase(), colour: primary, dash: '', width: 1.3 }],
      refs: refs(c, w),
      limit,
      include: [0, w ?? c],
    });
  };
  util('u_stall', 'stall', 'Stall utilization', t.stallCaution, t.stallWarning);
  util('u_structure', 'structure', 'Structure utilization', t.structureCaution, t.structureWarning);
  util('u_thrust', 'thrust', 'Thrust utilization', t.thrustCaution);
  if (has('u_speed'))
    util(
      'u_speed',
      'speed',
      'Speed utilization (CAS ÷ V_NE)',
      typeof t['speedCaution'] === 'number' ? t['speedCaution'] : 0.95,
      typeof t['speedWarning'] === 'number' ? t['speedWarning'] : 1.0,
    );
  const speedLines: LineSpec[] = [{ name: 'tas_mps', label: 'TAS', colour: primary, dash: '', width: 1.3 }];
  if (has('cas_mps')) speedLines.push({ name: 'cas_mps', label: 'CAS', colour: second, dash: '6 3', width: 1.3 });
  panels.push({
    title: 'Airspeed',
    unit: 'm/s',
    lines: speedLines,
    refs:
      flight.aircraft.vneMps !== undefined
        ? [{ value: flight.aircraft.vneMps, label: 'V_NE (CAS)', colour: TONE_COLOURS.dim, dash: '6 3 1 3' }]
        : [],
  });
  const nLines: LineSpec[] = [{ name: 'n_measured', label: 'n measured', colour: primary, dash: '', width: 1.3 }];
  if (has('n_from_bank'))
    nLines.push({ name: 'n_from_bank', label: 'n from bank, 1/cos φ', colour: second, dash: '6 3', width: 1.2 });
  panels.push({
    title: 'Load factor',
    unit: 'g',
    lines: nLines,
    refs: [
      { value: flight.aircraft.nLimitPos, label: `n limit +${flight.aircraft.nLimitPos}`, colour: warning, dash: '' },
    ],
    include: [1],
  });
  if (has('bank_deg'))
    panels.push({
      title: 'Bank',
      unit: '°',
      lines: [{ name: 'bank_deg', label: 'bank', colour: primary, dash: '', width: 1.3 }],
      refs: [],
      include: [0],
    });
  panels.push({
    title: 'Pressure altitude',
    unit: 'm',
    lines: [{ name: 'alt_m', label: 'altitude', colour: primary, dash: '', width: 1.3 }],
    refs: [],
  });
  if (has('ps_mps') || has('ps_model_mps')) {
    const ps: LineSpec[] = [];
    if (has('ps_mps')) ps.push({ name: 'ps_mps', label: 'Ps measured', colour: primary, dash: '', width: 1.3 });
    if (has('ps_model_mps'))
      ps.push({ name: 'ps_model_mps', label: 'Ps model', colour: second, dash: '6 3', width: 1.2 });
    panels.push({ title: 'Specific excess power', unit: 'm/s', lines: ps, refs: [], include: [0] });
  }
  return panels;
}

function valueRange(flight: HtmlFlight, panel: Panel): { lo: number; hi: number } {
  let lo = Number.POSITIVE_INFINITY;
  let hi = Number.NEGATIVE_INFINITY;
  for (const l of panel.lines) {
    const s = flight.history.series[l.name];
    if (!s) continue;
    for (let i = 0; i < s.min.length; i++) {
      const a = s.min[i]!;
      const b = s.max[i]!;
      if (a < lo) lo = a;
      if (b > hi) hi = b;
    }
  }
  for (const v of panel.include ?? []) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  for (const r of panel.refs) {
    // A reference far outside the data would squash it: keep those within 1.5× the data's span.
    const span = Number.isFinite(hi - lo) ? hi - lo : 0;
    if (!Number.isFinite(lo) || (r.value >= lo - span * 0.5 && r.value <= hi + span * 0.5)) {
      lo = Math.min(lo, r.value);
      hi = Math.max(hi, r.value);
    }
  }
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return { lo: 0, hi: 1 };
  if (hi - lo < 1e-9) {
    const pad = Math.max(Math.abs(hi) * 0.05, 0.5);
    return { lo: lo - pad, hi: hi + pad };
  }
  const step = niceStep(hi - lo, 4);
  return { lo: Math.floor(lo / step) * step, hi: Math.ceil(hi / step) * step };
}

function timeHistorySvg(flight: HtmlFlight, prefix: string): string {
  const h = flight.history;
  const panels = panelsFor(flight);
  const plotW = TH.width - TH.left - TH.right;
  const height = TH.top + panels.length * (TH.panelH + TH.gap) + TH.axisH - TH.gap + 10;
  const t0 = h.t0S;
  const t1 = h.frames > 1 && h.lastS > t0 ? h.lastS : t0 + 1;
  const tStep = niceStep(t1 - t0, 10);
  const sx = (t: number) => TH.left + ((t - t0) / (t1 - t0)) * plotW;
  const bucketX = (i: number) => sx(t0 + i * h.bucketS);
  const out: string[] = [];
  out.push(
    `<svg class="chart th" viewBox="0 0 ${TH.width} ${height}" width="${TH.width}" height="${height}" font-family="Helvetica, Arial, sans-serif" font-size="12" role="img" aria-labelledby="${prefix}th-title">`,
  );
  out.push(
    `<title id="${prefix}th-title">${esc(`Time histories of ${String(flight.json.source)}`)}</title>`,
    `<defs>` +
      `<pattern id="${prefix}hatch-caution" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="${TONE_COLOURS.caution}" fill-opacity="0.10"/><line x1="0" y1="0" x2="0" y2="6" stroke="${TONE_COLOURS.caution}" stroke-width="1.2" stroke-opacity="0.55"/></pattern>` +
      `<pattern id="${prefix}hatch-warning" width="5" height="5" patternUnits="userSpaceOnUse"><rect width="5" height="5" fill="${TONE_COLOURS.warning}" fill-opacity="0.16"/><path d="M0 0L5 5M5 0L0 5" stroke="${TONE_COLOURS.warning}" stroke-width="1" stroke-opacity="0.6"/></pattern>` +
      `</defs>`,
  );
  out.push(`<rect x="0" y="0" width="${TH.width}" height="${height}" fill="#ffffff"/>`);

  // Break positions (bucket starts), drawn across every panel.
  const breakMarks: Array<{ x: number; kinds: number }> = [];
  for (let i = 0; i < h.buckets; i++) if (h.breaks[i]! !== 0) breakMarks.push({ x: bucketX(i), kinds: h.breaks[i]! });

  panels.forEach((panel, p) => {
    const top = TH.top + p * (TH.panelH + TH.gap);
    const bottom = top + TH.panelH;
    const { lo, hi } = valueRange(flight, panel);
    const sy = (v: number) => bottom - ((v - lo) / (hi - lo)) * TH.panelH;
    const clip = `${prefix}clip-${p}`;
    out.push(
      `<g class="panel" id="${prefix}panel-${p}" data-lo="${lo}" data-hi="${hi}" data-top="${top}" data-bottom="${bottom}" data-t0="${t0}" data-t1="${t1}">`,
    );
    out.push(
      `<clipPath id="${clip}"><rect x="${TH.left}" y="${top - 1}" width="${plotW}" height="${TH.panelH + 2}"/></clipPath>`,
    );
    // Alert shading: caution hatched one way, warning cross-hatched and darker.
    if (panel.limit) {
      for (const level of ['caution', 'warning'] as const) {
        const bit = alertBit(panel.limit, level);
        let runStart = -1;
        for (let i = 0; i <= h.buckets; i++) {
          const on = i < h.buckets && (h.alerts[i]! & bit) !== 0;
          if (on && runStart < 0) runStart = i;
          if (!on && runStart >= 0) {
            const x0 = bucketX(runStart);
            const x1 = Math.max(bucketX(i), x0 + 1.5);
            out.push(
              `<rect class="shade-${level}" x="${num(x0)}" y="${top}" width="${num(x1 - x0)}" height="${TH.panelH}" fill="url(#${prefix}hatch-${level})"/>`,
            );
            runStart = -1;
          }
        }
      }
    }
    // Grid and frame.
    const vStep = niceStep(hi - lo, 4);
    const grid: string[] = [];
    for (let v = Math.ceil(lo / vStep) * vStep; v <= hi + 1e-9; v += vStep) {
      grid.push(`<line x1="${TH.left}" y1="${num(sy(v))}" x2="${TH.left + plotW}" y2="${num(sy(v))}"/>`);
      out.push(
        `<text x="${TH.left - 6}" y="${num(sy(v) + 4)}" text-anchor="end" fill="#333333">${esc(formatTick(v, vStep))}</text>`,
      );
    }
    for (let t = Math.ceil(t0 / tStep) * tStep; t <= t1 + 1e-9; t += tStep)
      grid.push(`<line x1="${num(sx(t))}" y1="${top}" x2="${num(sx(t))}" y2="${bottom}"/>`);
    out.push(`<g stroke="#e4e4e4" stroke-width="1">${grid.join('')}</g>`);
    // Reference lines, labelled in the right margin (labels pushed apart when two lines are close).
    const shown = panel.refs.filter((r) => r.value >= lo && r.value <= hi).sort((a, b) => b.value - a.value);
    let lastLabelY = Number.NEGATIVE_INFINITY;
    for (const r of shown) {
      const y = sy(r.value);
      const labelY = Math.max(y + 4, lastLabelY + 12);
      lastLabelY = labelY;
      out.push(
        `<line class="ref" x1="${TH.left}" y1="${num(y)}" x2="${TH.left + plotW}" y2="${num(y)}" stroke="${r.colour}" stroke-width="1.4"${r.dash ? ` stroke-dasharray="${r.dash}"` : ''}/>`,
        `<text x="${TH.left + plotW + 5}" y="${num(labelY)}" font-size="10.5" fill="${r.colour}" class="ref-label">${esc(r.label)}</text>`,
      );
    }
    // A reference too far from the data to draw (V_NE above a slow flight) is still named, with its value.
    for (const r of panel.refs.filter((q) => q.value > hi)) {
      out.push(
        `<text x="${TH.left + plotW + 5}" y="${top + 10}" font-size="10.5" fill="${r.colour}" class="ref-label">${esc(`${r.label} ${num(r.value)} ↑`)}</text>`,
      );
    }
    // Series.
    for (const l of panel.lines) {
      const pts = seriesPoints(h, l.name);
      let d = '';
      let count = 0;
      for (const pt of pts) {
        d += `${pt.penUp || d === '' ? 'M' : 'L'}${num(sx(pt.tS))} ${num(sy(pt.v))}`;
        count += 1;
      }
      // A lone point (a one-frame stretch between breaks) gets a dot so it shows.
      out.push(
        `<path class="series" data-series="${l.name}" data-points="${count}" d="${d}" fill="none" stroke="${l.colour}" stroke-width="${l.width}"${l.dash ? ` stroke-dasharray="${l.dash}"` : ''} stroke-linejoin="round" stroke-linecap="round" clip-path="url(#${clip})"/>`,
      );
    }
    // Breaks.
    for (const b of breakMarks)
      out.push(
        `<line class="break" x1="${num(b.x)}" y1="${top}" x2="${num(b.x)}" y2="${bottom}" stroke="#555555" stroke-width="1.2" stroke-dasharray="${b.kinds & 1 ? '3 2' : '8 2 2 2'}"/>`,
      );
    out.push(
      `<rect x="${TH.left}" y="${top}" width="${plotW}" height="${TH.panelH}" fill="none" stroke="#666666" stroke-width="1"/>`,
    );
    // Title and legend above the panel.
    let lx = TH.left;
    const titleText = panel.unit ? `${panel.title} (${panel.unit})` : panel.title;
    out.push(`<text x="${lx}" y="${top - 8}" font-weight="bold" font-size="12.5">${esc(titleText)}</text>`);
    lx += titleText.length * 7 + 18;
    if (panel.lines.length > 1)
      for (const l of panel.lines) {
        out.push(
          `<path d="M${num(lx)} ${top - 12}L${num(lx + 26)} ${top - 12}" stroke="${l.colour}" stroke-width="2"${l.dash ? ` stroke-dasharray="${l.dash}"` : ''}/>`,
          `<text x="${num(lx + 31)}" y="${top - 8}">${esc(l.label)}</text>`,
        );
        lx += 31 + l.label.length * 6.6 + 16;
      }
    if (panel.limit) {
      out.push(
        `<rect x="${num(lx)}" y="${top - 20}" width="16" height="11" fill="url(#${prefix}hatch-caution)" stroke="#999999" stroke-width="0.5"/>`,
        `<text x="${num(lx + 21)}" y="${top - 10}">caution on</text>`,
      );
      if (panel.refs.length > 1)
        out.push(
          `<rect x="${num(lx + 96)}" y="${top - 20}" width="16" height="11" fill="url(#${prefix}hatch-warning)" stroke="#999999" stroke-width="0.5"/>`,
          `<text x="${num(lx + 117)}" y="${top - 10}">warning on</text>`,
        );
    }
    out.push('</g>');
  });

  // The shared time axis under the last panel.
  const axisY = TH.top + panels.length * (TH.panelH + TH.gap) - TH.gap;
  for (let t = Math.ceil(t0 / tStep) * tStep; t <= t1 + 1e-9; t += tStep)
    out.push(
      `<text x="${num(sx(t))}" y="${axisY + 15}" text-anchor="middle" fill="#333333">${esc(formatTick(t, tStep))}</text>`,
    );
  out.push(
    `<text x="${TH.left + plotW / 2}" y="${axisY + 33}" text-anchor="middle" font-size="13">${esc(
      h.axisShiftS !== 0
        ? "Time t_s (s); after the sender's clock ran back, later frames are placed after the earlier ones"
        : 'Time t_s (s)',
    )}</text>`,
  );
  out.push('</svg>');
  return out.join('\n');
}

function formatTick(value: number, step: number): string {
  // As many decimals as the step needs (0.25 → 2), so no two ticks read the same.
  let decimals = 0;
  while (decimals < 4 && Math.abs(Math.round(step * 10 ** decimals) - step * 10 ** decimals) > 1e-6) decimals += 1;
  const text = value.toFixed(decimals);
  return /^-0(\.0*)?$/.test(text) ? text.slice(1) : text;
}

function historyNote(flight: HtmlFlight): string {
  const h = flight.history;
  const parts: string[] = [];
  if (h.reduced)
    parts.push(
      `Series reduced for drawing: ${h.frames} frames in ${h.buckets} time buckets of ${num(h.bucketS)} s; ` +
        'each bucket’s minimum and maximum are drawn, so no peak is lost.',
    );
  else parts.push(`Every one of the ${h.frames} frames is drawn.`);
  const breakTotal = BREAK_KINDS.reduce((s, k) => s + h.breakCounts[k], 0);
  if (breakTotal > 0)
    parts.push(
      'Vertical dashed lines mark breaks in the data (short dashes: a gap over 1 s; dash-dot: a clock restart, ' +
        'reconnect or link loss); the computation restarts at each.',
    );
  parts.push('Hatched bands: a caution (single hatching) or warning (cross-hatching) of that limit was on.');
  return `<p class="note">${esc(parts.join(' '))}</p>`;
}

// ---------------------------------------------------------------------------------------------------------------
// Test points and model check

function cellValue(v: unknown, decimals = 2): string {
  if (v === null || v === undefined) return '—';
  if (typeof v === 'number') return fixed(v, decimals);
  return esc(String(v));
}

function testPointsSection(points: readonly Record<string, unknown>[]): string {
  const rows = points.map((p) => {
    const measured = (p['measured'] ?? null) as Record<string, unknown> | null;
    const predicted = (p['predicted'] ?? null) as Record<string, unknown> | null;
    const predU = (predicted?.['utilization'] ?? null) as Record<string, unknown> | null;
    const measU = (measured?.['utilization_peak'] ?? null) as Record<string, unknown> | null;
    const status = String(p['status'] ?? '—');
    const symbol = status === 'achieved' ? '✔' : status === 'partial' ? '◐' : '○';
    return [
      esc(String(p['id'] ?? '—')),
      `${symbol} ${esc(status.replace('_', ' '))}`,
      cellValue(p['bank_deg'], 1),
      cellValue(p['tas_mps'], 1),
      cellValue(p['load_factor'], 2),
      cellValue(p['longest_hold_s'], 1),
      cellValue(p['hold_s'], 1),
      cellValue(measured?.['load_factor_mean'], 2),
      `${utilizationText(measU?.['stall'] as number | null)} / ${utilizationText(predU?.['stall'] as number | null)}`,
      `${cellValue(measured?.['dvdt_mps2'], 2)} / ${cellValue(predicted?.['dvdt_mps2'], 2)}`,
      esc(String(p['file'] ?? '—')),
    ];
  });
  return table(
    [
      'Point',
      'Status',
      'Bank (°)',
      'TAS (m/s)',
      'n target',
      'Longest hold (s)',
      'Hold wanted (s)',
      'n measured',
      'Stall util. measured / predicted',
      'dV/dt measured / predicted (m/s²)',
      'File',
    ],
    rows,
    'points',
    [false, false, true, true, true, true, true, true, true, true, false],
  );
}

function modelCheckSection(check: Record<string, unknown>): string {
  const rows = (['full', 'idle'] as const).map((k) => {
    const c = check[k] as Record<string, unknown> | null | undefined;
    if (!c) return [k === 'full' ? 'full throttle' : 'idle', '—', '—', '—', '—'];
    return [
      k === 'full' ? 'full throttle' : 'idle',
      cellValue(c['frames'], 0),
      cellValue(c['mean_residual_mps'], 2),
      cellValue(c['sd_residual_mps'], 2),
      cellValue(c['drag_error_pct'], 1),
    ];
  });
  return (
    table(['Throttle', 'Frames', 'Mean Ps residual (m/s)', 'SD (m/s)', 'Implied drag error (%)'], rows, 'compact', [
      false,
      true,
      true,
      true,
      true,
    ]) +
    '<p class="note">Residual = Ps measured − Ps of the airframe model. A mean beyond ±0.5 m/s says the thrust or ' +
    'drag model does not match the flight: the thrust margin may be optimistic.</p>'
  );
}

// ---------------------------------------------------------------------------------------------------------------
// The page

const CSS = `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { font-family: Helvetica, Arial, sans-serif; color: #1a1a1a; background: #ffffff; margin: 0 auto;
  max-width: 1060px; padding: 20px 24px 40px; font-size: 14px; line-height: 1.4; }
h1 { font-size: 22px; margin: 0 0 4px; }
h2 { font-size: 18px; margin: 28px 0 8px; border-bottom: 2px solid #333333; padding-bottom: 3px; }
h3 { font-size: 14.5px; margin: 14px 0 6px; }
h3.part { font-size: 16.5px; margin: 22px 0 8px; border-bottom: 1px solid #8c8c8c; padding-bottom: 2px; }
p { margin: 6px 0; }
.dim, .note { color: #4d4d4d; }
.note { font-size: 12.5px; }
.caution-box { border: 2px solid #333333; padding: 8px 12px; margin: 10px 0; background: #f6f6f6; }
.cols { display: grid; grid-template-columns: 1fr 1fr; gap: 8px 28px; }
table { border-collapse: collapse; margin: 6px 0 10px; font-size: 13px; }
th, td { border: 1px solid #b9b9b9; padding: 3px 7px; text-align: left; vertical-align: top; }
thead th { background: #ececec; }
table.kv th { background: #f4f4f4; font-weight: 600; width: 38%; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
td.num { white-space: nowrap; }
table.events, table.points, table.summary { width: 100%; }
ul.verdict { list-style: none; padding: 0; margin: 8px 0; }
ul.verdict li { padding: 5px 10px; margin: 3px 0; border-left: 6px solid #bdbdbd; background: #fafafa; }
ul.verdict li.verdict-caution { border-left: 6px double ${TONE_COLOURS.caution}; }
ul.verdict li.verdict-warning { border-left: 6px solid ${TONE_COLOURS.warning}; background: #fbeeee; }
.lvl { font-weight: bold; white-space: nowrap; }
.lvl-caution { color: ${TONE_COLOURS.caution}; }
.lvl-warning { color: ${TONE_COLOURS.warning}; text-decoration: underline; }
.lvl-normal { color: ${TONE_COLOURS.ok}; }
figure { margin: 10px 0 16px; }
figure svg { display: block; width: 100%; height: auto; max-width: 100%; }
figcaption { font-size: 12.5px; color: #4d4d4d; margin-top: 4px; }
section.flight { margin-top: 18px; }
footer { margin-top: 30px; font-size: 12px; color: #4d4d4d; border-top: 1px solid #b9b9b9; padding-top: 8px; }
code { font-family: "DejaVu Sans Mono", Consolas, monospace; font-size: 12.5px; }
@media print {
  /* No page size forced: the same file prints on A4 and on Letter (content fits the narrower, shorter page). */
  @page { margin: 12mm; }
  body { max-width: none; padding: 0; font-size: 10.5pt; }
  h2 { break-after: avoid; page-break-after: avoid; }
  figure, table.kv, .caution-box, ul.verdict, tr { break-inside: avoid; page-break-inside: avoid; }
  figure svg { max-height: 235mm; }
  section.flight + section.flight { break-before: page; page-break-before: always; }
  .cols { display: block; }
}
`;

function flightSection(flight: HtmlFlight, index: number, several: boolean): string {
  const prefix = `f${index + 1}-`;
  const out: string[] = [];
  out.push(`<section class="flight" id="flight-${index + 1}">`);
  if (several) out.push(`<h2>Flight ${index + 1}: ${esc(String(flight.json.source))}</h2>`);
  // With several flights a flight's parts are h3, set apart from the smaller h3 inside them (Airframe, …).
  const heading = (text: string) => (several ? `<h3 class="part">${text}</h3>` : `<h2>${text}</h2>`);
  out.push(heading('Verdict'), verdictSection(flight));
  out.push(heading('Airframe, thresholds and data'), setupSection(flight));
  out.push(heading('Exceedances'), eventsSection(flight));
  out.push(
    heading('Time histories'),
    `<figure>${timeHistorySvg(flight, prefix)}<figcaption>${historyNote(flight).replace(/^<p class="note">|<\/p>$/g, '')}</figcaption></figure>`,
  );
  out.push(
    heading('The n–V plane'),
    `<figure>${renderNvPlotSvg({ ...flight.nvPlot, idPrefix: `${prefix}nv-`, inline: true })}<figcaption>${esc(
      'Curves at the median density and mass of the flight; each point was judged at its own. ' +
        'Markers: circle normal, triangle caution, square warning (the dashboard uses the same colours).',
    )}</figcaption></figure>`,
  );
  const modelCheck = flight.json['model_check'];
  if (modelCheck && typeof modelCheck === 'object')
    out.push(heading('Model check'), modelCheckSection(modelCheck as Record<string, unknown>));
  out.push('</section>');
  return out.join('\n');
}

function summaryTable(flights: readonly HtmlFlight[]): string {
  // The receive times of a recording (`received_utc` of a several-file review), when any flight has them.
  const utcOf = (f: HtmlFlight) => f.json['received_utc'] as { start: string; end: string } | undefined;
  const withUtc = flights.some((f) => utcOf(f) !== undefined);
  const rows = flights.map((f, i) => {
    const j = f.json;
    const peaks = (['stall', 'structure', 'thrust'] as const)
      .map((l) => `${l} ${utilizationText(j.peaks[l].utilization)}`)
      .join(', ');
    const utc = utcOf(f);
    return [
      `<a href="#flight-${i + 1}">${i + 1}</a>`,
      esc(String(j.source)),
      String(j.accepted),
      j.first_t_s === null ? '—' : `${fixed(j.first_t_s, 1)} to ${fixed(j.last_t_s, 1)}`,
      fixed(j.duration_s, 1),
      ...(withUtc ? [utc ? `${esc(utc.start)}<br>${esc(utc.end)}` : '—'] : []),
      String(j.events.length),
      levelBadge(worstOverall(f)),
      esc(peaks),
    ];
  });
  return table(
    [
      '#',
      'File',
      'Frames',
      'Time span t (s)',
      'Data (s)',
      ...(withUtc ? ['UTC start, end (recording)'] : []),
      'Events',
      'Worst level',
      'Peak utilization',
    ],
    rows,
    'summary',
    [true, false, true, true, true, ...(withUtc ? [false] : []), true, false, false],
  );
}

export function renderHtmlReport(input: HtmlReportInput): string {
  const flights = input.flights;
  const several = flights.length > 1;
  const first = flights[0];
  const title = several
    ? `Flight review: ${flights.length} flights`
    : `Flight review: ${first ? String(first.json.source) : ''}`;
  const out: string[] = [];
  out.push('<!DOCTYPE html>', '<html lang="en">', '<head>', '<meta charset="utf-8">');
  out.push('<meta name="viewport" content="width=device-width, initial-scale=1">');
  out.push(`<title>${esc(title)}</title>`, `<style>${CSS}</style>`, '</head>', '<body>');
  out.push(`<h1>${esc(title)}</h1>`);
  if (first)
    out.push(
      `<p class="dim">Airframe ${esc(first.aircraft.name)} · made by turnmargin review (load-factor margins: stall, thrust, structure)</p>`,
    );
  out.push(`<div class="caution-box"><strong>Caution.</strong> ${esc(ADVISORY_CAUTION)}</div>`);
  if (several) out.push('<h2>Summary</h2>', summaryTable(flights));
  flights.forEach((f, i) => out.push(flightSection(f, i, several)));
  if (input.testPoints && input.testPoints.length > 0)
    out.push(
      '<section class="flight" id="test-points"><h2>Test points</h2>',
      testPointsSection(input.testPoints),
      '<p class="note">A card is a planning aid: the test team’s own safety review, build-up rules and the ' +
        'aircraft’s limits prevail.</p></section>',
    );
  out.push(
    `<footer>${input.command ? `Made with <code>${esc(input.command)}</code>. ` : ''}${esc(ADVISORY_CAUTION)}</footer>`,
  );
  out.push('</body>', '</html>');
  return out.join('\n') + '\n';
}
