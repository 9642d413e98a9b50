/**
 * Renderers for `turnmargin review` and `turnmargin check`: JSON (the contract's exact keys, plus a few more),
 * Markdown for a flight-test record, CSV with one row per event, and the one-screen check summary.
 * Pure: a FlightReview in, a string out.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { EndedBy, LimitEvent } from '../core/events.js';
import type { FlightReview, Peak } from '../core/flight-review.js';
import type { AlertLevel, Level } from '../core/margin-record.js';
import type { LimitName } from '../core/performance.js';
import type { ModelCheck, ModelCheckSetting } from '../core/model-check.js';
import { LIMITS } from '../core/alerts.js';
import { ASSUMPTIONS, ASSUMPTION_WORDS } from '../core/assumptions.js';
import { alignTable, csvRow, fixed, roundOrNull, roundTo } from './numbers.js';

export const ADVISORY_CAUTION =
  'Advisory only: this report supports test planning and post-flight review; it is not flight-critical. ' +
  "The aircraft's approved limits, the operator's procedures and local aviation rules take precedence.";

export interface ReviewContext {
  /** The telemetry file as the user named it. */
  source: string;
  aircraft: Aircraft;
  /** The airframe file as the user named it. */
  aircraftFile: string;
}

export function eventJson(e: LimitEvent) {
  return {
    limit: e.limit,
    level: e.level,
    start_s: roundTo(e.start_s, 6),
    end_s: roundTo(e.end_s, 6),
    duration_s: roundTo(e.duration_s, 6),
    peak_utilization: roundOrNull(e.peak_utilization),
    peak_t_s: roundTo(e.peak_t_s, 6),
    speed_at_peak_mps: roundTo(e.speed_at_peak_mps, 3),
    n_at_peak: roundTo(e.n_at_peak, 4),
    ended_by: e.ended_by,
    min_time_to_stall_caution_s: roundOrNull(e.min_time_to_stall_caution_s, 3),
  };
}

function peakJson(p: Peak) {
  return { utilization: roundOrNull(p.utilization), t_s: roundOrNull(p.t_s, 6) };
}

function rangeJson(r: { min: number; max: number } | null, decimals: number) {
  return r === null ? null : { min: roundTo(r.min, decimals), max: roundTo(r.max, decimals) };
}

export function reviewToJson(review: FlightReview, ctx: ReviewContext) {
  const t = review.options.thresholds;
  const c = review.conditions;
  return {
    source: ctx.source,
    airframe: ctx.aircraft.name,
    frames: review.frames,
    accepted: review.accepted,
    rejected: review.rejected,
    rejects: review.rejects.map((r) => ({ line: r.line, reason: r.reason, code: r.code, key: r.key, got: r.got })),
    duration_s: roundTo(review.durationS, 6),
    events: review.events.map(eventJson),
    peaks: {
      stall: peakJson(review.peaks.stall),
      structure: peakJson(review.peaks.structure),
      thrust: peakJson(review.peaks.thrust),
      speed: peakJson(review.peaks.speed),
    },
    time_in_level: {
      normal: roundTo(review.timeInLevelS.normal, 6),
      caution: roundTo(review.timeInLevelS.caution, 6),
      warning: roundTo(review.timeInLevelS.warning, 6),
    },
    // --- more keys ---
    airframe_file: ctx.aircraftFile,
    first_t_s: roundOrNull(review.firstTS, 6),
    last_t_s: roundOrNull(review.lastTS, 6),
    conditions: {
      altitude_m: rangeJson(c.altitudeM, 1),
      tas_mps: rangeJson(c.tasMps, 3),
      n_measured: rangeJson(c.nMeasured, 4),
      temperature_k: rangeJson(c.temperatureK, 2),
      median_density_kg_m3: roundOrNull(c.medianDensityKgM3, 5),
      median_mass_kg: roundOrNull(c.medianMassKg, 4),
      not_flying_frames: c.notFlyingFrames,
      uncoordinated_s: roundTo(c.uncoordinatedS, 6),
      gaps: c.gaps,
      gap_s: roundTo(c.gapS, 6),
      segments: c.segments,
      breaks: { ...c.breaks },
    },
    thresholds: {
      stall_caution: t.stallCaution,
      stall_warning: t.stallWarning,
      structure_caution: t.structureCaution,
      structure_warning: t.structureWarning,
      thrust_caution: t.thrustCaution,
      speed_caution: t.speedCaution,
      speed_warning: t.speedWarning,
      hysteresis: t.hysteresis,
      clear_s: t.clearS,
    },
    smooth_tau_s: review.options.smoothTauS,
    /** Share of the accepted frames (0…1) in which each input was assumed. */
    assumed_share: assumedShareJson(review),
    rate_window_s: review.options.rateWindowS,
    throttle_assumed: review.options.assumeThrottle ?? null,
    model_check: modelCheckJson(review.modelCheck),
  };
}

