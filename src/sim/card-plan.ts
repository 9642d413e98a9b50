/**
 * A test card as a flight plan: for each point in the card's order, straight flight at the target speed, roll in,
 * hold the target bank and speed for hold_s + 1 s (full throttle where the card predicts the turn is not sustainable:
 * the speed then bleeds as it would), roll out. Every frame of a point carries `segment` = the point's id. Turns
 * alternate right and left (either direction counts for a hold).
 */
import type { Aircraft } from '../core/aircraft.js';
import { computeAirState } from '../core/atmosphere.js';
import type { LoadedCard } from '../core/card.js';
import { dragAtLoadFactorN } from '../core/performance.js';
import { DEFAULT_ROLL_RATE_DPS, parseFlightPlan, type PlanParseResult, type SegmentJson } from './plan.js';
import { SPEED_GAIN_PER_S, simThrustAvailableN } from './point-mass.js';

/** Settling time added to every phase, s (the autopilot's loops converge exponentially). */
const SETTLE_S = 1;
/** Straight flight before a point: at least this long, s, and at most APPROACH_MAX_S. */
const APPROACH_MIN_S = 4;
const APPROACH_MAX_S = 60;
/** The approach ends when the estimated speed is this close to the target, m/s. */
const APPROACH_SPEED_TOLERANCE_MPS = 0.1;

/**
 * Time to change speed in level 1-g flight with the simulator's autothrottle law (thrust between idle and full),
 * estimated by a simple Euler integration; a speed the aircraft cannot reach level gives APPROACH_MAX_S.
 */
export function approachTimeS(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  fromMps: number,
  toMps: number,
): number {
  const dt = 0.05;
  let v = fromMps;
  let t = 0;
  while (t < APPROACH_MAX_S && Math.abs(v - toMps) > APPROACH_SPEED_TOLERANCE_MPS && v > 1) {
    const dragN = dragAtLoadFactorN(aircraft, v, densityKgM3, massKg, 1);
    const available = simThrustAvailableN(aircraft, v, densityKgM3);
    const thrustN = Math.min(available, Math.max(0, dragN + massKg * SPEED_GAIN_PER_S * (toMps - v)));
    v += ((thrustN - dragN) / massKg) * dt;
    t += dt;
  }
  return Math.min(APPROACH_MAX_S, Math.max(APPROACH_MIN_S, Math.ceil(t + 2 * SETTLE_S)));
}

export interface CardPlanOptions {
  rollRateDps?: number;
  /** Name of the plan (usually the card's file name). */
  name: string;
}

/** The plan JSON for a card (validated like any plan by `cardToFlightPlan`). */
export function cardToPlanJson(card: LoadedCard, aircraft: Aircraft, options: CardPlanOptions) {
  const c = card.conditions;
  const rollRateDps = options.rollRateDps ?? DEFAULT_ROLL_RATE_DPS;
  const rho = computeAirState(c.altitude_m, { isaDeviationK: c.isa_deviation_k }).densityKgM3;
  const segments: SegmentJson[] = [];
  // The speeds the previous point may end at: its target, or (after a bled turn) the bled estimate.
  let speedsMps = [card.points[0]!.tas_mps];
  card.points.forEach((p, i) => {
    const rollS = p.bank_deg / rollRateDps + SETTLE_S;
    const turnS = rollS + p.hold_s + 1;
    segments.push({
      type: 'straight',
      label: p.id,
      tas_mps: p.tas_mps,
      duration_s: Math.max(...speedsMps.map((v) => approachTimeS(aircraft, rho, c.mass_kg, v, p.tas_mps))),
    });
    const sign = i % 2 === 0 ? 1 : -1;
    const sustained = p.predicted.sustained;
    segments.push({
      type: 'turn',
      label: p.id,
      bank_deg: sign * p.bank_deg,
      ...(sustained ? { tas_mps: p.tas_mps } : { throttle: 1 }),
      duration_s: turnS,
    });
    segments.push({ type: 'straight', label: p.id, tas_mps: p.tas_mps, duration_s: rollS + SETTLE_S });
    // Where the turn bleeds, the next approach starts slower (as predicted at the target).
    const bleed = !sustained && p.predicted.dvdt_mps2 !== null ? Math.min(0, p.predicted.dvdt_mps2) * turnS : 0;
    speedsMps = [p.tas_mps, Math.max(1, p.tas_mps + bleed)];
  });
  return {
    name: options.name,
    description: `The test card ${options.name} flown by the point-mass simulator (simulated data).`,
    start: { alt_m: c.altitude_m, tas_mps: card.points[0]!.tas_mps },
    mass_kg: c.mass_kg,
    isa_deviation_c: c.isa_deviation_k,
    roll_rate_dps: rollRateDps,
    segments,
  };
}

/** A card as a validated flight plan; the plan's problems (e.g. a bank beyond the simulator's 80°) are listed. */
export function cardToFlightPlan(card: LoadedCard, aircraft: Aircraft, options: CardPlanOptions): PlanParseResult {
  return parseFlightPlan(cardToPlanJson(card, aircraft, options), options.name);
}
