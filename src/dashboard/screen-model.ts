/**
 * The screen model: everything the dashboard shows, as styled text lines, built from the latest margin record,
 * the events, the link health and the replay state. Pure — the clock comes in as `ageS`; the blessed module only
 * draws what this returns.
 */
import { alertThreshold } from '../core/alerts.js';
import { RESIDUAL_ADVISORY_MPS } from '../core/energy-tracker.js';
import { ASSUMPTION_WORDS } from '../core/assumptions.js';
import type { EndedBy, LimitEvent } from '../core/events.js';
import type { ReplayState } from '../sources/source.js';
import type { MarginRecord } from '../core/margin-record.js';
import type { LimitName } from '../core/performance.js';
import type { AlertThresholds } from '../core/thresholds.js';
import { STALE_AFTER_S, type LinkHealth, type LinkState } from '../sources/link-health.js';
import { LIMITS, closestLimit, describeAlert, levelTone, levelWord, limitLevel, limitWord } from './format-alert.js';
import { buildUtilizationBar } from './format-bars.js';
import { fitLine, lineWidth, seg, type Line, type Segment, type Tone } from './format-tags.js';
import {
  fitPathTail,
  fitText,
  formatAge,
  formatBytes,
  formatClock,
  formatFixed,
  formatPercent,
  formatSigned,
  formatSpeed,
  speedFromMps,
  speedUnitLabel,
  type SpeedUnit,
  wrapWords,
} from './format-units.js';
import { innerSize, type DashboardLayout, type Rect } from './layout.js';
import type { LiveCardView } from './live-card.js';
import type { TestPointStatus } from '../core/test-point.js';

/** After this long without a frame the data are marked STALE, s (issue contract; the link health's limit). */
export { STALE_AFTER_S } from '../sources/link-health.js';

/** The replay transport's state (one type from the replay stage to the screen). */
export type ReplayStatus = ReplayState;

export interface ScreenInput {
  aircraftName: string;
  thresholds: AlertThresholds;
  sourceLabel: string;
  record: MarginRecord | null;
  /** In order of start; open ones included. */
  events: readonly LimitEvent[];
  link: LinkHealth | null;
  replay: ReplayStatus | null;
  /** A replay (transport keys apply). */
  isReplay: boolean;
  /** Seconds since the last record arrived, by the shell's clock; null before the first. */
  ageS: number | null;
  units: SpeedUnit;
  muted: boolean;
  error: string | null;
  /** The frames say they come from a simulator ("simulated": true). */
  simulated?: boolean;
  /** A test card followed live (--card): the point shown and every point's status. */
  card?: LiveCardView | null;
  /** Notes kept at the top of the event log (a card made for another airframe). */
  notices?: readonly string[];
}

export interface Panel {
  title: string;
  /** Whether the panel's border shows the alert/stale tone. */
  tone: Tone;
  lines: Line[];
}

export interface ScreenModel {
  stale: boolean;
  banner: Line[];
  margins: Panel;
  readouts: Panel;
  link: Panel;
  events: Panel;
  /** The test point panel; null without a card. */
  card: Panel | null;
  plotTitle: string;
  keys: Line;
  caution: Line;
  help: Line[];
  /** Shown instead of the panels below 80×24. */
  tooSmall: Line[] | null;
}

export const CAUTION_TEXT = "Advisory only, not flight-critical — the aircraft's approved limits prevail.";

/** Stale: no frame for over STALE_AFTER_S (unless the replay is paused on purpose), or the link says so. */
export function isStale(input: Pick<ScreenInput, 'record' | 'ageS' | 'replay' | 'link'>): boolean {
  if (input.record === null) return false;
  if (input.replay?.paused) return false;
  if (input.ageS !== null && input.ageS > STALE_AFTER_S) return true;
  return input.link?.state === 'stale' || input.link?.state === 'lost';
}

function centre(text: string, width: number): string {
  const chars = Array.from(text).length;
  if (chars >= width) return text;
  const left = Math.floor((width - chars) / 2);
  return ' '.repeat(left) + text + ' '.repeat(width - chars - left);
}

export function buildBannerText(input: ScreenInput, stale: boolean): { tone: Tone; text: string } {
  const { tone, text } = buildBannerState(input, stale);
  // First, so that a narrow banner never cuts it off: nobody must take simulated data for a flight.
  return { tone, text: input.simulated ? `SIMULATED DATA · ${text}` : text };
}

