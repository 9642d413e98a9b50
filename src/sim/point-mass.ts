/**
 * A point-mass flight simulation of an airframe flying a plan (pure: no I/O, no clock).
 *
 * State: TAS V, flight-path angle γ, heading ψ, altitude h, bank φ. Equations of motion in wind axes
 * (the usual point-mass performance model, e.g. Anderson, Aircraft Performance and Design, ch. 6):
 *   dV/dt = (T − D)/m − g·sin γ
 *   dγ/dt = (g/V)·(n·cos φ − cos γ)
 *   dψ/dt = g·n·sin φ / (V·cos γ)
 *   dh/dt = V·sin γ
 * with D = q·S·(CD0 + k·CL²) at the flown CL = n·W/(q·S), T from the airframe's thrust model, and the density
 * following the altitude (ISA plus the plan's deviation). A simple autopilot closes the loops: bank toward the
 * command at a limited roll rate, load factor to hold the vertical path, autothrottle to hold a speed (or a fixed
 * throttle). The lift is capped at CLmax (and CLmin), so asking for more than the wing gives bleeds the path.
 * Integrated with the classical fourth-order Runge–Kutta method at a fixed step of at most 10 ms.
 *
 * Ignored: pitch and roll dynamics beyond the roll-rate limit (load factor changes at once), sideslip and
 * uncoordinated flight, wind, the post-stall regime (the wing simply holds CLmax), propeller and engine lag,
 * fuel or battery mass change, ground effect, the Earth's curvature.
 */
import type { Aircraft } from '../core/aircraft.js';
import { computeAirState, MAX_ALTITUDE_M, MIN_ALTITUDE_M } from '../core/atmosphere.js';
import { dynamicPressurePa, thrustAvailableN } from '../core/performance.js';
import { G0_MPS2, degToRad, radToDeg } from '../core/units.js';
import type { FlightPlan, PlanSegment } from './plan.js';

/** Largest integration step, s. */
export const MAX_STEP_S = 0.01;
/** Altitude-hold gain: commanded vertical speed per metre of altitude error, 1/s. */
export const ALTITUDE_GAIN_PER_S = 0.4;
/** Flight-path gain: load factor per radian of path error, scaled by V/g, 1/s. */
export const PATH_GAIN_PER_S = 2;
/** The path loop asks for at most this much load factor beyond 1 g-equivalent, g (a gentle autopilot). */
export const MAX_PATH_CORRECTION_G = 0.5;
/** Steepest flight path the path loop commands, rad (20°). */
export const MAX_GUIDANCE_PATH_RAD = degToRad(20);
/** Roll loop gain, 1/s (bank error to roll rate, before the roll-rate limit). */
export const ROLL_GAIN_PER_S = 3;
/** Autothrottle gain: commanded acceleration per m/s of speed error, 1/s. */
export const SPEED_GAIN_PER_S = 0.8;
/** Beyond this flight-path angle the point-mass model stops (loops and vertical dives are outside it). */
export const MAX_PATH_DEG = 85;
/** Below this TAS the model stops. */
export const MIN_TAS_MPS = 0.5;

/** Why the simulation could not go on (the aircraft left the model's domain); the message says where and why. */
export class SimulationError extends Error {
  readonly code = 'simulation';
  constructor(
    message: string,
    readonly tS: number,
    readonly segmentLabel: string,
  ) {
    super(message);
    this.name = 'SimulationError';
  }
}

interface State {
  tasMps: number;
  pathRad: number;
  headingRad: number;
  altM: number;
  bankRad: number;
}

/** What the segment remembers from its entry: the references the autopilot holds. */
interface SegmentEntry {
  tS: number;
  altM: number;
  tasMps: number;
}