function modelCheckSettingJson(m: ModelCheckSetting | null) {
  return m === null
    ? null
    : {
        frames: m.frames,
        mean_residual_mps: roundTo(m.meanResidualMps, 4),
        sd_residual_mps: roundOrNull(m.sdResidualMps, 4),
        drag_error_pct: roundOrNull(m.dragErrorPct, 2),
      };
}

/** The model check: measured − modelled Ps at full throttle and at idle (null where no frame had a residual). */
export function modelCheckJson(check: ModelCheck) {
  return { full: modelCheckSettingJson(check.full), idle: modelCheckSettingJson(check.idle) };
}

function assumedShareJson(review: FlightReview) {
  const s = review.assumedShare;
  return {
    n_from_bank: roundOrNull(s.n_from_bank, 4),
    temperature_isa: roundOrNull(s.temperature_isa, 4),
    n_limit_default: roundOrNull(s.n_limit_default, 4),
  };
}

export const EVENT_CSV_COLUMNS = [
  'limit',
  'level',
  'start_s',
  'end_s',
  'duration_s',
  'peak_utilization',
  'peak_t_s',
  'speed_at_peak_mps',
  'n_at_peak',
  'ended_by',
  'min_time_to_stall_caution_s',
] as const;

/** Flight-level columns repeated on every event row: the share of the frames in which each input was assumed. */
export const ASSUMED_CSV_COLUMNS = ASSUMPTIONS.map((a) => `assumed_${a}_share`);

/** Flight-level columns repeated on every event row: the model check at full throttle and at idle. */
export const MODEL_CHECK_CSV_COLUMNS = (['full', 'idle'] as const).flatMap((setting) =>
  (['frames', 'mean_residual_mps', 'sd_residual_mps', 'drag_error_pct'] as const).map(
    (key) => `model_check_${setting}_${key}`,
  ),
);

export function reviewToCsv(review: FlightReview): string {
  const shares = assumedShareJson(review);
  const check = modelCheckJson(review.modelCheck);
  const checkCells = (['full', 'idle'] as const).flatMap((setting) => {
    const m = check[setting];
    return [m?.frames ?? null, m?.mean_residual_mps ?? null, m?.sd_residual_mps ?? null, m?.drag_error_pct ?? null];
  });
  const flightCells = [...ASSUMPTIONS.map((a) => shares[a]), ...checkCells];
  const rows = review.events.map((e) => {
    const j = eventJson(e);
    return csvRow([...EVENT_CSV_COLUMNS.map((k) => j[k]), ...flightCells]);
  });
  // A flight without events still has its flight-level columns (the model check of a clean flight is the one most
  // worth having): one row with the event columns empty, which no reader can take for an event (no limit).
  if (rows.length === 0) rows.push(csvRow([...EVENT_CSV_COLUMNS.map(() => null), ...flightCells]));
  return (
    [[...EVENT_CSV_COLUMNS, ...ASSUMED_CSV_COLUMNS, ...MODEL_CHECK_CSV_COLUMNS].join(','), ...rows].join('\n') + '\n'
  );
}

/** Utilization as a percentage of the limit, e.g. 0.934 → "93.4 %"; unbounded (n_thrust = 0) → "n_thrust = 0". */
export function formatUtilization(u: number | null): string {
  if (u === null) return '—';
  if (u === Number.POSITIVE_INFINITY) return 'n_thrust = 0';
  return `${(u * 100).toFixed(1)} %`;
}

function pct(part: number, whole: number): string {
  return whole > 0 ? `${((part / whole) * 100).toFixed(1)} %` : '—';
}

/** What ended an event, in words (the JSON and CSV carry the code). */
export function endedByText(endedBy: EndedBy | null): string {
  switch (endedBy) {
    case null:
      return 'still on';
    case 'cleared':
      return 'alert cleared';
    case 'data_gap':
      return 'data gap';
    case 'link_lost':
      return 'link lost';
    case 'seek':
      return 'replay seek';
    case 'clock_restart':
      return 'sender clock restart';
    case 'end_of_data':
      return 'end of data';
  }
}

function limitWords(limit: LimitName): string {
  return limit === 'thrust' ? 'thrust (sustained turn)' : limit === 'speed' ? 'speed (CAS ÷ vne)' : limit;
}

