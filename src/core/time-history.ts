/**
 * Time histories of a flight for drawing, in bounded memory whatever the flight's length: every series is kept as
 * the minimum and the maximum of each time bucket (with the times at which they occurred), so no peak disappears
 * when a long flight is reduced. There are at most MAX_BUCKETS buckets; when the flight outgrows them the bucket
 * width doubles and neighbouring buckets merge, so the length need not be known in advance. Breaks in the data
 * (gaps, clock restarts, link losses) and the alert levels on are kept per bucket too. Pure: the reviewer feeds
 * margin records in order.
 */
import type { MarginRecord } from './margin-record.js';
import { createAssumptionCounter } from './assumptions.js';
import { marginValuesOf, MarginValues } from './margin-values.js';

/** Buckets kept at most: two points (min and max) each, so at most 2 000 points per series. */
export const MAX_BUCKETS = 1000;
/** The first bucket width, s (halved no further: 1/1024 s is finer than any telemetry rate the tool takes). */
const FIRST_BUCKET_S = 1 / 1024;

export type SeriesName =
  | 'u_stall'
  | 'u_thrust'
  | 'u_structure'
  | 'u_speed'
  | 'tas_mps'
  | 'cas_mps'
  | 'n_measured'
  | 'n_from_bank'
  | 'bank_deg'
  | 'alt_m'
  | 'ps_mps'
  | 'ps_model_mps';

export const SERIES_NAMES: readonly SeriesName[] = [
  'u_stall',
  'u_thrust',
  'u_structure',
  'u_speed',
  'tas_mps',
  'cas_mps',
  'n_measured',
  'n_from_bank',
  'bank_deg',
  'alt_m',
  'ps_mps',
  'ps_model_mps',
];

export type BreakKind = 'data_gap' | 'clock_restart' | 'link_lost' | 'seek' | 'other';
const BREAK_BITS: Record<BreakKind, number> = { data_gap: 1, clock_restart: 2, link_lost: 4, seek: 8, other: 16 };
export const BREAK_KINDS = Object.keys(BREAK_BITS) as BreakKind[];

/** Alert bits per bucket: caution and warning of each limit (a warning sets its caution bit too). */
export const ALERT_LIMITS = ['stall', 'thrust', 'structure', 'speed'] as const;
export type AlertLimit = (typeof ALERT_LIMITS)[number];
export function alertBit(limit: AlertLimit, level: 'caution' | 'warning'): number {
  return 1 << (ALERT_LIMITS.indexOf(limit) * 2 + (level === 'warning' ? 1 : 0));
}

/** One series after reduction: per bucket min and max and their times; NaN where the bucket holds no value. */
export interface ReducedSeries {
  min: Float64Array;
  max: Float64Array;
  tMin: Float64Array;
  tMax: Float64Array;
  /** Values seen (frames where the series was defined). */
  count: number;
}

export interface TimeHistory {
  /** Time of the first frame on the drawing axis, s, and the bucket width, s. */
  t0S: number;
  bucketS: number;
  /** Buckets in use (the last one holds the last frame). */
  buckets: number;
  /** Frames pushed. */
  frames: number;
  /** Last time on the drawing axis, s. */
  lastS: number;
  /** Present only for series that had at least one value. */
  series: Partial<Record<SeriesName, ReducedSeries>>;
  /** Per bucket: the OR of BREAK_BITS of the breaks just before a frame of the bucket. */
  breaks: Uint8Array;
  breakCounts: Record<BreakKind, number>;
  /** Per bucket: the OR of alertBit() of the alerts on in its frames. */
  alerts: Uint8Array;
  /** Per bucket: the frames in it (a bucket with frames but no value of a series is a hole in that series). */
  frameCounts: Uint32Array;
  /**
   * Shift added to t_s to place a frame on the axis: 0 until a clock restart, after which the next frames are
   * placed right after the last one (the axis never runs back). Non-zero only when the clock restarted.
   */
  axisShiftS: number;
  /** Frames carrying each `assumed` flag (records without flags count nowhere). */
  assumedFrames: Record<string, number>;
  /** Whether the series were reduced: some bucket held more than two frames (two are both drawn). */
  reduced: boolean;
}