/** One output sample of the true (noise-free) simulated state. */
export interface SimSample {
  tS: number;
  tasMps: number;
  altM: number;
  bankDeg: number;
  /** Load factor n = L/W, g (what a body-axis accelerometer reads as nz in this model). */
  loadFactor: number;
  headingDeg: number;
  flightPathDeg: number;
  thrustN: number;
  /** Fraction of the thrust available in use, 0…1 (the throttle a frame reports). */
  throttle: number;
  dragN: number;
  cl: number;
  densityKgM3: number;
  pressurePa: number;
  temperatureK: number;
  massKg: number;
  segmentIndex: number;
  /** true when the wing is at CLmax (or CLmin): the commanded load factor was not available. */
  liftLimited: boolean;
}

interface Forces {
  loadFactor: number;
  bankCmdRad: number;
  thrustN: number;
  /** Fraction of the thrust available in use, 0…1. */
  throttle: number;
  dragN: number;
  cl: number;
  liftLimited: boolean;
  densityKgM3: number;
  pressurePa: number;
  temperatureK: number;
}

const clamp = (x: number, lo: number, hi: number) => Math.min(hi, Math.max(lo, x));

/** Thrust available; a table model is held at its end values outside its speed range (the sim must fly on). */
export function simThrustAvailableN(aircraft: Aircraft, tasMps: number, densityKgM3: number): number {
  const t = aircraft.thrust;
  let speed = tasMps;
  if (t.model === 'table') {
    speed = clamp(tasMps, t.points[0]![0], t.points[t.points.length - 1]![0]);
  }
  return thrustAvailableN(t, speed, densityKgM3) ?? 0;
}

function computeForces(
  aircraft: Aircraft,
  plan: FlightPlan,
  seg: PlanSegment,
  entry: SegmentEntry,
  tS: number,
  s: State,
  massKg: number,
): Forces {
  const air = computeAirState(s.altM, plan.isaDeviationK !== undefined ? { isaDeviationK: plan.isaDeviationK } : {});
  const rho = air.densityKgM3;
  const weightN = massKg * G0_MPS2;
  const qS = dynamicPressurePa(rho, s.tasMps) * aircraft.wingAreaM2;

  const availableN = simThrustAvailableN(aircraft, s.tasMps, rho);
  const maxSinPath = Math.sin(MAX_GUIDANCE_PATH_RAD);
  let pathCmd: number;
  if (seg.glide) {
    // Glide: the path holds the speed. From dV/dt = (T − D)/m − g·sin γ, the path giving the autothrottle's
    // acceleration law, with the drag estimated at the load factor of the present path and bank.
    const target = seg.glide.tasMps ?? entry.tasMps;
    const thrustN = seg.speed.kind === 'throttle' ? seg.speed.fraction * availableN : 0;
    const nEst = Math.cos(s.pathRad) / Math.max(Math.cos(s.bankRad), 0.1);
    const clEst = qS > 0 ? (nEst * weightN) / qS : 0;
    const dragEstN = qS * (aircraft.cd0 + aircraft.k * clEst * clEst);
    const sinPath = ((thrustN - dragEstN) / massKg - SPEED_GAIN_PER_S * (target - s.tasMps)) / G0_MPS2;
    pathCmd = Math.asin(clamp(sinPath, -maxSinPath, maxSinPath));
  } else {
    // Vertical path: hold the altitude reference (which moves at the commanded vertical speed).
    const altRefM = entry.altM + seg.verticalSpeedMps * (tS - entry.tS);
    const vsCmd = seg.verticalSpeedMps + ALTITUDE_GAIN_PER_S * (altRefM - s.altM);
    pathCmd = Math.asin(clamp(vsCmd / s.tasMps, -maxSinPath, maxSinPath));
  }
  const correction = clamp(
    (s.tasMps / G0_MPS2) * PATH_GAIN_PER_S * (pathCmd - s.pathRad),
    -MAX_PATH_CORRECTION_G,
    MAX_PATH_CORRECTION_G,
  );
  const verticalN = Math.cos(s.pathRad) + correction;

  let bankCmdRad: number;
  let nCmd: number;
  const cosBank = Math.max(Math.cos(s.bankRad), 1e-3);
  switch (seg.turn.kind) {
    case 'bank':
      bankCmdRad = degToRad(seg.turn.bankDeg);
      nCmd = verticalN / cosBank;
      break;
    case 'load-factor': {
      // Bank so that the vertical component of the held load factor keeps the path.
      const cosCmd = clamp(verticalN / seg.turn.loadFactor, Math.cos(degToRad(80)), 1);
      bankCmdRad = seg.turn.sign * Math.acos(cosCmd);
      nCmd = verticalN / cosBank;
      break;
    }
    case 'pull-up':
      bankCmdRad = 0;
      nCmd = seg.turn.loadFactor;
      break;
  }

  // The wing gives at most CLmax (at least CLmin): the model holds the limit instead of departing.
  const clLow = aircraft.clMin ?? -0.5 * aircraft.clMax;
  const nHigh = (qS * aircraft.clMax) / weightN;
  const nLow = (qS * clLow) / weightN;
  const loadFactor = clamp(nCmd, nLow, nHigh);
  const liftLimited = nCmd > nHigh || nCmd < nLow;
  const cl = qS > 0 ? (loadFactor * weightN) / qS : 0;
  const dragN = qS * (aircraft.cd0 + aircraft.k * cl * cl);

  let thrustN: number;
  if (seg.speed.kind === 'throttle') {
    thrustN = seg.speed.fraction * availableN;
  } else {
    const target = seg.speed.kind === 'hold' ? seg.speed.tasMps : entry.tasMps;
    const wanted = dragN + weightN * Math.sin(s.pathRad) + massKg * SPEED_GAIN_PER_S * (target - s.tasMps);
    thrustN = clamp(wanted, 0, availableN);
  }
  return {
    loadFactor,
    bankCmdRad,
    thrustN,
    throttle: seg.speed.kind === 'throttle' ? seg.speed.fraction : availableN > 0 ? thrustN / availableN : 0,
    dragN,
    cl,
    liftLimited,
    densityKgM3: rho,
    pressurePa: air.pressurePa,
    temperatureK: air.temperatureK,
  };
}