function buildBannerState(input: ScreenInput, stale: boolean): { tone: Tone; text: string } {
  const rec = input.record;
  const flags: string[] = [];
  if (input.replay?.paused) flags.push('PAUSED');
  if (input.muted) flags.push('bell muted');
  const suffix = flags.length ? `   [${flags.join(' · ')}]` : '';
  if (rec === null) {
    const state = input.link ? ` — link ${input.link.state.toUpperCase()}` : '';
    return { tone: 'banner-idle', text: `WAITING FOR DATA${state}${suffix}` };
  }
  if (stale) {
    const age = input.ageS !== null ? ` — no frame for ${formatAge(input.ageS)}` : '';
    const link = input.link && input.link.state !== 'live' ? ` · link ${input.link.state.toUpperCase()}` : '';
    const last = rec.level !== 'normal' ? ` · last: ${levelWord(rec.level)}` : '';
    return { tone: 'banner-stale', text: `STALE DATA${age}${link}${last}${suffix}` };
  }
  if (!rec.flying) {
    return { tone: 'banner-idle', text: `NOT FLYING — below half the stall speed, no alerts${suffix}` };
  }
  const toCaution = shownTimeToStallCautionS(rec);
  // The prediction takes the place of "closest": at this deceleration the stall caution comes on in t s.
  const soon = toCaution === null ? '' : ` · stall caution in ${formatFixed(toCaution, 1)} s`;
  if (rec.level === 'normal') {
    const c = closestLimit(rec);
    const closest = soon !== '' ? soon : c ? ` · closest: ${c.limit} ${formatPercent(c.utilization)}` : '';
    return { tone: 'banner-normal', text: `NORMAL — inside the envelope${closest}${suffix}` };
  }
  const main = rec.alerts.filter((a) => a.level === rec.level).map((a) => describeAlert(rec, a.limit));
  const others = rec.alerts
    .filter((a) => a.level !== rec.level && !rec.alerts.some((b) => b.limit === a.limit && b.level === rec.level))
    .map((a) => `${levelWord(a.level)} ${describeAlert(rec, a.limit)}`);
  const also = (others.length ? ` · also ${others.join(', ')}` : '') + soon;
  const word = levelWord(rec.level);
  const text = rec.level === 'warning' ? `▲ ${word} ▲ ${main.join(', ')}${also}` : `${word} ${main.join(', ')}${also}`;
  return { tone: rec.level === 'warning' ? 'banner-warning' : 'banner-caution', text: text + suffix };
}

export function buildBanner(input: ScreenInput, stale: boolean, width: number, height: number): Line[] {
  const { tone, text } = buildBannerText(input, stale);
  const blank = [seg(' '.repeat(width), tone)];
  const middle = fitLine([seg(centre(text, width), tone)], width).map((s) => ({ ...s, tone }));
  const lines: Line[] = [];
  for (let i = 0; i < height; i++) lines.push(i === Math.floor(height / 2) ? middle : blank);
  return lines;
}

/** Δn to a limit: how much more load factor is available (negative past it). */
export function loadFactorMargin(rec: MarginRecord, limit: LimitName): number | null {
  const n = rec.n_measured;
  if (!rec.flying) return null;
  switch (limit) {
    case 'stall':
      if (n < 0) return rec.n_stall_neg === null ? null : n - rec.n_stall_neg;
      return rec.n_stall - n;
    case 'thrust':
      return rec.n_thrust === null ? null : rec.n_thrust - n;
    case 'structure':
      return n < 0 ? n - rec.n_structural_neg : rec.n_structural - n;
    case 'speed':
      return null; // not a load-factor limit
  }
}

const LIMIT_LABEL: Record<LimitName, string> = {
  stall: 'Stall',
  thrust: 'Thrust',
  structure: 'Structure',
  speed: 'Speed',
};

/** The speed limit (CAS against vne) and the inputs assumed in words: two lines, or one when `oneLine`. */
function speedAndAssumedLines(input: ScreenInput, stale: boolean, width: number, oneLine: boolean): Line[] {
  const rec = input.record;
  if (rec === null) return [];
  const level = limitLevel(rec.alerts, 'speed');
  const tone: Tone = stale ? 'stale' : level ? levelTone(level) : 'plain';
  const u = rec.utilization.speed;
  const word = stale ? 'STALE' : level ? levelWord(level) : u === null ? '' : 'ok';
  const left = [
    seg(LIMIT_LABEL.speed.padEnd(10), 'heading'),
    seg((u === null ? 'no vne' : formatPercent(u)).padStart(7), tone),
    seg(` CAS ${formatSpeed(rec.cas_mps, input.units)}`, tone),
  ];
  const used = left.reduce((n, s) => n + Array.from(s.text).length, 0);
  const assumed = rec.assumed.map((a) => ASSUMPTION_WORDS[a]).join(', ');
  if (oneLine) {
    const speed = [seg('Speed ', 'heading'), seg(u === null ? 'no vne' : formatPercent(u).trim(), tone)];
    if (level) speed.push(seg(` ${word}`, tone));
    return [
      fitLine([...speed, seg(' · assumed ', 'dim'), seg(assumed === '' ? 'nothing' : assumed, 'caution')], width),
    ];
  }
  return [
    fitLine(
      [...left, seg(' '.repeat(Math.max(1, width - used - word.length))), seg(word, stale ? 'stale' : tone)],
      width,
    ),
    fitLine(
      [seg('assumed ', 'dim'), seg(assumed === '' ? 'nothing' : assumed, assumed === '' ? 'dim' : 'caution')],
      width,
    ),
  ];
}

