/**
 * The review of a recorded flight, accumulated frame by frame in bounded memory: limit events, peaks, time in
 * each level, counters, the first rejected lines, flight conditions and an evenly spread sample of points for
 * the n–V plot. Pure: the shell reads the file and feeds accepted frames and rejected lines in file order.
 * The records, events and breaks come from the frame engine (src/engine/frame-engine.ts); this module only sums
 * them up.
 */
import { createFrameEngine, type DataBreak, type FrameMarks } from './frame-engine.js';
import type { Aircraft } from './aircraft.js';
import { createAssumptionCounter } from './assumptions.js';
import { createDecimator, median } from './decimate.js';
import type { BreakKind, LimitEvent } from './events.js';
import type { Frame } from './frame.js';
import { resolveMarginOptions, type MarginOptions } from './margins.js';
import type { Assumption, Level, MarginRecord } from './margin-record.js';
import { orNull, type MarginValues } from './margin-values.js';
import type { LimitName } from './performance.js';
import { createModelCheckAccumulator, type ModelCheck } from './model-check.js';
import { createTimeHistory, type TimeHistory } from './time-history.js';

/** Rejected lines kept for the report (the count covers all). */
export const MAX_REJECTS_KEPT = 100;
/** Points kept per level for the plot, and frames kept for the medians. */
export const PLOT_POINTS_PER_LEVEL = 1500;
export const CONDITION_SAMPLES = 2048;

/** A rejected line as the decoder or the engine reports it: words and a stable code. */
export interface RejectionInfo {
  reason: string;
  code: string;
  key?: string;
  got?: unknown;
}

export interface RejectedLine {
  line: number;
  reason: string;
  code: string;
  key?: string;
  got?: string;
}

export interface Peak {
  /** Highest utilization of the limit over the flight (flying frames), or null when never defined. */
  utilization: number | null;
  t_s: number | null;
}

export interface PlotPoint {
  tasMps: number;
  n: number;
  level: Level;
}

export interface Range {
  min: number;
  max: number;
}

export interface FlightConditions {
  altitudeM: Range | null;
  tasMps: Range | null;
  nMeasured: Range | null;
  temperatureK: Range | null;
  medianDensityKgM3: number | null;
  medianMassKg: number | null;
  /** Frames below 0.5·Vs1 (not flying: no alerts raised). */
  notFlyingFrames: number;
  /** Time flagged uncoordinated (n_measured against 1/cos(bank)), s. */
  uncoordinatedS: number;
  /** Intervals between accepted frames longer than 1 s: count and total, s (not in time_in_level). */
  gaps: number;
  gapS: number;
  /** Stretches of data between restarts of the sender's clock and reconnects (the computation restarted). */
  segments: number;
  /** Breaks in the data by kind (gaps, reconnects, clock restarts, the end of the data). */
  breaks: Record<BreakKind, number>;
}

export interface FlightReview {
  frames: number;
  accepted: number;
  rejected: number;
  rejects: RejectedLine[];
  durationS: number;
  firstTS: number | null;
  lastTS: number | null;
  events: LimitEvent[];
  /** Events still on at the last frame (closed there by the end of the data). */
  onAtEnd: LimitEvent[];
  peaks: Record<LimitName, Peak>;
  timeInLevelS: Record<Level, number>;
  conditions: FlightConditions;
  plotPoints: PlotPoint[];
  /** Accepted frames the plot sample was drawn from. */
  plotPointsOf: number;
  options: MarginOptions;
  /** Every series against time, reduced for drawing (min and max per bucket); null when not asked for. */
  timeHistory: TimeHistory | null;
  /** Share of the accepted frames (0…1) in which each input was assumed; null without frames. */
  assumedShare: Record<Assumption, number | null>;
  /** Measured against modelled Ps at full throttle and at idle. */
  modelCheck: ModelCheck;
}

/** Each level's slot in the reviewer's time at level. */
const LEVEL_SLOT: Readonly<Record<Level, number>> = { normal: 0, caution: 1, warning: 2 };

