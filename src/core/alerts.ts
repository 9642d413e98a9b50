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

function wasOn(previous: readonly ActiveAlert[], limit: LimitName, level: AlertLevel): boolean {
  for (let i = 0; i < previous.length; i++) {
    const p = previous[i]!;
    if (p.limit === limit && p.level === level) return true;
  }
  return false;
}

/**
 * The alerts on at this frame, given those on at the previous one (most severe first, see ALERT_KINDS).
 * Written out kind by kind, in ALERT_KINDS order: this runs once per frame.
 */
export function updateAlerts(
  previous: readonly ActiveAlert[],
  inputs: AlertInputs,
  thresholds: AlertThresholds,
): ActiveAlert[] {
  const on: ActiveAlert[] = [];
  if (!inputs.flying) return on;
  const u = inputs.utilization;
  const h = thresholds.hysteresis;
  if (isAlertOn(wasOn(previous, 'stall', 'warning'), u.stall, thresholds.stallWarning, h))
    on.push({ limit: 'stall', level: 'warning' });
  if (isAlertOn(wasOn(previous, 'structure', 'warning'), u.structure, thresholds.structureWarning, h))
    on.push({ limit: 'structure', level: 'warning' });
  if (isAlertOn(wasOn(previous, 'stall', 'caution'), u.stall, thresholds.stallCaution, h))
    on.push({ limit: 'stall', level: 'caution' });
  if (isAlertOn(wasOn(previous, 'structure', 'caution'), u.structure, thresholds.structureCaution, h))
    on.push({ limit: 'structure', level: 'caution' });
  // n_thrust = 0: level flight cannot be sustained at all, a thrust caution by itself.
  if (inputs.nThrust === 0 || isAlertOn(wasOn(previous, 'thrust', 'caution'), u.thrust, thresholds.thrustCaution, h)) {
    on.push({ limit: 'thrust', level: 'caution' });
  }
  return on;
}

/** The record's overall level: the most severe alert on. */
export function levelOfAlerts(alerts: readonly ActiveAlert[]): Level {
  if (alerts.some((a) => a.level === 'warning')) return 'warning';
  if (alerts.length > 0) return 'caution';
  return 'normal';
}