export function buildMarginLines(input: ScreenInput, stale: boolean, width: number, height = 8): Line[] {
  const rec = input.record;
  const lines: Line[] = [];
  for (const limit of LIMITS) {
    if (limit === 'speed') continue; // one line below, with the assumed inputs
    const name = LIMIT_LABEL[limit].padEnd(10);
    const cautionAt = alertThreshold(limit, 'caution', input.thresholds);
    const warningAt = alertThreshold(limit, 'warning', input.thresholds);
    const suffixWidth = 10;
    const barWidth = Math.max(4, width - 2 - suffixWidth);
    if (rec === null || !rec.flying) {
      lines.push(fitLine([seg(name, 'heading'), seg(rec === null ? '—' : 'not flying', 'dim')], width));
      lines.push(
        fitLine(
          [seg('  '), ...buildUtilizationBar({ utilization: null, cautionAt, warningAt, width: barWidth })],
          width,
        ),
      );
      continue;
    }
    const u = rec.utilization[limit];
    const level = limitLevel(rec.alerts, limit);
    const valueTone: Tone = stale ? 'stale' : level ? levelTone(level) : 'plain';
    const dn = loadFactorMargin(rec, limit);
    let pct = formatPercent(u);
    if (limit === 'thrust' && rec.n_thrust === 0) pct = 'no sust';
    if (limit === 'thrust' && rec.n_thrust === null) pct = 'no data';
    const word = stale ? 'STALE' : level ? levelWord(level) : 'ok';
    const wordTone: Tone = stale ? 'stale' : level ? levelTone(level) : 'ok';
    const left = [seg(name, 'heading'), seg(pct.padStart(7), valueTone), seg(` Δn ${formatSigned(dn, 2)}`, valueTone)];
    const used = left.reduce((n, s) => n + Array.from(s.text).length, 0);
    const pad = Math.max(1, width - used - word.length);
    lines.push(fitLine([...left, seg(' '.repeat(pad)), seg(word, wordTone)], width));
    let suffix = '';
    let suffixTone = valueTone;
    const toCaution = limit === 'stall' ? shownTimeToStallCautionS(rec) : null;
    if (toCaution !== null) {
      // Decelerating towards the stall caution: the time left replaces the speed margin.
      suffix = `in ${formatFixed(toCaution, 1)} s`;
      if (!stale) suffixTone = 'caution';
    } else if (limit === 'stall' && rec.stall_speed_margin_pct !== null)
      suffix = `V ${formatSigned(rec.stall_speed_margin_pct, 0)} %`;
    const bar = buildUtilizationBar({
      utilization: limit === 'thrust' && rec.n_thrust === 0 ? Number.POSITIVE_INFINITY : u,
      cautionAt,
      warningAt,
      width: barWidth,
    });
    lines.push(fitLine([seg('  '), ...bar, seg(' '), seg(suffix.padStart(suffixWidth - 1), suffixTone)], width));
  }
  lines.push(...speedAndAssumedLines(input, stale, width, height < 8));
  return lines;
}

function pair(labelA: string, valueA: string, labelB: string, valueB: string, valueTone: Tone, width: number): Line {
  const half = Math.floor(width / 2);
  const a = fitLine([seg(labelA, 'dim'), seg(valueA, valueTone)], half);
  const b = fitLine([seg(labelB, 'dim'), seg(valueB, valueTone)], width - half);
  return [...a, ...b];
}

function deg(value: number | null, decimals = 1): string {
  return value === null ? '—' : `${formatFixed(value, decimals)}°`;
}

/** The time to the stall caution is shown below this, s (issue contract). */
export const TIME_TO_STALL_SHOWN_S = 10;

/** The time to the stall caution when it is to be shown (0 < t < 10 s), else null. */
export function shownTimeToStallCautionS(rec: MarginRecord): number | null {
  const t = rec.time_to_stall_caution_s;
  return t !== null && Number.isFinite(t) && t > 0 && t < TIME_TO_STALL_SHOWN_S ? t : null;
}

/** The model check in plain words, when the residual's 3 s mean is beyond ±RESIDUAL_ADVISORY_MPS; else null. */
export function modelAdvisory(rec: MarginRecord): { meanMps: number; text: string } | null {
  const mean = rec.ps_residual_mean_3s_mps;
  if (mean === null || !Number.isFinite(mean) || Math.abs(mean) <= RESIDUAL_ADVISORY_MPS) return null;
  return {
    meanMps: mean,
    text:
      mean > 0
        ? 'climbing/accelerating more than the model predicts: the thrust margin may be pessimistic'
        : 'climbing/accelerating less than the model predicts: the thrust margin may be optimistic',
  };
}

function psText(value: number | null): string {
  return value === null || !Number.isFinite(value) ? '—' : `${formatSigned(value, 2)} m/s`;
}

/** "14.2–24.1 m/s", or a dash when no speed can hold the turn at the present n. */
export function formatBand(band: readonly [number, number] | null, unit: SpeedUnit): string {
  if (band === null || !Number.isFinite(band[0]) || !Number.isFinite(band[1])) return '—';
  const d = unit === 'kmh' ? 0 : 1;
  return `${formatFixed(speedFromMps(band[0], unit), d)}–${formatFixed(speedFromMps(band[1], unit), d)} ${speedUnitLabel(unit)}`;
}

/**
 * The readouts, most needed first. Where the panel is short (the 80×24 screen) altitude and bank share a line and
 * the energy lines (Ps measured and modelled, the sustained band) take the place of the density and the turn rate.
 */