/** Slots of the reviewer's ranges. */
const ALT_MIN = 0;
const ALT_MAX = 1;
const TAS_MIN = 2;
const TAS_MAX = 3;
const N_MIN = 4;
const N_MAX = 5;
const TEMP_MIN = 6;
const TEMP_MAX = 7;

/**
 * The peaks as numbers while the flight is read: utilization and time per limit, at PEAK_SLOT[limit] and the slot
 * after it, NaN while none. A typed array: a number stored in an object field that also holds null is boxed.
 */
const PEAK_SLOT = { stall: 0, thrust: 2, structure: 4, speed: 6 } as const satisfies Record<LimitName, number>;

/** The peak at `slot` raised to the utilization (NaN: none) when it is higher (or the first defined). */
function raisePeak(peaks: Float64Array, slot: number, utilization: number, tS: number): void {
  const peak = peaks[slot]!;
  if (utilization === utilization && (peak !== peak || utilization > peak)) {
    peaks[slot] = utilization;
    peaks[slot + 1] = tS;
  }
}

function peakOf(peaks: Float64Array, slot: number): Peak {
  return { utilization: orNull(peaks[slot]!), t_s: orNull(peaks[slot + 1]!) };
}

export interface FlightReviewer {
  /**
   * accept without making the record: true when the engine took the frame (its numbers are then in `values()`),
   * false when it refused it (counted as a rejected line). For callers that need no record.
   */
  advance(frame: Frame, marks?: FrameMarks, lineNo?: number): boolean;
  /** The engine's numbers of the last accepted frame (written over at each frame). */
  values(): Readonly<MarginValues>;
  /** The margin record of the last accepted frame. */
  record(): MarginRecord;
  /**
   * The margin record of the next accepted frame (the marks tell of a clock restart or a reconnect before it), or
   * null when the engine refused the frame: it is then counted as a rejected line, `lineNo` naming it.
   */
  accept(frame: Frame, marks?: FrameMarks, lineNo?: number): MarginRecord | null;
  reject(lineNo: number, rejected: RejectionInfo): void;
  /** A break the reader found on a line that is not an accepted frame (a reconnect before a rejected line). */
  breakData(kind: BreakKind): void;
  /** Counts of lines read so far. */
  counts(): { frames: number; accepted: number; rejected: number };
  finish(): FlightReview;
}

export interface FlightReviewListener {
  /** Each break, with its kind and the t_s of the last frame before it (for marks on a time history). */
  dataBreak?(brk: DataBreak): void;
}

/** What a review keeps beyond its sums. */
export interface FlightReviewParts {
  /**
   * Keep the time history (default true). Only the HTML report draws it, and it costs a tenth of the review's
   * per-frame work: the other reports turn it off.
   */
  timeHistory?: boolean;
}

