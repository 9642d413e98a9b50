/**
 * The frame engine: the one place that turns accepted frames and breaks in the data into margin records and limit
 * events. Every path feeds it — the live pipeline (watch, replay, demo), review and check (main thread and worker),
 * serve sessions and the benchmarks — and none keeps its own copy of these rules:
 *
 * - A **break** is a gap in t_s over DATA_GAP_S between consecutive accepted frames, a link loss or reconnect
 *   (live, or the `#link` lines of a recording), a seek in a replay, a restart of the sender's clock (the decoder's
 *   5-frame rule, or any frame not later than the one before), and the end of the data.
 * - At a break the smoothing and the alert state restart (the margin tracker's reset) and every open event ends
 *   (see events.ts for where), with `ended_by` naming the break. Events never span a break.
 *
 * Pure apart from its own state: no I/O, no clock, so the review worker runs it too. Listeners hear of events and
 * breaks as they happen, synchronously, inside push/breakData/finish.
 */
import type { Aircraft } from './aircraft.js';
import { createEnergyTracker } from './energy-tracker.js';
import { createEventTracker, type BreakKind, type LimitEvent } from './events.js';
import { FILTER_RESTART_GAP_S, isOverGap } from './filter.js';
import type { Frame } from './frame.js';
import { createMarginTracker, marginRecordOf, resolveMarginOptions, type MarginOptions } from './margins.js';
import { MarginValues } from './margin-values.js';
import type { MarginRecord } from './margin-record.js';
import { rejectionWords, type Rejection } from '../decode/rejections.js';

export type { BreakKind, EndedBy, LimitEvent } from './events.js';

/** A longer interval between consecutive accepted frames is a break ("data_gap"), s. */
export const DATA_GAP_S = FILTER_RESTART_GAP_S;

/** A frame the engine refuses (physics out of range), reported exactly like a decoder's rejection. */
export type FrameRejection = Rejection & { reason: string };

/** A break in the data: what it was, and the t_s of the last accepted frame before it. */
export interface DataBreak {
  kind: BreakKind;
  t_s: number;
}

export interface EngineListener {
  eventStarted?(event: LimitEvent): void;
  /** An event ended (its alert went off, or a break). `ended_by` is set. */
  eventEnded?(event: LimitEvent): void;
  /** A break after at least one accepted frame (a break with no frame since the last one changes nothing). */
  dataBreak?(brk: DataBreak): void;
}

/** What the decoder or reader knows about a frame's place in the stream (a DecodedLine or FileLine fits). */
export interface FrameMarks {
  /** The sender's clock restarted (the decoder's 5-frame rule). */
  newSegment?: boolean;
  /** A reconnect happened just before this frame (a recording's `#link` lines). */
  afterReconnect?: boolean;
}

export interface FrameEngine {
  /**
   * push without making the record: true when the frame was accepted (its numbers are then in `values`), false when
   * refused. For callers that only sum the records up; `record()` makes the record when one is wanted.
   */
  advance(frame: Frame, marks?: FrameMarks): boolean;
  /** The numbers of the last accepted frame's record (one object, written over at each frame). */
  readonly values: Readonly<MarginValues>;
  /** The margin record of the last accepted frame (a new object at each call). */
  record(): MarginRecord;
  /**
   * The margin record of the next accepted frame, after any break it implies; null when the engine refuses the
   * frame (then `rejection()` says why, and nothing else changed).
   */
  push(frame: Frame, marks?: FrameMarks): MarginRecord | null;
  /** Why the last push returned null. */
  rejection(): FrameRejection | null;
  /** A break the caller knows of: link lost or reopened, a seek. */
  breakData(kind: BreakKind): void;
  /** The end of the data: open events end ("end_of_data"); returns every event. Tracking may continue after. */
  finish(): LimitEvent[];
  /** All events so far, in order of start (open ones included). */
  events(): readonly LimitEvent[];
  /** t_s of the last accepted frame since the last break, or null. */
  lastTS(): number | null;
  readonly options: MarginOptions;
}

export function createFrameEngine(
  aircraft: Aircraft,
  options?: Partial<MarginOptions>,
  listener: EngineListener = {},
): FrameEngine {
  const resolved = resolveMarginOptions(aircraft, options);
  const margins = createMarginTracker(aircraft, resolved);
  const energy = createEnergyTracker(aircraft, {
    rateWindowS: resolved.rateWindowS,
    thresholds: resolved.thresholds,
    speedBand: resolved.speedBand,
    ...(resolved.assumeThrottle !== undefined ? { assumeThrottle: resolved.assumeThrottle } : {}),
  });
  const events = createEventTracker();
  // t_s of the last accepted frame since the last break, NaN for none (a typed array: a double stored in a
  // closure variable is boxed at every store).
  const lastAt = new Float64Array(1).fill(Number.NaN);
  let refused: FrameRejection | null = null;

  const breakData = (kind: BreakKind): void => {
    const t_s = lastAt[0]!;
    if (t_s !== t_s) return;
    lastAt[0] = Number.NaN;
    margins.reset();
    energy.reset();
    const ended = events.closeOpen(kind);
    if (listener.eventEnded) for (const ev of ended) listener.eventEnded(ev);
    listener.dataBreak?.({ kind, t_s });
  };

  const values = new MarginValues();
  const advance = (frame: Frame, marks?: FrameMarks): boolean => {
    if (marks !== undefined) {
      if (marks.afterReconnect === true) breakData('link_lost');
      else if (marks.newSegment === true) breakData('clock_restart');
    }
    // A frame at or above Mach 1 is refused like a decoder's rejection; the words name the key and its value.
    const found = margins.rejection(frame);
    if (found !== null) {
      const r: Rejection = { code: found.code, key: found.key, got: String(found.got), detail: found.reason };
      refused = { ...r, reason: rejectionWords(r) };
      return false;
    }
    refused = null;
    const last = lastAt[0]!;
    if (last === last) {
      const dtS = frame.tS - last;
      if (!(dtS > 0)) breakData('clock_restart');
      else if (isOverGap(dtS, DATA_GAP_S, frame.tS)) breakData('data_gap');
    }
    margins.advance(frame, values);
    energy.fill(values);
    lastAt[0] = frame.tS;
    const change = events.pushValues(values);
    if (change.ended.length > 0 && listener.eventEnded) for (const ev of change.ended) listener.eventEnded(ev);
    if (change.started.length > 0 && listener.eventStarted) for (const ev of change.started) listener.eventStarted(ev);
    return true;
  };
  const record = (): MarginRecord => marginRecordOf(aircraft, resolved, values);

  return {
    advance,
    values,
    record,
    push: (frame, marks) => (advance(frame, marks) ? record() : null),
    rejection: () => refused,
    breakData,
    finish() {
      breakData('end_of_data');
      return events.events() as LimitEvent[];
    },
    events: () => events.events(),
    lastTS: () => (lastAt[0] === lastAt[0] ? lastAt[0]! : null),
    options: resolved,
  };
}