export function buildReadoutLines(input: ScreenInput, stale: boolean, width: number, height: number): Line[] {
  const rec = input.record;
  const lines: Line[] = [];
  if (rec === null) {
    lines.push(fitLine([seg('no frame yet', 'dim')], width));
    return lines;
  }
  const t: Tone = stale ? 'stale' : 'plain';
  // The title already says STALE; a full line says it again where there is room for it.
  if (stale && height >= 8) {
    lines.push(
      fitLine([seg(`STALE — last frame ${formatAge(input.ageS)} ago, t ${formatClock(rec.t_s)}`, 'stale')], width),
    );
  }
  const u = input.units;
  const cas = (rec as MarginRecord & { cas_mps?: number | null }).cas_mps;
  const compact = height < 7;
  lines.push(
    cas === undefined
      ? pair('TAS  ', formatSpeed(rec.tas_mps, u), 'EAS  ', formatSpeed(rec.eas_mps, u), t, width)
      : pair('TAS  ', formatSpeed(rec.tas_mps, u), 'CAS  ', formatSpeed(cas, u), t, width),
  );
  const turnRate = rec.turn_rate_dps === null ? '—' : `${formatFixed(rec.turn_rate_dps, 1)} °/s`;
  const density = `${formatFixed(rec.density_kg_m3, 3)} kg/m³`;
  if (compact) {
    lines.push(pair('alt  ', `${formatFixed(rec.alt_m, 0)} m`, 'bank ', deg(rec.bank_deg), t, width));
  } else {
    lines.push(pair('alt  ', `${formatFixed(rec.alt_m, 0)} m`, 'ρ    ', density, t, width));
    lines.push(pair('bank ', deg(rec.bank_deg), 'rate ', turnRate, t, width));
  }
  const nBank = rec.n_from_bank === null ? '—' : formatFixed(rec.n_from_bank, 2);
  const nLine: Line = [
    seg('n    ', 'dim'),
    seg(formatFixed(rec.n_measured, 2), t),
    seg(' vs 1/cos φ ', 'dim'),
    seg(nBank, t),
    seg('  '),
  ];
  if (rec.n_from_bank !== null) {
    const roomy = width - lineWidth(nLine) >= 13;
    const word = rec.uncoordinated ? (roomy ? 'UNCOORDINATED' : 'UNCOORD') : roomy ? 'coordinated' : 'coord';
    nLine.push(seg(word, stale ? 'stale' : rec.uncoordinated ? 'caution' : 'ok'));
  }
  lines.push(fitLine(nLine, width));
  // Energy: Ps = dh/dt + (V/g)·dV/dt measured, V·(T − D)/W modelled (at full throttle or idle only).
  lines.push(pair('Ps   ', psText(rec.ps_mps), 'model ', psText(rec.ps_model_mps), t, width));
  const bandLine: Line = [
    seg('band ', 'dim'),
    seg(formatBand(rec.sustained_band_mps, u), t),
    seg(` at n ${formatFixed(Math.max(1, rec.n_measured), 2)}`, 'dim'),
  ];
  const toCaution = shownTimeToStallCautionS(rec);
  const timeWords = toCaution === null ? null : `stall caution in ${formatFixed(toCaution, 1)} s`;
  if (timeWords !== null && lineWidth(bandLine) + 2 + timeWords.length <= width) {
    bandLine.push(
      seg(' '.repeat(width - lineWidth(bandLine) - timeWords.length)),
      seg(timeWords, stale ? 'stale' : 'caution'),
    );
  } else if (timeWords !== null && !compact) {
    lines.push(fitLine(bandLine, width));
    bandLine.length = 0;
    bandLine.push(seg(timeWords, stale ? 'stale' : 'caution'));
  }
  lines.push(fitLine(bandLine, width));
  const stallCas = stallSpeedCasMps(rec);
  lines.push(
    fitLine(
      [
        seg('stall V ', 'dim'),
        seg('TAS ', 'dim'),
        seg(formatSpeed(rec.stall_speed_mps, u), t),
        seg('  CAS ', 'dim'),
        seg(formatSpeed(stallCas, u), t),
      ],
      width,
    ),
  );
  if (compact) lines.push(pair('ρ    ', density, 'rate ', turnRate, t, width));
  lines.push(pair('bank limit ', deg(rec.bank_limit_deg, 0), 'sustained ', deg(rec.bank_sustained_deg, 0), t, width));
  lines.push(
    pair(
      'radius ',
      rec.radius_m === null ? '—' : `${formatFixed(rec.radius_m, 0)} m`,
      'CL   ',
      formatFixed(rec.cl, 2),
      t,
      width,
    ),
  );
  lines.push(pair('mass ', `${formatFixed(rec.mass_kg, 2)} kg`, 'nz   ', formatFixed(rec.nz, 2), t, width));
  lines.push(
    pair('temp ', `${formatFixed(rec.temperature_k - 273.15, 1)} °C`, 'EAS  ', formatSpeed(rec.eas_mps, u), t, width),
  );
  return lines.slice(0, Math.max(0, height));
}

/**
 * The stall speed as a calibrated airspeed (what the airspeed indicator and V_NE are read in): the record's own
 * when it has one, else the TAS scaled by the frame's CAS/TAS ratio (the same pressure and temperature).
 */
export function stallSpeedCasMps(rec: MarginRecord): number | null {
  const r = rec as MarginRecord & { stall_speed_cas_mps?: number | null; cas_mps?: number | null };
  if (r.stall_speed_cas_mps !== undefined) return r.stall_speed_cas_mps;
  if (rec.stall_speed_mps === null || r.cas_mps === undefined || r.cas_mps === null || !(rec.tas_mps > 0)) return null;
  return (rec.stall_speed_mps * r.cas_mps) / rec.tas_mps;
}

const LINK_STATE_TONE: Record<LinkState, Tone> = {
  connecting: 'dim',
  listening: 'dim',
  live: 'ok',
  stale: 'stale',
  lost: 'warning',
  ended: 'dim',
};

