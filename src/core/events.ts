/**
 * Limit events: one contiguous interval in which one (limit, level) alert is on. start_s is the time of the first
 * frame on. An event ends in one of two ways, recorded in `ended_by`:
 * - "cleared": the alert went off. end_s is the start of the clear stretch that turned it off (`clear_since_s` of
 *   the alert on the record before), or, without one, the time of the first frame off.
 * - a break in the data ("data_gap", "link_lost", "seek", "clock_restart", "end_of_data"): end_s is the start of an
 *   unfinished clear stretch if one was running, else the time of the last frame before the break.
 * A warning interval lies inside its caution interval; both are reported as separate events. Events never span a
 * break: the frame engine (src/engine/frame-engine.ts) decides where breaks are and calls closeOpen.
 */
import type { ActiveAlert, AlertLevel, MarginRecord } from './margin-record.js';
import { marginValuesOf, MarginValues } from './margin-values.js';
import type { LimitName } from './performance.js';

/** What ended a data stretch (a break): every open event ends there. */
export type BreakKind = 'data_gap' | 'link_lost' | 'seek' | 'clock_restart' | 'end_of_data';
/** What ended an event: its alert went off, or a break. */
export type EndedBy = 'cleared' | BreakKind;

export const BREAK_KINDS: readonly BreakKind[] = ['data_gap', 'link_lost', 'seek', 'clock_restart', 'end_of_data'];

export interface LimitEvent {
  limit: LimitName;
  level: AlertLevel;
  start_s: number;
  end_s: number;
  duration_s: number;
  /**
   * Highest utilization of the limit while the alert was on. Frames where n_thrust = 0 (level flight not
   * sustainable) have no utilization; an event made only of such frames reports Infinity (null in JSON).
   */
  peak_utilization: number;
  peak_t_s: number;
  /** TAS at the peak, m/s. */
  speed_at_peak_mps: number;
  /** n_measured at the peak. */
  n_at_peak: number;
  /** true while the alert is still on (end_s and duration_s are then those of the latest frame). */
  open: boolean;
  /** What ended the event; null while it is open. */
  ended_by: EndedBy | null;
  /** The lowest time_to_stall_caution_s of the event's frames (0: the stall caution was reached), or null. */
  min_time_to_stall_caution_s: number | null;
}

/**
 * An alert as the margin tracker reports it. `clear_since_s` (the t_s of the first frame of a clear stretch that is
 * running) is present only while such a stretch runs; read here when present.
 */
type AlertWithClear = ActiveAlert & { clear_since_s?: number };

export interface EventChanges {
  started: LimitEvent[];
  ended: LimitEvent[];
}

export interface EventTracker {
  /** Feed the next record; returns the events that started and ended at it (the same empty object when none). */
  push(rec: MarginRecord): Readonly<EventChanges>;
  /** push for the frame engine's values of the next frame. */
  pushValues(v: MarginValues): Readonly<EventChanges>;
  /** Closes open events at a break (see the rules above) and returns all events. */
  finish(endedBy?: BreakKind): LimitEvent[];
  /**
   * Closes open events at a break and returns them, but keeps tracking. An alert still on after the break starts a
   * new event.
   */
  closeOpen(endedBy: BreakKind): LimitEvent[];
  /** All events so far, in order of start (open ones included). */
  events(): readonly LimitEvent[];
}

/** The utilization an event's peak is measured on (NaN for none); n_thrust = 0 counts as unbounded. */
function valuesEventUtilization(v: MarginValues, limit: LimitName): number {
  const u =
    limit === 'stall' ? v.uStall : limit === 'thrust' ? v.uThrust : limit === 'structure' ? v.uStructure : v.uSpeed;
  if (u === u) return u;
  if (limit === 'thrust' && v.nThrust === 0 && v.flying) return Number.POSITIVE_INFINITY;
  return Number.NaN;
}

function startEvent(v: MarginValues, limit: LimitName, level: AlertLevel): LimitEvent {
  const u = valuesEventUtilization(v, limit);
  return {
    limit,
    level,
    start_s: v.tS,
    end_s: v.tS,
    duration_s: 0,
    peak_utilization: u === u ? u : Number.NEGATIVE_INFINITY,
    peak_t_s: v.tS,
    speed_at_peak_mps: v.tasMps,
    n_at_peak: v.nMeasured,
    open: true,
    ended_by: null,
    min_time_to_stall_caution_s: v.timeToStallCautionS === v.timeToStallCautionS ? v.timeToStallCautionS : null,
  };
}