function thresholdText(review: FlightReview): string {
  const t = review.options.thresholds;
  return (
    `stall caution ${t.stallCaution.toFixed(2)} / warning ${t.stallWarning.toFixed(2)}; ` +
    `structure caution ${t.structureCaution.toFixed(2)} / warning ${t.structureWarning.toFixed(2)}; ` +
    `thrust caution ${t.thrustCaution.toFixed(2)}; speed caution ${t.speedCaution.toFixed(2)} / warning ${t.speedWarning.toFixed(2)}; ` +
    `hysteresis ${t.hysteresis.toFixed(2)}; off after ${t.clearS} s clear`
  );
}

/** Escape text for a Markdown table cell. */
function cell(text: string): string {
  return text.replace(/\|/g, '\\|').replace(/[\r\n]+/g, ' ');
}

function mdTable(header: string[], rows: string[][], rightAligned: boolean[]): string[] {
  const line = (cells: string[]) => `| ${cells.map(cell).join(' | ')} |`;
  return [line(header), `|${rightAligned.map((r) => (r ? '---:' : ':---')).join('|')}|`, ...rows.map(line)];
}

function countEvents(events: readonly LimitEvent[], level: AlertLevel): number {
  return events.filter((e) => e.level === level).length;
}

/** One line on the outcome: the highest level reached and how many events. */
export function outcomeLine(review: FlightReview): string {
  const warnings = countEvents(review.events, 'warning');
  const cautions = countEvents(review.events, 'caution');
  if (warnings + cautions === 0) return 'No caution or warning: every limit stayed below its caution threshold.';
  const parts: string[] = [];
  if (warnings > 0) parts.push(`${warnings} warning event${warnings === 1 ? '' : 's'}`);
  if (cautions > 0) parts.push(`${cautions} caution event${cautions === 1 ? '' : 's'}`);
  return `${parts.join(' and ')} (a warning interval also lies inside a caution interval; both are listed).`;
}