export function buildLinkLines(input: ScreenInput, stale: boolean, width: number, height: number): Line[] {
  const link = input.link;
  const lines: Line[] = [];
  if (link === null) {
    lines.push(fitLine([seg(stale ? 'STALE ' : '', 'stale'), seg('waiting for the source…', 'dim')], width));
  } else {
    // A paused replay sends no frames on purpose: say so rather than "stale".
    const pausedReplay = input.replay?.paused === true && (link.state === 'stale' || link.state === 'live');
    const stateWord = pausedReplay
      ? 'PAUSED'
      : stale && link.state === 'live'
        ? 'STALE'
        : link.state === 'live' && input.isReplay
          ? 'REPLAY' // frames from a file, not a live link
          : link.state.toUpperCase();
    const stateTone: Tone = pausedReplay
      ? 'caution'
      : stale && link.state === 'live'
        ? 'stale'
        : LINK_STATE_TONE[link.state];
    lines.push(
      fitLine(
        [
          seg(stateWord, stateTone),
          seg(` ${formatFixed(link.framesPerS, 1)} fr/s`),
          seg(' rej ', 'dim'),
          seg(String(link.rejected), link.rejected > 0 ? 'caution' : 'plain'),
          seg(' last ', 'dim'),
          seg(formatAge(input.ageS ?? link.sinceLastFrameS), stale ? 'stale' : 'plain'),
        ],
        width,
      ),
    );
    if (link.stateDetail && (link.state === 'lost' || link.state === 'ended')) {
      lines.push(
        fitLine([seg('why ', 'dim'), seg(link.stateDetail, link.state === 'lost' ? 'caution' : 'dim')], width),
      );
    }
  }
  if (input.isReplay) {
    const r = input.replay;
    if (r === null) {
      lines.push(fitLine([seg('replay ', 'dim'), seg('—')], width));
    } else {
      lines.push(
        fitLine(
          [
            seg('replay ', 'dim'),
            seg(`${formatClock(r.positionS)}/${formatClock(r.lengthS ?? 0)}`),
            seg(` ×${r.speed === 0 ? 'max' : formatSpeedFactor(r.speed)} `),
            r.paused ? seg('PAUSED', 'caution') : link?.state === 'ended' ? seg('at end', 'dim') : seg('playing', 'ok'),
          ],
          width,
        ),
      );
    }
  }
  if (link !== null) {
    if (link.recordingError) {
      lines.push(fitLine([seg('REC ERROR ', 'warning'), seg(link.recordingError, 'warning')], width));
    } else if (link.recordingFile) {
      const size = ` ${formatBytes(link.recordingBytes)}`;
      lines.push(
        fitLine(
          [seg('rec ', 'dim'), seg(fitPathTail(link.recordingFile, Math.max(4, width - 4 - size.length))), seg(size)],
          width,
        ),
      );
    } else {
      lines.push(fitLine([seg('rec ', 'dim'), seg('not recording', 'dim')], width));
    }
  }
  if (link !== null) {
    lines.push(fitLine([seg('source ', 'dim'), seg(link.source)], width));
    lines.push(
      fitLine(
        [
          seg('lines ', 'dim'),
          seg(String(link.lines)),
          seg('  ok ', 'dim'),
          seg(String(link.accepted)),
          seg('  gaps ', 'dim'),
          seg(String(link.gaps)),
          seg('  reconn ', 'dim'),
          seg(String(link.reconnects)),
        ],
        width,
      ),
    );
    lines.push(
      fitLine(
        [
          seg('in ', 'dim'),
          seg(`${formatBytes(link.bytesPerS)}/s`),
          seg('  clock restarts ', 'dim'),
          seg(String(link.clockRestarts)),
        ],
        width,
      ),
    );
    for (const g of link.rejectedByCode)
      lines.push(fitLine([seg(`  ${String(g.count).padStart(5)} `, 'caution'), seg(g.words, 'dim')], width));
  }
  return lines.slice(0, Math.max(0, height));
}

/** ×2, ×0.5, ×0.25: a replay speed factor without trailing zeros. */
export function formatSpeedFactor(speed: number): string {
  return Number.isInteger(speed) ? String(speed) : String(Number(speed.toPrecision(3)));
}

/** How an event ended, in words: full, and short for a narrow list. */
const ENDED_WORDS: Record<EndedBy, [string, string]> = {
  cleared: ['cleared', 'clear'],
  data_gap: ['data lost (gap)', 'gap'],
  link_lost: ['link lost', 'lost'],
  seek: ['replay seek', 'seek'],
  clock_restart: ['clock restart', 'restart'],
  end_of_data: ['end of data', 'end'],
};

export function endedWord(ev: LimitEvent, narrow: boolean): string {
  if (ev.open) return '';
  const by = ev.ended_by;
  if (by === null) return '';
  return ENDED_WORDS[by][narrow ? 1 : 0];
}

const NARROW_EVENTS_WIDTH = 60;
const SHORT_LIMIT: Record<string, string> = { structure: 'STRUCT' };

/**
 * Event log, newest first: time, limit, level, duration, peak, the speed at the peak and how the event ended.
 * Below 60 columns (the 80×24 screen) the columns shrink so the speed and the end still fit.
 */
