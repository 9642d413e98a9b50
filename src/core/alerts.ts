/**
 * Caution and warning alerts on utilization, with hysteresis: an alert comes on when the utilization reaches its
 * threshold and goes off only when it falls below threshold − hysteresis, so a value dithering around a threshold
 * does not make the alert flicker. Pure: the previous set of alerts is the only state.
 */
import type { ActiveAlert, AlertLevel, Level, Utilization } from './margin-record.js';
import type { LimitName } from './performance.js';
import type { AlertThresholds } from './thresholds.js';

/** Every (limit, level) alert that exists, most severe first: the order alerts are listed in a record. */
export const ALERT_KINDS: ReadonlyArray<ActiveAlert> = Object.freeze([
  { limit: 'stall', level: 'warning' },
  { limit: 'structure', level: 'warning' },
  { limit: 'stall', level: 'caution' },
  { limit: 'structure', level: 'caution' },
  { limit: 'thrust', level: 'caution' },
]);

/** The utilization threshold of one alert, or null where the limit has no such level (thrust has no warning). */
export function alertThreshold(limit: LimitName, level: AlertLevel, thresholds: AlertThresholds): number | null {
  switch (limit) {
    case 'stall':
      return level === 'warning' ? thresholds.stallWarning : thresholds.stallCaution;
    case 'structure':
      return level === 'warning' ? thresholds.structureWarning : thresholds.structureCaution;
    case 'thrust':
      return level === 'caution' ? thresholds.thrustCaution : null;
  }
}

/**
 * One alert's hysteresis: on at value ≥ threshold; once on, off only below threshold − hysteresis.
 * A null value (the limit is not defined here) turns the alert off.
 */
export function isAlertOn(wasOn: boolean, value: number | null, threshold: number, hysteresis: number): boolean {
  if (value === null || Number.isNaN(value)) return false;
  return wasOn ? value >= threshold - hysteresis : value >= threshold;
}

export interface AlertInputs {
  utilization: Utilization;
  /** The thrust limit: 0 means level flight cannot be sustained at all, which is a thrust caution by itself. */
  nThrust: number | null;
  /** Below 0.5·Vs1 no alert is raised. */
  flying: boolean;
}

function sameAlert(a: ActiveAlert, b: ActiveAlert): boolean {
  return a.limit === b.limit && a.level === b.level;
}

/** The alerts on at this frame, given those on at the previous one (most severe first, see ALERT_KINDS). */
export function updateAlerts(previous: readonly ActiveAlert[], inputs: AlertInputs, thresholds: AlertThresholds): ActiveAlert[] {
  if (!inputs.flying) return [];
  const on: ActiveAlert[] = [];
  for (const kind of ALERT_KINDS) {
    const threshold = alertThreshold(kind.limit, kind.level, thresholds);
    if (threshold === null) continue;
    const wasOn = previous.some((p) => sameAlert(p, kind));
    const value = inputs.utilization[kind.limit];
    const thrustExhausted = kind.limit === 'thrust' && inputs.nThrust === 0;
    if (thrustExhausted || isAlertOn(wasOn, value, threshold, thresholds.hysteresis)) {
      on.push({ limit: kind.limit, level: kind.level });
    }
  }
  return on;
}

/** The record's overall level: the most severe alert on. */
export function levelOfAlerts(alerts: readonly ActiveAlert[]): Level {
  if (alerts.some((a) => a.level === 'warning')) return 'warning';
  if (alerts.length > 0) return 'caution';
  return 'normal';
}