export function reviewToMarkdown(review: FlightReview, ctx: ReviewContext): string {
  const a = ctx.aircraft;
  const c = review.conditions;
  const out: string[] = [];
  out.push(`# Flight review: ${ctx.source}`, '');
  out.push(
    `- Airframe: **${a.name}** (${ctx.aircraftFile}) — mass ${fixed(a.massKg, 2)} kg, wing area ${fixed(a.wingAreaM2, 3)} m², CLmax ${fixed(a.clMax, 2)}${a.clMin !== undefined ? `, CLmin ${fixed(a.clMin, 2)}` : ''}`,
  );
  out.push(
    `- Limit load factors: +${fixed(a.nLimitPos, 2)} (${a.nLimitPosSource}), ${fixed(a.nLimitNeg, 2)} (${a.nLimitNegSource})` +
      (a.vneMps !== undefined ? `; Vne ${fixed(a.vneMps, 1)} m/s CAS` : ''),
  );
  out.push(`- Alert thresholds (utilization = load factor ÷ limit): ${thresholdText(review)}`);
  out.push(
    `- Load-factor smoothing: ${review.options.smoothTauS > 0 ? `first-order, τ = ${review.options.smoothTauS} s` : 'off'}`,
  );
  out.push('');

  out.push('## Data and conditions', '');
  const condRows: string[][] = [
    ['Lines read', `${review.frames} (${review.accepted} accepted, ${review.rejected} rejected)`],
    [
      'Time span',
      review.firstTS === null
        ? '—'
        : `t = ${fixed(review.firstTS, 2)} s to ${fixed(review.lastTS, 2)} s (${fixed(review.durationS, 2)} s of data)`,
    ],
    ['Pressure altitude', c.altitudeM ? `${fixed(c.altitudeM.min, 0)} to ${fixed(c.altitudeM.max, 0)} m` : '—'],
    ['TAS', c.tasMps ? `${fixed(c.tasMps.min, 1)} to ${fixed(c.tasMps.max, 1)} m/s` : '—'],
    [
      `Load factor n${review.options.smoothTauS > 0 ? ' (smoothed)' : ''}`,
      c.nMeasured ? `${fixed(c.nMeasured.min, 2)} to ${fixed(c.nMeasured.max, 2)}` : '—',
    ],
    [
      'Air temperature',
      c.temperatureK ? `${fixed(c.temperatureK.min - 273.15, 1)} to ${fixed(c.temperatureK.max - 273.15, 1)} °C` : '—',
    ],
    ['Median density', `${fixed(c.medianDensityKgM3, 4)} kg/m³`],
    ['Median mass', `${fixed(c.medianMassKg, 2)} kg`],
  ];
  if (c.segments > 1)
    condRows.push([
      'Data segments',
      `${c.segments} (sender clock restarts or reconnects; computation restarted at each)`,
    ]);
  if (c.gaps > 0)
    condRows.push(['Gaps over 1 s', `${c.gaps}, ${fixed(c.gapS, 2)} s in total (not counted in time in level)`]);
  if (c.notFlyingFrames > 0)
    condRows.push(['Frames below 0.5·Vs1', `${c.notFlyingFrames} (not flying: no alerts raised)`]);
  if (c.uncoordinatedS > 0)
    condRows.push([
      'Uncoordinated',
      `${fixed(c.uncoordinatedS, 2)} s (measured n differs from 1/cos(bank) by over 0.15 for over 1 s)`,
    ]);
  for (const a of ASSUMPTIONS) {
    const share = review.assumedShare[a];
    if (share !== null && share > 0)
      condRows.push([`Assumed: ${ASSUMPTION_WORDS[a]}`, `${pct(share, 1)} of the frames`]);
  }
  out.push(...mdTable(['Item', 'Value'], condRows, [false, false]), '');

  out.push('## Events', '', outcomeLine(review), '');
  if (review.events.length > 0) {
    const rows = review.events.map((e, i) => [
      String(i + 1),
      limitWords(e.limit),
      e.level.toUpperCase(),
      fixed(e.start_s, 2),
      fixed(e.end_s, 2),
      fixed(e.duration_s, 2),
      formatUtilization(e.peak_utilization),
      fixed(e.peak_t_s, 2),
      fixed(e.speed_at_peak_mps, 1),
      fixed(e.n_at_peak, 2),
      endedByText(e.ended_by),
      fixed(e.min_time_to_stall_caution_s, 1),
    ]);
    out.push(
      ...mdTable(
        [
          '#',
          'Limit',
          'Level',
          'Start (s)',
          'End (s)',
          'Duration (s)',
          'Peak utilization',
          'Peak at (s)',
          'TAS at peak (m/s)',
          'n at peak',
          'Ended by',
          'Least time to stall caution (s)',
        ],
        rows,
        [true, false, false, true, true, true, true, true, true, true, false, true],
      ),
      '',
      'An event ends when its alert clears, or at a break in the data (a gap over 1 s, a lost link, a restart of ' +
        "the sender's clock, the end of the data): there it ends at the last frame before the break.",
      '',
    );
  }

  out.push('## Peak utilization per limit', '');
  out.push(
    ...mdTable(
      ['Limit', 'Peak utilization', 'At t (s)'],
      LIMITS.map((l) => [limitWords(l), formatUtilization(review.peaks[l].utilization), fixed(review.peaks[l].t_s, 2)]),
      [false, true, true],
    ),
    '',
  );

  out.push('## Time in each level', '');
  const counted = review.timeInLevelS.normal + review.timeInLevelS.caution + review.timeInLevelS.warning;
  out.push(
    ...mdTable(
      ['Level', 'Time (s)', 'Share'],
      (['normal', 'caution', 'warning'] as Level[]).map((l) => [
        l,
        fixed(review.timeInLevelS[l], 2),
        pct(review.timeInLevelS[l], counted),
      ]),
      [false, true, true],
    ),
    '',
    'Each interval between frames counts at the level of the frame that begins it.',
    '',
  );

  out.push(...modelCheckMarkdown(review), '');

  out.push('## Rejected lines', '');
  if (review.rejected === 0) {
    out.push('None.', '');
  } else {
    out.push(`${review.rejected} line${review.rejected === 1 ? '' : 's'} rejected (not used in the computation):`, '');
    out.push(
      ...mdTable(
        ['Line', 'Code', 'Reason'],
        review.rejects.map((r) => [String(r.line), r.code, r.reason]),
        [true, false, false],
      ),
    );
    if (review.rejected > review.rejects.length)
      out.push(
        '',
        `… and ${review.rejected - review.rejects.length} more (the first ${review.rejects.length} are listed).`,
      );
    out.push('');
  }

  out.push('## Caution', '', ADVISORY_CAUTION, '');
  return out.join('\n');
}