function derivatives(f: Forces, s: State, massKg: number, rollRateRadPerS: number): State {
  const g = G0_MPS2;
  return {
    tasMps: (f.thrustN - f.dragN) / massKg - g * Math.sin(s.pathRad),
    pathRad: (g / s.tasMps) * (f.loadFactor * Math.cos(s.bankRad) - Math.cos(s.pathRad)),
    headingRad: (g * f.loadFactor * Math.sin(s.bankRad)) / (s.tasMps * Math.cos(s.pathRad)),
    altM: s.tasMps * Math.sin(s.pathRad),
    bankRad: clamp(ROLL_GAIN_PER_S * (f.bankCmdRad - s.bankRad), -rollRateRadPerS, rollRateRadPerS),
  };
}

function add(s: State, d: State, h: number): State {
  return {
    tasMps: s.tasMps + d.tasMps * h,
    pathRad: s.pathRad + d.pathRad * h,
    headingRad: s.headingRad + d.headingRad * h,
    altM: s.altM + d.altM * h,
    bankRad: s.bankRad + d.bankRad * h,
  };
}

export interface SimulateOptions {
  /** Output rate, Hz. */
  rateHz: number;
}

/** Segment boundaries: start time of each segment and the end of the plan. */
function segmentStarts(plan: FlightPlan): number[] {
  const starts = [plan.startTS];
  for (const seg of plan.segments) starts.push(starts[starts.length - 1]! + seg.durationS);
  return starts;
}

/**
 * Fly the plan; yields one sample at the start and then every 1/rate s up to the end of the plan.
 * Throws SimulationError when the aircraft leaves the model's domain (too slow, too steep, out of the atmosphere).
 */