export interface TimeHistoryAccumulator {
  /** Feed the next record; `breakBefore` when a break lies between the previous frame and this one. */
  push(rec: MarginRecord, breakBefore?: BreakKind): void;
  /** push for the frame engine's values of the next frame. */
  pushValues(v: MarginValues, breakBefore?: BreakKind): void;
  finish(): TimeHistory;
}

function newSeries(): ReducedSeries {
  const s: ReducedSeries = {
    min: new Float64Array(MAX_BUCKETS).fill(Number.NaN),
    max: new Float64Array(MAX_BUCKETS).fill(Number.NaN),
    tMin: new Float64Array(MAX_BUCKETS).fill(Number.NaN),
    tMax: new Float64Array(MAX_BUCKETS).fill(Number.NaN),
    count: 0,
  };
  return s;
}

/** Merge bucket pairs (2i, 2i+1) into i: the width doubles. */
function halve(s: ReducedSeries, used: number): void {
  for (let i = 0; i < Math.ceil(used / 2); i++) {
    const a = 2 * i;
    const b = a + 1;
    let min = s.min[a]!;
    let tMin = s.tMin[a]!;
    let max = s.max[a]!;
    let tMax = s.tMax[a]!;
    if (b < used) {
      const bMin = s.min[b]!;
      const bMax = s.max[b]!;
      if (!(bMin >= min)) {
        if (!Number.isNaN(bMin)) {
          min = bMin;
          tMin = s.tMin[b]!;
        }
      }
      if (!(bMax <= max)) {
        if (!Number.isNaN(bMax)) {
          max = bMax;
          tMax = s.tMax[b]!;
        }
      }
    }
    s.min[i] = min;
    s.tMin[i] = tMin;
    s.max[i] = max;
    s.tMax[i] = tMax;
  }
  s.min.fill(Number.NaN, Math.ceil(used / 2));
  s.max.fill(Number.NaN, Math.ceil(used / 2));
  s.tMin.fill(Number.NaN, Math.ceil(used / 2));
  s.tMax.fill(Number.NaN, Math.ceil(used / 2));
}

function orHalve(bits: Uint8Array, used: number): void {
  for (let i = 0; i < Math.ceil(used / 2); i++) bits[i] = bits[2 * i]! | (2 * i + 1 < used ? bits[2 * i + 1]! : 0);
  bits.fill(0, Math.ceil(used / 2));
}

/** Slots of a series in the running bucket: its min, the time of the min, its max, the time of the max. */
const CUR_MIN = 0;
const CUR_T_MIN = 1;
const CUR_MAX = 2;
const CUR_T_MAX = 3;