export function createFlightReviewer(
  aircraft: Aircraft,
  options?: Partial<MarginOptions>,
  listener: FlightReviewListener = {},
  parts: FlightReviewParts = {},
): FlightReviewer {
  const resolved = resolveMarginOptions(aircraft, options);
  const rejects: RejectedLine[] = [];
  let rejected = 0;
  let accepted = 0;
  // Summed every frame: a typed array, as a double stored in a closure variable is boxed at every store.
  const duration = new Float64Array(1);
  let firstTS: number | null = null;
  // The previous accepted frame's time (NaN before any), level and coordination: an interval counts at the level
  // of the frame that begins it.
  const previousTS = new Float64Array(1).fill(Number.NaN);
  let previousLevel: Level = 'normal';
  let previousUncoordinated = false;
  /** The break between the previous record and the next one, if any. */
  let pendingBreak: BreakKind | null = null;
  const onAtEnd: LimitEvent[] = [];
  const peakValues = new Float64Array(8).fill(Number.NaN);
  const assumed = createAssumptionCounter();
  // Seconds at each level (LEVEL_SLOT order), summed every frame: a typed array, not an object's fields.
  const levelS = new Float64Array(3);
  const conditions: FlightConditions = {
    altitudeM: null,
    tasMps: null,
    nMeasured: null,
    temperatureK: null,
    medianDensityKgM3: null,
    medianMassKg: null,
    notFlyingFrames: 0,
    uncoordinatedS: 0,
    gaps: 0,
    gapS: 0,
    segments: 0,
    breaks: { data_gap: 0, link_lost: 0, seek: 0, clock_restart: 0, end_of_data: 0 },
  };
  const plot: Record<Level, ReturnType<typeof createDecimator<PlotPoint>>> = {
    normal: createDecimator(PLOT_POINTS_PER_LEVEL),
    caution: createDecimator(PLOT_POINTS_PER_LEVEL),
    warning: createDecimator(PLOT_POINTS_PER_LEVEL),
  };
  const history = parts.timeHistory === false ? null : createTimeHistory();
  const modelCheck = createModelCheckAccumulator(aircraft, resolved.assumeThrottle);
  const conditionSamples = createDecimator<{ densityKgM3: number; massKg: number }>(CONDITION_SAMPLES);
  // The ranges' ends (min, max of altitude, TAS, n and temperature) in a typed array: a double stored in a closure
  // variable is boxed at every store.
  const ranges = new Float64Array([
    Number.POSITIVE_INFINITY,
    Number.NEGATIVE_INFINITY,
    Number.POSITIVE_INFINITY,
    Number.NEGATIVE_INFINITY,
    Number.POSITIVE_INFINITY,
    Number.NEGATIVE_INFINITY,
    Number.POSITIVE_INFINITY,
    Number.NEGATIVE_INFINITY,
  ]);
  const engine = createFrameEngine(aircraft, resolved, {
    dataBreak(brk) {
      pendingBreak = brk.kind;
      conditions.breaks[brk.kind] += 1;
      listener.dataBreak?.(brk);
    },
    eventEnded(ev) {
      if (ev.ended_by === 'end_of_data') onAtEnd.push(ev);
    },
  });

  const reject = (lineNo: number, r: RejectionInfo): void => {
    rejected += 1;
    if (rejects.length < MAX_REJECTS_KEPT) {
      const line: RejectedLine = { line: lineNo, reason: r.reason, code: r.code };
      if (r.key !== undefined) line.key = r.key;
      if (r.got !== undefined) line.got = typeof r.got === 'string' ? r.got : JSON.stringify(r.got);
      rejects.push(line);
    }
  };

  const v = engine.values as MarginValues;
  const advance = (frame: Frame, marks?: FrameMarks, lineNo = 0): boolean => {
    if (!engine.advance(frame, marks)) {
      const why = engine.rejection()!;
      reject(lineNo, why);
      return false;
    }
    const tS = v.tS;
    if (accepted === 0) {
      conditions.segments = 1;
    } else if (pendingBreak === null || pendingBreak === 'data_gap') {
      const dtS = tS - previousTS[0]!;
      duration[0] = duration[0]! + dtS;
      if (pendingBreak === 'data_gap') {
        conditions.gaps += 1;
        conditions.gapS += dtS;
      } else {
        // Each interval counts at the level of the frame that begins it.
        const slot = LEVEL_SLOT[previousLevel];
        levelS[slot] = levelS[slot]! + dtS;
        if (previousUncoordinated) conditions.uncoordinatedS += dtS;
      }
    } else {
      // A new stretch of data (clock restart, reconnect): no interval across it.
      conditions.segments += 1;
    }
    history?.pushValues(v, pendingBreak === null ? undefined : pendingBreak === 'end_of_data' ? 'other' : pendingBreak);
    pendingBreak = null;

    raisePeak(peakValues, PEAK_SLOT.stall, v.uStall, tS);
    raisePeak(peakValues, PEAK_SLOT.thrust, v.uThrust, tS);
    raisePeak(peakValues, PEAK_SLOT.structure, v.uStructure, tS);
    raisePeak(peakValues, PEAK_SLOT.speed, v.uSpeed, tS);
    assumed.push(v);
    modelCheck.pushValues(v);
    // Plain numbers on the per-frame path; the ranges are made at finish.
    const altM = v.altM;
    const tasMps = v.tasMps;
    const nF = v.nMeasured;
    const temperatureK = v.temperatureK;
    if (altM < ranges[ALT_MIN]!) ranges[ALT_MIN] = altM;
    if (altM > ranges[ALT_MAX]!) ranges[ALT_MAX] = altM;
    if (tasMps < ranges[TAS_MIN]!) ranges[TAS_MIN] = tasMps;
    if (tasMps > ranges[TAS_MAX]!) ranges[TAS_MAX] = tasMps;
    if (nF < ranges[N_MIN]!) ranges[N_MIN] = nF;
    if (nF > ranges[N_MAX]!) ranges[N_MAX] = nF;
    if (temperatureK < ranges[TEMP_MIN]!) ranges[TEMP_MIN] = temperatureK;
    if (temperatureK > ranges[TEMP_MAX]!) ranges[TEMP_MAX] = temperatureK;
    if (!v.flying) conditions.notFlyingFrames += 1;
    // Sample objects only for the items the decimators keep.
    if (conditionSamples.keepsNext()) conditionSamples.push({ densityKgM3: v.densityKgM3, massKg: v.massKg });
    else conditionSamples.skip();
    const level = v.level;
    const levelPlot = plot[level];
    if (levelPlot.keepsNext()) levelPlot.push({ tasMps, n: nF, level });
    else levelPlot.skip();

    if (accepted === 0) firstTS = tS;
    accepted += 1;
    previousTS[0] = tS;
    previousLevel = level;
    previousUncoordinated = v.uncoordinated;
    return true;
  };

  return {
    advance,
    values: () => v,
    record: () => engine.record(),
    accept: (frame, marks, lineNo) => (advance(frame, marks, lineNo) ? engine.record() : null),
    reject,
    breakData: (kind) => engine.breakData(kind),
    counts: () => ({ frames: accepted + rejected, accepted, rejected }),
    finish() {
      const events = engine.finish();
      const range = (min: number, max: number): Range | null => (accepted > 0 ? { min, max } : null);
      conditions.altitudeM = range(ranges[ALT_MIN]!, ranges[ALT_MAX]!);
      conditions.tasMps = range(ranges[TAS_MIN]!, ranges[TAS_MAX]!);
      conditions.nMeasured = range(ranges[N_MIN]!, ranges[N_MAX]!);
      conditions.temperatureK = range(ranges[TEMP_MIN]!, ranges[TEMP_MAX]!);
      const samples = conditionSamples.items();
      conditions.medianDensityKgM3 = median(samples.map((s) => s.densityKgM3));
      conditions.medianMassKg = median(samples.map((s) => s.massKg));
      return {
        frames: accepted + rejected,
        accepted,
        rejected,
        rejects,
        durationS: duration[0]!,
        firstTS,
        lastTS: accepted > 0 ? previousTS[0]! : null,
        events,
        onAtEnd,
        peaks: {
          stall: peakOf(peakValues, PEAK_SLOT.stall),
          thrust: peakOf(peakValues, PEAK_SLOT.thrust),
          structure: peakOf(peakValues, PEAK_SLOT.structure),
          speed: peakOf(peakValues, PEAK_SLOT.speed),
        },
        timeInLevelS: { normal: levelS[0]!, caution: levelS[1]!, warning: levelS[2]! },
        conditions,
        plotPoints: [...plot.normal.items(), ...plot.caution.items(), ...plot.warning.items()],
        plotPointsOf: accepted,
        options: resolved,
        timeHistory: history?.finish() ?? null,
        assumedShare: assumed.shares(),
        modelCheck: modelCheck.finish(),
      };
    },
  };
}