export function buildEventLines(input: ScreenInput, width: number, height: number): Line[] {
  const lines: Line[] = [];
  if (input.error) lines.push(fitLine([seg('ERROR ', 'warning'), seg(input.error, 'warning')], width));
  const advisory = input.record ? modelAdvisory(input.record) : null;
  if (advisory) {
    const words = `MODEL ${advisory.text} (3 s mean ${formatSigned(advisory.meanMps, 2)} m/s)`;
    for (const part of wrapWords(words, width, 3)) lines.push(fitLine([seg(part, 'caution')], width));
  }
  for (const note of input.notices ?? []) {
    for (const part of wrapWords(`NOTE ${note}`, width, 2)) lines.push(fitLine([seg(part, 'caution')], width));
  }
  if (input.events.length === 0) {
    lines.push(fitLine([seg('no exceedances so far', 'dim')], width));
    return lines.slice(0, Math.max(0, height));
  }
  const narrow = width < NARROW_EVENTS_WIDTH;
  const unit = speedUnitLabel(input.units);
  // The column heads only where at least one event fits under them.
  if (height - lines.length >= 2)
    lines.push(
      fitLine(
        [
          seg(
            narrow
              ? `start limit  lvl    dur peak ${unit.padStart(4)} ended`
              : `  start limit     level   duration peak   at TAS    ended`,
            'dim',
          ),
        ],
        width,
      ),
    );
  const newestFirst = [...input.events].sort((a, b) => b.start_s - a.start_s || (a.level === 'warning' ? -1 : 1));
  for (const ev of newestFirst) {
    if (lines.length >= height) break;
    const tone = levelTone(ev.level);
    const peakU = Number.isFinite(ev.peak_utilization) ? ev.peak_utilization : null;
    if (narrow) {
      const dur = ev.open ? 'ON' : `${formatFixed(ev.duration_s, 1)}s`;
      const peak = peakU === null ? 'nsus' : `${Math.round(peakU * 100)}%`;
      const limit = (SHORT_LIMIT[ev.limit] ?? limitWord(ev.limit)).slice(0, 6);
      lines.push(
        fitLine(
          [
            seg(formatClock(ev.start_s).replace(/\.\d$/, '').padStart(5)),
            seg(' '),
            seg(limit.padEnd(6), tone),
            seg(' '),
            seg(levelWord(ev.level).slice(0, 4), tone),
            seg(' '),
            seg(dur.padStart(6), ev.open ? tone : 'plain'),
            seg(' '),
            seg(peak.padStart(4)),
            seg(' '),
            seg(
              formatFixed(speedFromMps(ev.speed_at_peak_mps, input.units), input.units === 'kmh' ? 0 : 1).padStart(4),
            ),
            seg(' '),
            seg(endedWord(ev, true), 'dim'),
          ],
          width,
        ),
      );
      continue;
    }
    const dur = ev.open ? 'ON NOW' : `${formatFixed(ev.duration_s, 1)} s`;
    const peak = peakU === null ? 'no sust' : formatPercent(peakU);
    lines.push(
      fitLine(
        [
          seg(formatClock(ev.start_s).padStart(7)),
          seg(' '),
          seg(limitWord(ev.limit).padEnd(9), tone),
          seg(' '),
          seg(levelWord(ev.level).padEnd(7), tone),
          seg(' '),
          seg(dur.padStart(7), ev.open ? tone : 'plain'),
          seg(' '),
          seg(peak.padStart(6)),
          seg(' '),
          seg(formatSpeed(ev.speed_at_peak_mps, input.units).padEnd(9)),
          seg(' '),
          seg(endedWord(ev, false), 'dim'),
        ],
        width,
      ),
    );
  }
  return lines.slice(0, Math.max(0, height));
}

interface KeyHelp {
  keys: string;
  short: string;
  long: string;
  replayOnly?: boolean;
  cardOnly?: boolean;
}

export const KEY_HELP: readonly KeyHelp[] = [
  { keys: '?', short: 'keys', long: 'show or hide this list' },
  { keys: 'q', short: 'quit', long: 'quit (Ctrl-C too): the recording is flushed' },
  { keys: 'space', short: 'pause', long: 'pause or resume the replay', replayOnly: true },
  { keys: '+ −', short: 'speed', long: 'replay speed ×2 / ÷2', replayOnly: true },
  { keys: '← →', short: 'seek', long: 'seek back / forward 10 s', replayOnly: true },
  { keys: 'n p', short: 'point', long: 'next / previous test point (+P01 on the plane)', cardOnly: true },
  { keys: 'm', short: 'mute', long: 'mute or unmute the bell on a new warning' },
  { keys: 'u', short: 'units', long: 'speed units: m/s → kt → km/h' },
  { keys: 'c', short: 'clear', long: 'clear the trail on the n–V plane' },
];

/** The keys that apply, as many whole entries as fit (? lists them all). */
export function buildKeysLine(input: ScreenInput, width: number): Line {
  const line: Line = [];
  for (const k of KEY_HELP) {
    if (k.replayOnly && !input.isReplay) continue;
    if (k.cardOnly && !input.card) continue;
    const entry = [...(line.length ? [seg('  ')] : []), seg(k.keys, 'key'), seg(` ${k.short}`)];
    if (lineWidth([...line, ...entry]) > width) continue;
    line.push(...entry);
  }
  return fitLine(line, width);
}