export function createTimeHistory(): TimeHistoryAccumulator {
  const seriesCount = SERIES_NAMES.length;
  // Every series' buckets, in place for its whole life: made now (a few hundred kB), kept only if it had a value.
  const all: ReducedSeries[] = SERIES_NAMES.map(() => newSeries());
  const breaks = new Uint8Array(MAX_BUCKETS);
  const alerts = new Uint8Array(MAX_BUCKETS);
  const breakCounts: Record<BreakKind, number> = { data_gap: 0, clock_restart: 0, link_lost: 0, seek: 0, other: 0 };
  const assumedCounter = createAssumptionCounter();
  let t0S = Number.NaN;
  let bucketS = FIRST_BUCKET_S;
  let used = 0;
  let frames = 0;
  // The last frame's axis time and t_s, stored every frame: in a typed array, as a double stored in a closure
  // variable is boxed at every store.
  const last = new Float64Array(2).fill(Number.NaN);
  const LAST_S = 0;
  const LAST_TS = 1;
  let axisShiftS = 0;
  // Frames per bucket: the series are reduced once a bucket holds more than two (its min and max are drawn).
  const frameCounts = new Uint32Array(MAX_BUCKETS);
  // The bucket frames are going to (−1: none yet), with every series' min and max of it held here (CUR_* slots,
  // four per series) and written to the series when the frames move to another bucket: the per-frame work is a
  // few compares in one small array.
  let running = -1;
  const current = new Float64Array(4 * seriesCount);
  const counts = new Float64Array(seriesCount);
  const inputs = new Float64Array(seriesCount);
  const store = (): void => {
    if (running < 0) return;
    for (let k = 0; k < seriesCount; k++) {
      const s = all[k]!;
      s.min[running] = current[4 * k + CUR_MIN]!;
      s.tMin[running] = current[4 * k + CUR_T_MIN]!;
      s.max[running] = current[4 * k + CUR_MAX]!;
      s.tMax[running] = current[4 * k + CUR_T_MAX]!;
    }
  };
  const load = (bucket: number): void => {
    running = bucket;
    for (let k = 0; k < seriesCount; k++) {
      const s = all[k]!;
      current[4 * k + CUR_MIN] = s.min[bucket]!;
      current[4 * k + CUR_T_MIN] = s.tMin[bucket]!;
      current[4 * k + CUR_MAX] = s.max[bucket]!;
      current[4 * k + CUR_T_MAX] = s.tMax[bucket]!;
    }
  };

  const scratch = new MarginValues();
  const accumulator: TimeHistoryAccumulator = {
    push: (rec, breakBefore) => accumulator.pushValues(marginValuesOf(rec, scratch), breakBefore),
    pushValues(v, breakBefore) {
      const recTS = v.tS;
      const lastS = last[LAST_S]!;
      if (frames > 0 && recTS <= last[LAST_TS]!) {
        // The sender's clock ran back: keep the axis running forward from the last frame.
        axisShiftS = lastS - recTS + (lastS - t0S > 0 ? Math.min(1, (lastS - t0S) * 0.001) : 0);
        breakBefore ??= 'clock_restart';
      }
      const tS = recTS + axisShiftS;
      if (frames === 0) t0S = tS;
      let bucket = Math.floor((tS - t0S) / bucketS);
      if (bucket >= MAX_BUCKETS) {
        store();
        running = -1;
        while (bucket >= MAX_BUCKETS) {
          for (const s of all) halve(s, used);
          orHalve(breaks, used);
          orHalve(alerts, used);
          for (let i = 0; i < Math.ceil(used / 2); i++)
            frameCounts[i] = frameCounts[2 * i]! + (2 * i + 1 < used ? frameCounts[2 * i + 1]! : 0);
          frameCounts.fill(0, Math.ceil(used / 2));
          used = Math.ceil(used / 2);
          bucketS *= 2;
          bucket = Math.floor((tS - t0S) / bucketS);
        }
      }
      if (bucket !== running) {
        store();
        load(bucket);
      }
      frameCounts[bucket] = frameCounts[bucket]! + 1;
      if (bucket + 1 > used) used = bucket + 1;
      if (breakBefore !== undefined && frames > 0) {
        breaks[bucket] = breaks[bucket]! | BREAK_BITS[breakBefore];
        breakCounts[breakBefore] += 1;
      }
      const recAlerts = v.alerts;
      for (let i = 0; i < recAlerts.length; i++) {
        const a = recAlerts[i]!;
        if (!(ALERT_LIMITS as readonly string[]).includes(a.limit)) continue;
        const limit = a.limit as AlertLimit;
        alerts[bucket] = alerts[bucket]! | alertBit(limit, a.level) | alertBit(limit, 'caution');
      }
      // In SERIES_NAMES order.
      inputs[0] = v.uStall;
      inputs[1] = v.uThrust;
      inputs[2] = v.uStructure;
      inputs[3] = v.uSpeed;
      inputs[4] = v.tasMps;
      inputs[5] = v.casMps;
      inputs[6] = v.nMeasured;
      inputs[7] = v.nFromBank;
      inputs[8] = v.bankDeg;
      inputs[9] = v.altM;
      inputs[10] = v.psMps;
      inputs[11] = v.psModelMps;
      for (let k = 0; k < seriesCount; k++) {
        const value = inputs[k]!;
        // NaN (no value) and ±Infinity are not drawn.
        if (!(value - value === 0)) continue;
        counts[k] = counts[k]! + 1;
        const at = 4 * k;
        if (!(value >= current[at + CUR_MIN]!)) {
          current[at + CUR_MIN] = value;
          current[at + CUR_T_MIN] = tS;
        }
        if (!(value <= current[at + CUR_MAX]!)) {
          current[at + CUR_MAX] = value;
          current[at + CUR_T_MAX] = tS;
        }
      }
      assumedCounter.push(v);
      frames += 1;
      last[LAST_S] = tS;
      last[LAST_TS] = recTS;
    },
    finish() {
      store();
      // Copies of the used part only: the result crosses threads and goes into reports.
      const out: Partial<Record<SeriesName, ReducedSeries>> = {};
      SERIES_NAMES.forEach((name, k) => {
        const s = all[k]!;
        if (counts[k] === 0) return;
        out[name] = {
          min: s.min.slice(0, used),
          max: s.max.slice(0, used),
          tMin: s.tMin.slice(0, used),
          tMax: s.tMax.slice(0, used),
          count: counts[k]!,
        };
      });
      return {
        t0S: frames > 0 ? t0S : 0,
        bucketS,
        buckets: used,
        frames,
        lastS: frames > 0 ? last[LAST_S]! : 0,
        series: out,
        breaks: breaks.slice(0, used),
        breakCounts: { ...breakCounts },
        alerts: alerts.slice(0, used),
        frameCounts: frameCounts.slice(0, used),
        axisShiftS,
        // Only the flags some frame carried.
        assumedFrames: Object.fromEntries(Object.entries(assumedCounter.counts()).filter(([, n]) => n > 0)),
        reduced: frameCounts.some((c) => c > 2),
      };
    },
  };
  return accumulator;
}