/** The model check section: measured against modelled specific excess power, at full throttle and at idle. */
function modelCheckMarkdown(review: FlightReview): string[] {
  const out = ['## Model check (specific excess power)', ''];
  const check = review.modelCheck;
  const assumed = review.options.assumeThrottle;
  const row = (label: string, m: ModelCheckSetting | null): string[] =>
    m === null
      ? [label, '0', '—', '—', '—']
      : [label, String(m.frames), fixed(m.meanResidualMps, 2), fixed(m.sdResidualMps, 2), fixed(m.dragErrorPct, 1)];
  out.push(
    ...mdTable(
      ['Throttle', 'Frames', 'Mean residual (m/s)', 'SD (m/s)', 'Implied drag error (%)'],
      [row('full (≥ 0.98)', check.full), row('idle (≤ 0.02)', check.idle)],
      [false, true, true, true, true],
    ),
    '',
    `Residual = measured Ps (dh/dt + (V/g)·dV/dt over a ${review.options.rateWindowS} s window) − modelled Ps ` +
      '(V·(T − D)/W from the airframe file). A negative mean: the aircraft climbed or accelerated less than the model ' +
      'predicts, so its thrust margin may be optimistic. Implied drag error ΔD/D = −W·residual/(V·D). Quasi-steady ' +
      'flight assumed; part-throttle frames are not used' +
      (assumed !== undefined ? `; frames without a throttle value were taken as ${assumed}.` : '.'),
  );
  return out;
}

export type FailLevel = AlertLevel;

/** Events that reach the fail level: warnings for "warning"; cautions and warnings for "caution". */
export function failingEvents(review: FlightReview, failOn: FailLevel): LimitEvent[] {
  return review.events.filter((e) => failOn === 'caution' || e.level === 'warning');
}

/** The one-screen summary of `turnmargin check`. */
export function checkSummary(review: FlightReview, ctx: ReviewContext, failOn: FailLevel): string {
  const failing = failingEvents(review, failOn);
  const lines: string[] = [];
  lines.push(`check ${ctx.source} — airframe ${ctx.aircraft.name} — fail on ${failOn}`);
  lines.push(
    `lines ${review.frames}: ${review.accepted} accepted, ${review.rejected} rejected; ` +
      `${fixed(review.durationS, 2)} s of data` +
      (review.firstTS !== null ? ` (t ${fixed(review.firstTS, 2)} to ${fixed(review.lastTS, 2)} s)` : ''),
  );
  lines.push(
    `time in level: normal ${fixed(review.timeInLevelS.normal, 2)} s, caution ${fixed(review.timeInLevelS.caution, 2)} s, ` +
      `warning ${fixed(review.timeInLevelS.warning, 2)} s`,
  );
  lines.push(
    'peaks: ' +
      LIMITS.map(
        (l) =>
          `${l} ${formatUtilization(review.peaks[l].utilization)}${review.peaks[l].t_s !== null ? ` at ${fixed(review.peaks[l].t_s, 2)} s` : ''}`,
      ).join(', '),
  );
  const notFlying = review.conditions.notFlyingFrames;
  if (notFlying > 0) {
    lines.push(
      notFlying === review.accepted
        ? 'note: no frame was flying (TAS below 0.5·Vs1 throughout), so no limit could be checked'
        : `note: ${notFlying} frame${notFlying === 1 ? '' : 's'} below 0.5·Vs1 (not flying: no alerts raised there)`,
    );
  }
  if (review.rejected > 0) {
    const byReason = new Map<string, number>();
    for (const r of review.rejects) byReason.set(r.reason, (byReason.get(r.reason) ?? 0) + 1);
    const top = [...byReason.entries()].sort((x, y) => y[1] - x[1]).slice(0, 3);
    lines.push(
      `rejected lines (reported, not failing): ${top.map(([reason, n]) => `${reason} ×${n}`).join('; ')}` +
        (review.rejected > review.rejects.length ? ` (counted over the first ${review.rejects.length})` : ''),
    );
  }
  const shown = 10;
  if (review.events.length > 0) {
    lines.push(`events (${review.events.length}):`);
    const rows = review.events
      .slice(0, shown)
      .map((e) => [
        e.level.toUpperCase(),
        e.limit,
        fixed(e.start_s, 2),
        fixed(e.end_s, 2),
        fixed(e.duration_s, 2),
        formatUtilization(e.peak_utilization),
        fixed(e.peak_t_s, 2),
      ]);
    lines.push(
      ...alignTable(['level', 'limit', 'start s', 'end s', 'dur s', 'peak', 'at s'], rows, [
        false,
        false,
        true,
        true,
        true,
        true,
        true,
      ]).map((l) => `  ${l}`),
    );
    if (review.events.length > shown)
      lines.push(`  … and ${review.events.length - shown} more (turnmargin review for all)`);
  }
  lines.push(
    failing.length === 0
      ? `PASS: no event reached ${failOn}`
      : `FAIL: ${failing.length} event${failing.length === 1 ? '' : 's'} reached ${failOn}${failOn === 'caution' ? ' or warning' : ''}`,
  );
  return lines.join('\n') + '\n';
}