export function buildHelpLines(input: ScreenInput, width: number): Line[] {
  const lines: Line[] = [seg('Keys', 'heading')].map((s) => [s]);
  for (const k of KEY_HELP) {
    const note =
      k.replayOnly && !input.isReplay ? '  (replay only)' : k.cardOnly && !input.card ? '  (with --card)' : '';
    lines.push([seg(`  ${k.keys.padEnd(7)}`, 'key'), seg(k.long), seg(note, 'dim')]);
  }
  lines.push([]);
  lines.push([seg('n–V plane (TAS across, load factor up)', 'heading')]);
  lines.push([seg('  stall   ', 'warning'), seg('stall-limited n = q·S·CLmax/W; dotted: stall caution')]);
  lines.push([seg('  thrust  ', 'caution'), seg('largest sustained n (thrust = drag)')]);
  lines.push([seg('  n limit ', 'warning'), seg('structural limit load factor')]);
  lines.push([seg('  ◀ now   ', 'ok'), seg('present point; trail: last 10 s (older dimmer)')]);
  lines.push([seg('  STALE   ', 'stale'), seg('no frame for over 1 s: point and numbers are old')]);
  lines.push([seg('  band    ', 'ok'), seg('dotted at the present n: the speeds that can hold the turn')]);
  lines.push([seg('Press ? or Esc to close.', 'dim')]);
  return lines.map((l) => fitLine(l, width));
}

/** A panel title cut to fit its border (blessed would wrap a long label into the panel). */
export function fitTitle(title: string, panelWidth: number): string {
  // blessed draws the label from column 2 with a space either side; keep one border cell before the corner.
  const room = Math.max(0, panelWidth - 6);
  return Array.from(title).length <= room ? title : fitText(title, room);
}

export function buildScreenModel(input: ScreenInput, layout: DashboardLayout): ScreenModel {
  const stale = isStale(input);
  const rec = input.record;
  const marginsInner = innerSize(layout.margins);
  const readoutsInner = innerSize(layout.readouts);
  const linkInner = innerSize(layout.link);
  const eventsInner = innerSize(layout.events);
  const level = rec === null || !rec.flying ? 'normal' : rec.level;
  const alertTone: Tone = stale ? 'stale' : level === 'normal' ? 'plain' : levelTone(level);
  const staleTitle = stale ? ' — STALE' : '';
  return {
    stale,
    banner: buildBanner(input, stale, layout.banner.width, layout.banner.height),
    margins: {
      title: fitTitle(`Margins to the limits${staleTitle}`, layout.margins.width),
      tone: alertTone,
      lines: buildMarginLines(input, stale, marginsInner.width, marginsInner.height),
    },
    readouts: {
      title: fitTitle(
        `${stale ? `Readouts — STALE ${formatAge(input.ageS)}` : 'Readouts'}${rec ? ` · t ${formatClock(rec.t_s)}` : ''}`,
        layout.readouts.width,
      ),
      tone: stale ? 'stale' : 'plain',
      lines: buildReadoutLines(input, stale, readoutsInner.width, readoutsInner.height),
    },
    link: {
      title: fitTitle(
        `Link: ${fitPathTail(input.sourceLabel, Math.max(4, layout.link.width - 12))}`,
        layout.link.width,
      ),
      tone: stale ? 'stale' : input.link?.state === 'lost' ? 'warning' : 'plain',
      lines: buildLinkLines(input, stale, linkInner.width, linkInner.height),
    },
    events: {
      title: fitTitle(`Exceedances (${input.events.length})`, layout.events.width),
      tone: input.events.some((e) => e.open && e.level === 'warning') ? 'warning' : 'plain',
      lines: buildEventLines(input, eventsInner.width, eventsInner.height),
    },
    card: input.card && layout.card.height > 0 ? buildCardPanel(input, input.card, stale, layout.card) : null,
    plotTitle: fitTitle(`n–V plane${staleTitle} · ${input.aircraftName}`, layout.plot.width),
    keys: buildKeysLine(input, layout.keys.width),
    caution: fitLine([seg(CAUTION_TEXT, 'dim')], layout.caution.width),
    help: buildHelpLines(input, innerSize(layout.help).width),
    tooSmall: layout.tooSmall
      ? [
          [seg(`The dashboard needs at least 80×24; this terminal is ${layout.cols}×${layout.rows}.`, 'heading')],
          [seg('Enlarge the window, or use --no-ui for JSON lines.', 'dim')],
          [seg('q quits.', 'dim')],
        ]
      : null,
  };
}

const STATUS_MARK: Record<TestPointStatus, string> = { achieved: '✓', partial: '~', not_flown: '·' };

/** "−0.9°", "+0.4 m/s": a deviation with its sign; a dash when unknown. */
function signedWithUnit(value: number | null, decimals: number, unit: string): string {
  return value === null ? '—' : `${formatSigned(value, decimals)}${unit}`;
}

/**
 * The row of marks, one per point (▸ before the point shown), in at most `room` columns: a long card, or a long
 * hold text beside it, shows the stretch around the point shown with … where points are left out; nothing when
 * even a few marks do not fit.
 */