export function* simulateFlight(
  aircraft: Aircraft,
  plan: FlightPlan,
  options: SimulateOptions,
): Generator<SimSample, void, undefined> {
  const massKg = plan.massKg ?? aircraft.massKg;
  const rollRate = degToRad(plan.rollRateDps);
  const starts = segmentStarts(plan);
  const endS = starts[starts.length - 1]!;
  const periodS = 1 / options.rateHz;

  let state: State = {
    tasMps: plan.startTasMps,
    pathRad: 0,
    headingRad: degToRad(plan.startHeadingDeg),
    altM: plan.startAltM,
    bankRad: 0,
  };
  let tS = plan.startTS;
  let segIndex = 0;
  let entry: SegmentEntry = { tS, altM: state.altM, tasMps: state.tasMps };

  const forcesAt = (t: number, s: State) =>
    computeForces(aircraft, plan, plan.segments[segIndex]!, entry, t, s, massKg);
  const sample = (): SimSample => {
    const f = forcesAt(tS, state);
    return {
      tS,
      tasMps: state.tasMps,
      altM: state.altM,
      bankDeg: radToDeg(state.bankRad),
      loadFactor: f.loadFactor,
      headingDeg: ((radToDeg(state.headingRad) % 360) + 360) % 360,
      flightPathDeg: radToDeg(state.pathRad),
      thrustN: f.thrustN,
      throttle: f.throttle,
      dragN: f.dragN,
      cl: f.cl,
      densityKgM3: f.densityKgM3,
      pressurePa: f.pressurePa,
      temperatureK: f.temperatureK,
      massKg,
      segmentIndex: segIndex,
      liftLimited: f.liftLimited,
    };
  };
  const fail = (why: string): never => {
    const label = plan.segments[segIndex]!.label;
    throw new SimulationError(
      `${why} at t = ${tS.toFixed(2)} s in segment "${label}"; the point-mass model cannot go on`,
      tS,
      label,
    );
  };
  const checkDomain = () => {
    if (!(state.tasMps >= MIN_TAS_MPS)) fail(`the airspeed fell below ${MIN_TAS_MPS} m/s`);
    if (Math.abs(radToDeg(state.pathRad)) > MAX_PATH_DEG)
      fail(`the flight path passed ±${MAX_PATH_DEG}° (a loop or a vertical dive)`);
    if (!(state.altM >= MIN_ALTITUDE_M && state.altM <= MAX_ALTITUDE_M))
      fail(`the altitude left ${MIN_ALTITUDE_M}…${MAX_ALTITUDE_M} m`);
  };
  const rk4 = (h: number) => {
    const t0 = tS;
    const k1 = derivatives(forcesAt(t0, state), state, massKg, rollRate);
    const s2 = add(state, k1, h / 2);
    const k2 = derivatives(forcesAt(t0 + h / 2, s2), s2, massKg, rollRate);
    const s3 = add(state, k2, h / 2);
    const k3 = derivatives(forcesAt(t0 + h / 2, s3), s3, massKg, rollRate);
    const s4 = add(state, k3, h);
    const k4 = derivatives(forcesAt(t0 + h, s4), s4, massKg, rollRate);
    const keys = Object.keys(state) as Array<keyof State>;
    const next = { ...state };
    for (const key of keys) next[key] = state[key] + (h / 6) * (k1[key] + 2 * k2[key] + 2 * k3[key] + k4[key]);
    state = next;
  };

  yield sample();
  const EPS = 1e-9;
  for (let k = 1; ; k++) {
    // Output times from the index, not by accumulation, so that they stay exact.
    const outT = plan.startTS + k * periodS;
    if (outT > endS + EPS) break;
    while (tS < outT - EPS) {
      const segEnd = starts[segIndex + 1]!;
      const stepEnd = Math.min(outT, tS + MAX_STEP_S, segEnd);
      rk4(stepEnd - tS);
      tS = stepEnd;
      checkDomain();
      if (tS >= segEnd - EPS && segIndex < plan.segments.length - 1) {
        segIndex++;
        entry = { tS, altM: state.altM, tasMps: state.tasMps };
      }
    }
    tS = outT;
    yield sample();
  }
}
