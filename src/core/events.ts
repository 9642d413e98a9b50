/**
 * Limit events: one contiguous interval in which one (limit, level) alert is on. start_s is the time of the first
 * frame on; end_s the first frame of the clear stretch that switched the alert off (ActiveAlert.clear_since_s), or,
 * when the data end or break with the alert on, that of an unfinished clear stretch if one has begun, else the last
 * frame.
 * A warning interval lies inside its caution interval; both are reported as separate events.
 */
import type { AlertLevel, MarginRecord } from './margin-record.js';
import type { LimitName } from './performance.js';

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
}

export interface EventTracker {
  /** Feed the next record; returns the events that started and ended at it. */
  push(rec: MarginRecord): { started: LimitEvent[]; ended: LimitEvent[] };
  /** Closes open events at the last frame and returns all events. */
  finish(): LimitEvent[];
  /**
   * Closes open events at the last frame pushed and returns them, but keeps tracking: for a break in the data
   * (a reconnect, a restart of the sender's clock, a gap). An alert still on after the break starts a new event.
   */
  closeOpen(): LimitEvent[];
  /** All events so far, in order of start (open ones included). */
  events(): readonly LimitEvent[];
}

/** The utilization an event's peak is measured on; n_thrust = 0 counts as unbounded. */
export function eventUtilization(rec: MarginRecord, limit: LimitName): number | null {
  const u = rec.utilization[limit];
  if (u !== null) return u;
  if (limit === 'thrust' && rec.n_thrust === 0 && rec.flying) return Infinity;
  return null;
}

function keyOf(limit: LimitName, level: AlertLevel): string {
  return `${limit}:${level}`;
}

function startEvent(rec: MarginRecord, limit: LimitName, level: AlertLevel): LimitEvent {
  return {
    limit,
    level,
    start_s: rec.t_s,
    end_s: rec.t_s,
    duration_s: 0,
    peak_utilization: eventUtilization(rec, limit) ?? -Infinity,
    peak_t_s: rec.t_s,
    speed_at_peak_mps: rec.tas_mps,
    n_at_peak: rec.n_measured,
    open: true,
  };
}

/** A finite utilization beats the stand-ins (Infinity for n_thrust = 0, −Infinity for none), so peaks agree with the records. */
function isNewPeak(u: number | null, peak: number): u is number {
  if (u === null) return false;
  if (Number.isFinite(peak)) return Number.isFinite(u) && u > peak;
  return Number.isFinite(u) || u > peak;
}

function extendEvent(event: LimitEvent, rec: MarginRecord): void {
  event.end_s = rec.t_s;
  event.duration_s = rec.t_s - event.start_s;
  const u = eventUtilization(rec, event.limit);
  if (isNewPeak(u, event.peak_utilization)) {
    event.peak_utilization = u;
    event.peak_t_s = rec.t_s;
    event.speed_at_peak_mps = rec.tas_mps;
    event.n_at_peak = rec.n_measured;
  }
}

function closeEvent(event: LimitEvent, endS: number): void {
  event.end_s = endS;
  event.duration_s = endS - event.start_s;
  event.open = false;
}

export function createEventTracker(): EventTracker {
  const all: LimitEvent[] = [];
  const open = new Map<string, LimitEvent>();
  // Start of the running clear stretch of each open event (ActiveAlert.clear_since_s): the event ends there.
  const clearSince = new Map<string, number>();
  let lastTS: number | null = null;
  const closeOpen = (): LimitEvent[] => {
    const closed = [...open.entries()];
    for (const [key, event] of closed) closeEvent(event, clearSince.get(key) ?? lastTS ?? event.end_s);
    open.clear();
    clearSince.clear();
    return closed.map(([, event]) => event);
  };
  return {
    push(rec) {
      lastTS = rec.t_s;
      // Most frames: no alert on and none open.
      if (open.size === 0 && rec.alerts.length === 0) return { started: [], ended: [] };
      const ended: LimitEvent[] = [];
      const onNow = new Set(rec.alerts.map((a) => keyOf(a.limit, a.level)));
      for (const [key, event] of open) {
        if (!onNow.has(key)) {
          closeEvent(event, clearSince.get(key) ?? rec.t_s);
          open.delete(key);
          ended.push(event);
        }
      }
      clearSince.clear();
      for (const a of rec.alerts)
        if (a.clear_since_s !== undefined) clearSince.set(keyOf(a.limit, a.level), a.clear_since_s);
      const started: LimitEvent[] = [];
      // Cautions first, so a warning starting with its caution is listed after it.
      const ordered = [...rec.alerts].sort((a, b) => (a.level === b.level ? 0 : a.level === 'caution' ? -1 : 1));
      for (const alert of ordered) {
        const key = keyOf(alert.limit, alert.level);
        const existing = open.get(key);
        if (existing) {
          extendEvent(existing, rec);
        } else {
          const event = startEvent(rec, alert.limit, alert.level);
          open.set(key, event);
          all.push(event);
          started.push(event);
        }
      }
      return { started, ended };
    },
    closeOpen,
    finish() {
      closeOpen();
      return all;
    },
    events() {
      return all;
    },
  };
}
