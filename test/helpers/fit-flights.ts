/**
 * Simulated flights for the fit tests: a small invented plan (power-off glides at four speeds, full-throttle level
 * accelerations and turns) flown by the point-mass simulator with a "true" airframe, read back through the frame
 * decoder and the real frame engine into the fit's accumulator — the same path `turnmargin fit` takes, without
 * the files.
 */
import { readFileSync } from 'node:fs';
import type { Aircraft, AircraftJson } from '../../src/core/aircraft.js';
import { analyseFit, createFitAccumulator, type FitAnalysis, type FitData } from '../../src/core/fit-run.js';
import { createFrameEngine } from '../../src/core/frame-engine.js';
import { DEFAULT_SMOOTH_TAU_S } from '../../src/core/margins.js';
import { validateFrameObject } from '../../src/decode/frame-line.js';
import { createFrameWriter, type SimFrame } from '../../src/sim/frames.js';
import { parseFlightPlan, type FlightPlanJson } from '../../src/sim/plan.js';
import { simulateFlight } from '../../src/sim/point-mass.js';
import { airframe, DEMO_AIRFRAME_PATH } from './airframes.js';

/** The invented demo airframe's JSON (replays/demo-airframe.json). */
export function demoAirframeJson(): AircraftJson {
  return JSON.parse(readFileSync(DEMO_AIRFRAME_PATH, 'utf8')) as AircraftJson;
}

/**
 * The demo airframe with its polar's drag multiplied (CD0 and k alike: the whole polar) and its thrust scaled
 * (power and static thrust alike), written with {cd0, k}.
 */
export function variantAirframeJson(dragFactor: number, thrustFactor: number): AircraftJson {
  const json = demoAirframeJson();
  const base = airframe(json);
  const thrust = json.thrust;
  if (thrust.model !== 'power') throw new Error('the demo airframe has a power thrust model');
  return {
    ...json,
    name: `demo airframe, drag ×${dragFactor}, thrust ×${thrustFactor} (invented)`,
    polar: { cd0: base.cd0 * dragFactor, k: base.k * dragFactor },
    thrust: {
      ...thrust,
      power_w: thrust.power_w * thrustFactor,
      static_thrust_n: thrust.static_thrust_n * thrustFactor,
    },
  };
}

/** Demo-like measurement noise (replays/plans/demo-flight.json's, plus 0.1 m on the altitude). */
export const DEMO_LIKE_NOISE = { nz_sd: 0.01, airspeed_sd_mps: 0.05, alt_sd_m: 0.1 };
export const NO_NOISE = { nz_sd: 0, airspeed_sd_mps: 0, alt_sd_m: 0 };

/** Glides at 12 to 19 m/s (1.3 to 2 Vs1 of the demo airframe), then full-throttle level accelerations and turns. */
export function fitPlanJson(noise: FlightPlanJson['noise']): FlightPlanJson {
  return {
    name: 'fit test flight (invented)',
    start: { alt_m: 400, tas_mps: 16 },
    noise,
    segments: [
      { type: 'glide', duration_s: 20, tas_mps: 12 },
      { type: 'glide', duration_s: 15, tas_mps: 14 },
      { type: 'glide', duration_s: 15, tas_mps: 16.5 },
      { type: 'glide', duration_s: 15, tas_mps: 19 },
      { type: 'straight', duration_s: 5, tas_mps: 15 },
      { type: 'straight', duration_s: 15, throttle: 1 },
      { type: 'turn', duration_s: 12, bank_deg: 45, throttle: 1 },
      { type: 'straight', duration_s: 5, tas_mps: 16 },
      { type: 'turn', duration_s: 12, bank_deg: -30, throttle: 1 },
      { type: 'straight', duration_s: 10, throttle: 1 },
    ],
  };
}

/** The frames (wire objects, as `simulate` writes them) of a plan flown by `truth`. */
export function simulateFrames(truth: Aircraft, planJson: FlightPlanJson, seed: number, rateHz = 10): SimFrame[] {
  const plan = parseFlightPlan(planJson, 'plan.json');
  if (!plan.ok) throw new Error(plan.problems.join('\n'));
  const write = createFrameWriter(truth, plan.value, { seed });
  return [...simulateFlight(truth, plan.value, { rateHz })].map(write);
}

export function ndjson(frames: readonly object[]): string {
  return frames.map((f) => JSON.stringify(f)).join('\n') + '\n';
}

/** Frames through the decoder and the frame engine (breaks to the accumulator, as the command wires them). */
export function gatherFit(file: Aircraft, flights: ReadonlyArray<readonly object[]>, rateWindowS = 1): FitData {
  const acc = createFitAccumulator(rateWindowS, DEFAULT_SMOOTH_TAU_S);
  for (const frames of flights) {
    acc.startFile();
    const engine = createFrameEngine(
      file,
      { smoothTauS: DEFAULT_SMOOTH_TAU_S, rateWindowS, speedBand: false },
      { dataBreak: () => acc.breakData() },
    );
    for (const raw of frames) {
      const verdict = validateFrameObject(raw);
      if (!verdict.ok) throw new Error(`a simulated frame was rejected: ${verdict.reason}`);
      const rec = engine.push(verdict.frame);
      if (rec !== null) acc.record(rec);
    }
    engine.finish();
  }
  return acc.data();
}

export function fitFlights(file: Aircraft, flights: ReadonlyArray<readonly object[]>, rateWindowS = 1): FitAnalysis {
  return analyseFit(file, gatherFit(file, flights, rateWindowS), rateWindowS);
}
