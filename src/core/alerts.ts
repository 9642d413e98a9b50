/**
 * Caution and warning alerts on utilization, with hysteresis and a clear stretch: an alert comes on at the first
 * frame whose utilization reaches its threshold, and goes off only at a frame where the utilization has stayed below
 * threshold − hysteresis continuously for at least clear_s of frame time. So neither a value dithering around a
 * threshold nor measurement noise at a high sample rate makes the alert flicker, and the number of events does not
 * depend on the sample rate. Pure: the previous set of alerts (with the start of each running clear stretch) is the
 * only state.
 */
import type { ActiveAlert, AlertLevel, Level, Utilization } from './margin-record.js';
import type { LimitName } from './performance.js';
import { DEFAULT_THRESHOLDS, type AlertThresholds } from './thresholds.js';

/** Every limit, in the one order used wherever limits are listed (records, reports, dashboard). */
export const LIMITS: readonly LimitName[] = Object.freeze(['stall', 'structure', 'thrust', 'speed'] as const);

/** The utilization threshold of one alert, or null where the limit has no such level (thrust has no warning). */
export function alertThreshold(limit: LimitName, level: AlertLevel, thresholds: AlertThresholds): number | null {
  switch (limit) {
    case 'stall':
      return level === 'warning' ? thresholds.stallWarning : thresholds.stallCaution;
    case 'structure':
      return level === 'warning' ? thresholds.structureWarning : thresholds.structureCaution;
    case 'thrust':
      return level === 'caution' ? thresholds.thrustCaution : null;
    case 'speed':
      return level === 'warning' ? thresholds.speedWarning : thresholds.speedCaution;
  }
}

/** Every (limit, level) alert that exists, most severe first (warnings, then cautions, each in LIMITS order). */
const KINDS: ReadonlyArray<{ limit: LimitName; level: AlertLevel }> = (['warning', 'caution'] as const).flatMap(
  (level) =>
    LIMITS.filter((limit) => alertThreshold(limit, level, DEFAULT_THRESHOLDS) !== null).map((limit) => ({
      limit,
      level,
    })),
);

/** Frame times this close count as equal (t_s differences such as 0.7 − 0.2 are not exact in binary). */
const TIME_TOLERANCE_S = 1e-9;

/** Hysteresis only (no clear stretch): on at value ≥ threshold; once on, held while value ≥ threshold − hysteresis. */
export function isAlertOn(wasOn: boolean, value: number | null, threshold: number, hysteresis: number): boolean {
  if (value === null || Number.isNaN(value)) return false;
  return wasOn ? value >= threshold - hysteresis : value >= threshold;
}

/**
 * One alert's step at frame time tS. `previous` is the alert as it was at the previous frame (undefined when off).
 * `above`: the utilization reached the threshold; `held`: it is at or above threshold − hysteresis. Returns the
 * alert on at this frame (with clear_since_s while a clear stretch runs), or null once the stretch has lasted clear_s.
 */
export function alertStep(
  previous: ActiveAlert | undefined,
  limit: LimitName,
  level: AlertLevel,
  above: boolean,
  held: boolean,
  tS: number,
  clearS: number,
): ActiveAlert | null {
  if (previous === undefined) return above ? { limit, level } : null;
  // An alert held with no clear stretch running is the same alert as before (alerts are never changed once made).
  if (held) return previous.clear_since_s === undefined ? previous : { limit, level };
  const since = previous.clear_since_s ?? tS;
  if (tS - since >= clearS - TIME_TOLERANCE_S) return null;
  return { limit, level, clear_since_s: since };
}

export interface AlertInputs {
  utilization: Utilization;
  /** The thrust limit: 0 means level flight cannot be sustained at all, which is a thrust caution by itself. */
  nThrust: number | null;
  /** Below 0.5·Vs1 no alert comes on (one already on still needs its clear stretch to go off). */
  flying: boolean;
  /** The frame's time, s: the clear stretch is measured in frame time. */
  tS: number;
}

/** AlertInputs as the frame engine holds them (MarginValues fits): NaN where the utilization or n_thrust is null. */
export interface AlertValues {
  uStall: number;
  uThrust: number;
  uStructure: number;
  uSpeed: number;
  nThrust: number;
  flying: boolean;
  tS: number;
}

function utilizationOf(v: AlertValues, limit: LimitName): number {
  switch (limit) {
    case 'stall':
      return v.uStall;
    case 'thrust':
      return v.uThrust;
    case 'structure':
      return v.uStructure;
    case 'speed':
      return v.uSpeed;
  }
  // Not reached; a throw keeps the result an unboxed number (see frameTasMps in margins.ts).
  throw new RangeError(`unknown limit ${String(limit)}`);
}

