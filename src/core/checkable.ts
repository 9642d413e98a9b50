/**
 * "Nothing checkable is not a pass": when no limit could be computed on any flying frame of a flight (no frame
 * was flying, typically because the airframe's numbers are off by a unit), the check must not pass. This names the
 * likely cause in words. Pure.
 */
import type { Aircraft } from './aircraft.js';
import { LIMITS } from './alerts.js';
import type { FlightReview } from './flight-review.js';
import { FLYING_FRACTION_OF_VS1 } from './margins.js';
import { stallSpeedMps } from './performance.js';

/** Speeds in messages: whole m/s from 10 up, one decimal below. */
function speedText(mps: number): string {
  return mps >= 10 ? mps.toFixed(0) : mps.toFixed(1);
}

/** A stall speed this many times the fastest speed flown points to a unit slip (grams for kilograms, cm² for m²). */
export const UNIT_SLIP_RATIO = 3;

/**
 * null when at least one limit was computed on a flying frame; otherwise why nothing could be checked, with the
 * likely cause, e.g. "stall speed 294 m/s is above every speed flown (10–35 m/s): is mass_kg in kilograms?".
 */
export function nothingCheckableReason(review: FlightReview, aircraft: Aircraft): string | null {
  if (review.accepted === 0) return null; // "no accepted frame" is reported on its own
  if (LIMITS.some((l) => review.peaks[l].utilization !== null)) return null;
  const c = review.conditions;
  const flying = review.accepted - c.notFlyingFrames;
  if (flying > 0) {
    return `no limit could be computed on any of the ${flying} flying frames: check the airframe file`;
  }
  const densityKgM3 = c.medianDensityKgM3;
  const massKg = c.medianMassKg ?? aircraft.massKg;
  const tas = c.tasMps;
  const prefix = `no frame was flying (TAS below ${FLYING_FRACTION_OF_VS1}·Vs1 throughout), so no limit could be checked`;
  if (densityKgM3 === null || tas === null) return prefix;
  const vs1Mps = stallSpeedMps(aircraft, densityKgM3, massKg);
  const flown = `${speedText(tas.min)}–${speedText(tas.max)} m/s`;
  if (tas.max <= 0) return `${prefix}: every airspeed is 0 (${flown}): is the aircraft on the ground?`;
  const massFromFrames = massKg !== aircraft.massKg;
  const hint =
    vs1Mps >= UNIT_SLIP_RATIO * tas.max
      ? massFromFrames
        ? "are the frames' mass_kg in kilograms?"
        : 'is mass_kg in kilograms?'
      : 'are mass_kg, wing_area_m2 and cl_max right, and the airspeed in m/s?';
  return `${prefix}: stall speed ${speedText(vs1Mps)} m/s is above every speed flown (${flown}): ${hint}`;
}