function cardMarks(statuses: readonly TestPointStatus[], selected: number, room: number): Line {
  const mark = (st: TestPointStatus, i: number): Segment[] => [
    seg(i === selected ? '▸' : '', 'key'),
    seg(STATUS_MARK[st], st === 'achieved' ? 'ok' : st === 'partial' ? 'caution' : 'dim'),
  ];
  const all = statuses.length + 2; // a space before, and ▸
  if (all <= room) return [seg(' '), ...statuses.flatMap(mark)];
  const shown = room - 4; // a space, ▸ and an ellipsis at each end
  if (shown < 3) return [];
  const start = Math.max(0, Math.min(selected - Math.floor(shown / 2), statuses.length - shown));
  const end = start + shown;
  return [
    seg(' '),
    seg(start > 0 ? '…' : '', 'dim'),
    ...statuses.slice(start, end).flatMap((st, k) => mark(st, start + k)),
    seg(end < statuses.length ? '…' : '', 'dim'),
  ];
}

/**
 * The test point panel: the point shown (the next not yet achieved, or the one stepped to with n/p), its targets
 * with the present deviation from each, the hold timer, and a mark per point of the card (✓ achieved, ~ partly
 * held, · not yet).
 */
export function buildCardPanel(input: ScreenInput, view: LiveCardView, stale: boolean, rect: Rect): Panel {
  const { width, height } = innerSize(rect);
  const p = view.point;
  const u = input.units;
  const dev = view.deviation;
  const devTone = (within: boolean | undefined): Tone =>
    stale ? 'stale' : dev === null ? 'dim' : within ? 'ok' : 'caution';
  const bankDev = signedWithUnit(dev?.bankDeg ?? null, 1, '°');
  const tasDev =
    dev?.tasMps === null || dev === null
      ? '—'
      : `${formatSigned(speedFromMps(dev.tasMps, u), u === 'kmh' ? 0 : 1)} ${speedUnitLabel(u)}`;
  const targetBank = `${formatFixed(p.bank_deg, 1)}°`;
  const targetTas = formatSpeed(p.tas_mps, u);

  let hold: Line;
  if (view.holdNowS !== null) {
    hold = [
      seg(
        `held ${formatFixed(view.holdNowS, 1)} of ${formatFixed(p.hold_s, 1)} s`,
        view.status === 'achieved' ? 'ok' : stale ? 'stale' : 'plain',
      ),
    ];
    if (view.status === 'achieved') hold.push(seg(' ACHIEVED', 'ok'));
  } else if (view.status === 'achieved') {
    hold = [seg('ACHIEVED', 'ok'), seg(` · held ${formatFixed(view.longestHoldS, 1)} s`, 'dim')];
  } else if (view.status === 'partial') {
    hold = [
      seg('not held', 'caution'),
      seg(` · best ${formatFixed(view.longestHoldS, 1)} of ${formatFixed(p.hold_s, 1)} s`, 'dim'),
    ];
  } else {
    hold = [seg('not held', 'caution'), seg(` · hold ${formatFixed(p.hold_s, 1)} s`, 'dim')];
  }
  const marks = cardMarks(view.statuses, view.selected, width - lineWidth(hold) - 1);
  const holdLine =
    marks.length > 0 ? [...hold, seg(' '.repeat(width - lineWidth(hold) - lineWidth(marks))), ...marks] : hold;

  const lines: Line[] = [];
  if (height >= 3) {
    lines.push(
      fitLine(
        [
          seg('bank ', 'dim'),
          seg(targetBank.padEnd(7), 'heading'),
          seg(`±${formatFixed(p.tolerance.bank_deg, 1)}°`.padEnd(7), 'dim'),
          seg('now ', 'dim'),
          seg(
            deg(dev === null || dev.bankDeg === null ? null : dev.bankDeg + p.bank_deg).padEnd(7),
            stale ? 'stale' : 'plain',
          ),
          seg('Δ ', 'dim'),
          seg(bankDev, devTone(dev?.bankWithin)),
        ],
        width,
      ),
    );
    lines.push(
      fitLine(
        [
          seg('TAS  ', 'dim'),
          seg(targetTas.padEnd(10), 'heading'),
          seg(`±${formatSpeed(p.tolerance.tas_mps, u)}`.padEnd(11), 'dim'),
          seg('Δ ', 'dim'),
          seg(tasDev, devTone(dev?.tasWithin)),
        ],
        width,
      ),
    );
  } else {
    // One line: the unit of the speeds once, at the end.
    const tasDevShort =
      dev === null || dev.tasMps === null ? '—' : formatSigned(speedFromMps(dev.tasMps, u), u === 'kmh' ? 0 : 1);
    lines.push(
      fitLine(
        [
          seg('bank ', 'dim'),
          seg(targetBank, 'heading'),
          seg(' Δ ', 'dim'),
          seg(bankDev, devTone(dev?.bankWithin)),
          seg(' · TAS ', 'dim'),
          seg(formatFixed(speedFromMps(p.tas_mps, u), u === 'kmh' ? 0 : 1), 'heading'),
          seg(' Δ ', 'dim'),
          seg(tasDevShort, devTone(dev?.tasWithin)),
          seg(` ${speedUnitLabel(u)}`, 'dim'),
        ],
        width,
      ),
    );
  }
  lines.push(fitLine(holdLine, width));
  const title =
    view.achievedCount === view.total
      ? `Test points: all ${view.total} achieved · ${p.id} shown`
      : `Test point ${p.id} · ${view.achievedCount}/${view.total} achieved`;
  return {
    title: fitTitle(title, rect.width),
    tone: stale ? 'stale' : 'plain',
    lines: lines.slice(0, Math.max(0, height)),
  };
}
