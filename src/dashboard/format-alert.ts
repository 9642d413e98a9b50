/** Alert words: the level and the limit in plain capitals, so the state reads without colour. Pure. */
import type { ActiveAlert, AlertLevel, MarginRecord } from '../core/margin-record.js';
import type { LimitName } from '../core/performance.js';
import type { Tone } from './format-tags.js';

export { LIMITS } from '../core/alerts.js';
import { LIMITS } from '../core/alerts.js';

export function limitWord(limit: LimitName): string {
  return limit.toUpperCase();
}

export function levelWord(level: AlertLevel | 'normal'): string {
  return level.toUpperCase();
}

export function levelTone(level: AlertLevel | 'normal'): Tone {
  return level === 'warning' ? 'warning' : level === 'caution' ? 'caution' : 'ok';
}

/** The highest level among a record's alerts for one limit, or null when none is on. */
export function limitLevel(alerts: readonly ActiveAlert[], limit: LimitName): AlertLevel | null {
  let level: AlertLevel | null = null;
  for (const a of alerts) {
    if (a.limit !== limit) continue;
    if (a.level === 'warning') return 'warning';
    level = 'caution';
  }
  return level;
}

/** One alert in words, with what it means for the thrust limit: "THRUST 104 % (turn not sustainable)". */
export function describeAlert(record: MarginRecord, limit: LimitName): string {
  const u = record.utilization[limit];
  const pct = u === null ? '' : ` ${Math.round(u * 100)} %`;
  if (limit === 'thrust') {
    if (record.n_thrust === 0) return 'THRUST (level flight not sustainable)';
    return `THRUST${pct} (turn not sustainable)`;
  }
  return `${limitWord(limit)}${pct}`;
}

/** The limit with the highest utilization, for "closest: stall 54 %". */
export function closestLimit(record: MarginRecord): { limit: LimitName; utilization: number } | null {
  let best: { limit: LimitName; utilization: number } | null = null;
  for (const limit of LIMITS) {
    const u = record.utilization[limit];
    if (u !== null && Number.isFinite(u) && (best === null || u > best.utilization)) best = { limit, utilization: u };
  }
  return best;
}

/**
 * The warnings present in `current` but not in `previous`: a new warning rings the terminal bell once.
 * A warning that stays on does not ring again.
 */
export function newWarnings(previous: readonly ActiveAlert[], current: readonly ActiveAlert[]): LimitName[] {
  const before = new Set(previous.filter((a) => a.level === 'warning').map((a) => a.limit));
  return current.filter((a) => a.level === 'warning' && !before.has(a.limit)).map((a) => a.limit);
}