/** A finite utilization beats the stand-ins (Infinity for n_thrust = 0, −Infinity for none), so peaks agree with the records. */
function isNewPeak(u: number, peak: number): boolean {
  if (u !== u) return false;
  if (Number.isFinite(peak)) return Number.isFinite(u) && u > peak;
  return Number.isFinite(u) || u > peak;
}

function extendEvent(event: LimitEvent, v: MarginValues): void {
  event.end_s = v.tS;
  event.duration_s = v.tS - event.start_s;
  const toStall = v.timeToStallCautionS;
  if (
    toStall === toStall &&
    (event.min_time_to_stall_caution_s === null || toStall < event.min_time_to_stall_caution_s)
  )
    event.min_time_to_stall_caution_s = toStall;
  const u = valuesEventUtilization(v, event.limit);
  if (isNewPeak(u, event.peak_utilization)) {
    event.peak_utilization = u;
    event.peak_t_s = v.tS;
    event.speed_at_peak_mps = v.tasMps;
    event.n_at_peak = v.nMeasured;
  }
}

function closeEvent(event: LimitEvent, endS: number, endedBy: EndedBy): void {
  event.end_s = endS;
  event.duration_s = endS - event.start_s;
  event.open = false;
  event.ended_by = endedBy;
}

/** An open event and the clear stretch its alert had on the latest record. */
interface OpenEntry {
  event: LimitEvent;
  clearSinceS: number | undefined;
}

const NO_CHANGE: Readonly<EventChanges> = Object.freeze({ started: [], ended: [] });

export function createEventTracker(): EventTracker {
  const all: LimitEvent[] = [];
  // Few alerts exist (one per limit and level): a short array beats a map on the per-frame path.
  let open: OpenEntry[] = [];
  // The last record's t_s in a typed array (NaN before any): a double stored in a closure variable is boxed.
  const lastTS = new Float64Array(1).fill(Number.NaN);
  const closeOpen = (endedBy: BreakKind): LimitEvent[] => {
    const closed: LimitEvent[] = [];
    for (const entry of open) {
      closeEvent(entry.event, entry.clearSinceS ?? (lastTS[0] === lastTS[0] ? lastTS[0]! : entry.event.end_s), endedBy);
      closed.push(entry.event);
    }
    open = [];
    return closed;
  };
  const scratch = new MarginValues();
  const tracker: EventTracker = {
    push: (rec) => tracker.pushValues(marginValuesOf(rec, scratch)),
    pushValues(v) {
      lastTS[0] = v.tS;
      const alerts = v.alerts as readonly AlertWithClear[];
      // Most frames: no alert on and none open.
      if (open.length === 0 && alerts.length === 0) return NO_CHANGE;
      let ended: LimitEvent[] | undefined;
      const still: OpenEntry[] = [];
      for (const entry of open) {
        const on = alerts.find((a) => a.limit === entry.event.limit && a.level === entry.event.level);
        if (on === undefined) {
          closeEvent(entry.event, entry.clearSinceS ?? v.tS, 'cleared');
          (ended ??= []).push(entry.event);
        } else {
          still.push(entry);
        }
      }
      open = still;
      let started: LimitEvent[] | undefined;
      // Cautions first, so a warning starting with its caution is listed after it.
      for (const level of ['caution', 'warning'] as const) {
        for (const alert of alerts) {
          if (alert.level !== level) continue;
          const entry = open.find((e) => e.event.limit === alert.limit && e.event.level === level);
          if (entry) {
            extendEvent(entry.event, v);
            entry.clearSinceS = alert.clear_since_s;
          } else {
            const event = startEvent(v, alert.limit, level);
            open.push({ event, clearSinceS: alert.clear_since_s });
            all.push(event);
            (started ??= []).push(event);
          }
        }
      }
      return started || ended ? { started: started ?? [], ended: ended ?? [] } : NO_CHANGE;
    },
    closeOpen,
    finish(endedBy = 'end_of_data') {
      closeOpen(endedBy);
      return all;
    },
    events() {
      return all;
    },
  };
  return tracker;
}