/**
 * The points to draw for one series, in time order: per bucket its minimum and maximum, ordered by when they
 * occurred (one point when they are the same frame). `penUp` is true on a point drawn after a break, or after a
 * bucket whose frames all lacked this series (the modelled Ps at part throttle, say): no line is drawn across a
 * stretch without values. Buckets without frames (a rate slower than the bucket width) do not lift the pen.
 */
export function seriesPoints(history: TimeHistory, name: SeriesName): Array<{ tS: number; v: number; penUp: boolean }> {
  const s = history.series[name];
  if (!s) return [];
  const points: Array<{ tS: number; v: number; penUp: boolean }> = [];
  let breakPending = true;
  for (let i = 0; i < history.buckets; i++) {
    if (history.breaks[i]! !== 0) breakPending = true;
    const min = s.min[i]!;
    if (Number.isNaN(min)) {
      if (history.frameCounts[i]! > 0) breakPending = true;
      continue;
    }
    const max = s.max[i]!;
    const tMin = s.tMin[i]!;
    const tMax = s.tMax[i]!;
    if (tMin === tMax) {
      points.push({ tS: tMin, v: min, penUp: breakPending });
    } else if (tMin < tMax) {
      points.push({ tS: tMin, v: min, penUp: breakPending }, { tS: tMax, v: max, penUp: false });
    } else {
      points.push({ tS: tMax, v: max, penUp: breakPending }, { tS: tMin, v: min, penUp: false });
    }
    breakPending = false;
  }
  return points;
}