function find(previous: readonly ActiveAlert[], limit: LimitName, level: AlertLevel): ActiveAlert | undefined {
  for (let i = 0; i < previous.length; i++) {
    const p = previous[i]!;
    if (p.limit === limit && p.level === level) return p;
  }
  return undefined;
}

const NO_ALERTS = Object.freeze([]) as unknown as ActiveAlert[];

/**
 * Whether any alert would come on at a flying frame with none on before: a utilization at its threshold, or
 * n_thrust = 0. Without one, nextAlerts has nothing to do (the usual frame), and nothing is allocated.
 */
function anyAlertReached(v: AlertValues, thresholds: AlertThresholds): boolean {
  if (v.nThrust === 0) return true;
  const lowest = lowestThresholds(thresholds);
  // NaN (no utilization) reaches nothing.
  return (
    v.uStall >= lowest.stall ||
    v.uStructure >= lowest.structure ||
    v.uThrust >= lowest.thrust ||
    v.uSpeed >= lowest.speed
  );
}

/** The lowest threshold of each limit's alerts (Infinity for a limit without one), for the last thresholds used. */
let lowestOf: { thresholds: AlertThresholds; lowest: Record<LimitName, number> } | null = null;
function lowestThresholds(thresholds: AlertThresholds): Record<LimitName, number> {
  if (lowestOf === null || lowestOf.thresholds !== thresholds) {
    const lowest: Record<LimitName, number> = {
      stall: Number.POSITIVE_INFINITY,
      structure: Number.POSITIVE_INFINITY,
      thrust: Number.POSITIVE_INFINITY,
      speed: Number.POSITIVE_INFINITY,
    };
    for (const { limit, level } of KINDS)
      lowest[limit] = Math.min(lowest[limit], alertThreshold(limit, level, thresholds)!);
    lowestOf = { thresholds, lowest };
  }
  return lowestOf.lowest;
}

/** The alerts on at this frame, given those on at the previous one (most severe first). Runs once per frame. */
export function nextAlerts(
  previous: readonly ActiveAlert[],
  v: AlertValues,
  thresholds: AlertThresholds,
): readonly ActiveAlert[] {
  // Most frames: nothing on before and nothing can come on (the shared empty list: records only read it).
  if (previous.length === 0 && (!v.flying || !anyAlertReached(v, thresholds))) return NO_ALERTS;
  const on: ActiveAlert[] = [];
  const h = thresholds.hysteresis;
  for (let i = 0; i < KINDS.length; i++) {
    const { limit, level } = KINDS[i]!;
    const threshold = alertThreshold(limit, level, thresholds)!;
    const value = utilizationOf(v, limit);
    const defined = v.flying && value === value;
    // n_thrust = 0: level flight cannot be sustained at all, a thrust caution by itself.
    const unsustainable = limit === 'thrust' && v.flying && v.nThrust === 0;
    const above = unsustainable || (defined && value >= threshold);
    const held = unsustainable || (defined && value >= threshold - h);
    const prev = previous.length === 0 ? undefined : find(previous, limit, level);
    const next = alertStep(prev, limit, level, above, held, v.tS, thresholds.clearS);
    if (next !== null) on.push(next);
  }
  return on;
}

/** nextAlerts for inputs with null utilizations (a utilization object, as records carry it). */
export function updateAlerts(
  previous: readonly ActiveAlert[],
  inputs: AlertInputs,
  thresholds: AlertThresholds,
): ActiveAlert[] {
  const u = inputs.utilization;
  const values: AlertValues = {
    uStall: u.stall ?? Number.NaN,
    uThrust: u.thrust ?? Number.NaN,
    uStructure: u.structure ?? Number.NaN,
    uSpeed: u.speed ?? Number.NaN,
    nThrust: inputs.nThrust ?? Number.NaN,
    flying: inputs.flying,
    tS: inputs.tS,
  };
  return nextAlerts(previous, values, thresholds) as ActiveAlert[];
}

/** The record's overall level: the most severe alert on. */
export function levelOfAlerts(alerts: readonly ActiveAlert[]): Level {
  if (alerts.length === 0) return 'normal';
  // A loop, not alerts.some(callback): this runs once per frame, and the callback would be a new closure each time.
  for (let i = 0; i < alerts.length; i++) if (alerts[i]!.level === 'warning') return 'warning';
  return 'caution';
}
