import { describe, expect, it } from 'vitest';
import { computeEnvelope } from '../../src/core/envelope.js';
import type { Estimate } from '../../src/core/least-squares.js';
import { thrustAvailableN } from '../../src/core/performance.js';
import { airframe } from '../helpers/airframes.js';
import {
  DEMO_LIKE_NOISE,
  demoAirframeJson,
  fitFlights,
  fitPlanJson,
  NO_NOISE,
  simulateFrames,
  variantAirframeJson,
} from '../helpers/fit-flights.js';

// The truth in these tests is the simulator's: the point-mass model flies the airframe it is given (drag
// D = q·S·(CD0 + k·CL²) at the flown CL, the thrust model's thrust), an integration independent of the fit. The fit
// sees only the frames — airspeed, altitude, bank, nz and throttle — and the energy relation
// Ps = dh/dt + (V/g0)·dV/dt = V·(T − D)/W (the energy method of performance flight testing; Rutowski 1954 — from
// memory), which holds exactly for a point mass with the thrust along the path.
const file = airframe(demoAirframeJson());

const relativeError = (value: number, truth: number): number => Math.abs(value / truth - 1);
const covers = (e: Estimate, truth: number): boolean => e.ci95[0] <= truth && truth <= e.ci95[1];

function fitted(truthJson: ReturnType<typeof demoAirframeJson>, noise: typeof NO_NOISE, seed: number) {
  const truth = airframe(truthJson);
  const result = fitFlights(file, [simulateFrames(truth, fitPlanJson(noise), seed)]);
  if (!result.ok) throw new Error(result.problems.join('\n'));
  return { truth, outcome: result.value };
}

describe('fit on simulated flights', () => {
  it('recovers CD0, k and the thrust scale of a known airframe within 0.5 % from noise-free glides and full-throttle turns and accelerations', () => {
    const { outcome } = fitted(demoAirframeJson(), NO_NOISE, 1);
    const { polar, thrustScale } = outcome.fit;
    expect(polar).not.toBeNull();
    expect(relativeError(polar!.cd0.value, file.cd0)).toBeLessThan(0.005);
    expect(relativeError(polar!.k.value, file.k)).toBeLessThan(0.005);
    expect(relativeError(thrustScale!.scale.value, 1)).toBeLessThan(0.005);
    // The glides span 1.3 to 2 Vs1: CL² from about 0.1 to 0.6.
    expect(polar!.cl2Range[0]).toBeLessThan(0.15);
    expect(polar!.cl2Range[1]).toBeGreaterThan(0.5);
    expect(polar!.r2).toBeGreaterThan(0.999);
  });

  it('recovers 20 % more drag and 10 % less thrust than the file within 0.5 % without noise', () => {
    const { truth, outcome } = fitted(variantAirframeJson(1.2, 0.9), NO_NOISE, 1);
    expect(relativeError(outcome.fit.polar!.cd0.value, truth.cd0)).toBeLessThan(0.005);
    expect(relativeError(outcome.fit.polar!.k.value, truth.k)).toBeLessThan(0.005);
    expect(relativeError(outcome.fit.thrustScale!.scale.value, 0.9)).toBeLessThan(0.005);
    // The fitted airframe carries them: its thrust is 0.9 × the file's everywhere.
    expect(thrustAvailableN(outcome.fitted.thrust, 20, 1.2)! / thrustAvailableN(file.thrust, 20, 1.2)!).toBeCloseTo(
      outcome.fit.thrustScale!.scale.value,
      5,
    );
  });

  it('gives 95 % intervals that cover the true CD0, k and thrust scale in at least 17 of 20 noisy flights', () => {
    // Noise on airspeed, altitude and nz like the demo flight's; neighbouring frames share their rate windows, so
    // intervals from every frame would be far too narrow — the fit keeps one frame per window.
    const truthJson = variantAirframeJson(1.2, 0.9);
    const hits = { cd0: 0, k: 0, scale: 0 };
    const misses: string[] = [];
    const widths: number[][] = [];
    for (let seed = 1; seed <= 20; seed++) {
      const { truth, outcome } = fitted(truthJson, DEMO_LIKE_NOISE, seed);
      const { polar, thrustScale } = outcome.fit;
      if (covers(polar!.cd0, truth.cd0)) hits.cd0 += 1;
      else misses.push(`seed ${seed} cd0 ${polar!.cd0.ci95.join('…')}`);
      if (covers(polar!.k, truth.k)) hits.k += 1;
      else misses.push(`seed ${seed} k ${polar!.k.ci95.join('…')}`);
      if (covers(thrustScale!.scale, 0.9)) hits.scale += 1;
      else misses.push(`seed ${seed} thrust scale ${thrustScale!.scale.ci95.join('…')}`);
      widths.push([polar!.cd0, polar!.k, thrustScale!.scale].map((e) => (e.ci95[1] - e.ci95[0]) / 2 / e.value));
    }
    // Nor do they cover by being wide: half-widths stay near ±7 % (CD0), ±13 % (k) and ±4 % (thrust scale).
    for (const [cd0, k, scale] of widths) {
      expect(cd0).toBeLessThan(0.12);
      expect(k).toBeLessThan(0.25);
      expect(scale).toBeLessThan(0.08);
    }
    expect(hits.cd0, misses.join('; ')).toBeGreaterThanOrEqual(17);
    expect(hits.k, misses.join('; ')).toBeGreaterThanOrEqual(17);
    expect(hits.scale, misses.join('; ')).toBeGreaterThanOrEqual(17);
  });

  it('shows, with noise, what the drag and thrust differences change in the envelope', () => {
    const { truth, outcome } = fitted(variantAirframeJson(1.2, 0.9), DEMO_LIKE_NOISE, 3);
    const { envelopeFile, envelopeFitted } = outcome;
    // More drag and less thrust: the sustained turn shrinks; the stall speed does not move (cl_max is never fitted).
    expect(envelopeFitted.stallSpeedMps).toBe(envelopeFile.stallSpeedMps);
    expect(envelopeFitted.maxSustainedLoadFactor!.value).toBeLessThan(envelopeFile.maxSustainedLoadFactor!.value);
    expect(outcome.fitted.clMax).toBe(file.clMax);
    // And it comes close to the envelope of the airframe that flew, within what the fit's own intervals allow. The
    // largest sustained load factor at constant thrust is n_max = (T/W)/(2·√(CD0·k)) (a standard performance
    // relation — from memory), so its relative error is about δs/s + ½·δCD0/CD0 + ½·δk/k: the bound adds the 95 %
    // half-widths (over 20 noise seeds the error ranges over about ±6 %, so a fixed few-% bound only fits some seeds).
    const c = outcome.conditions;
    const flown = computeEnvelope(truth, {
      altitudeM: c.altitudeM,
      temperature: { isaDeviationK: c.isaDeviationK },
      massKg: c.massKg,
    });
    const halfWidth = (e: Estimate): number => (e.ci95[1] - e.ci95[0]) / 2 / e.value;
    const { polar, thrustScale } = outcome.fit;
    const bound = halfWidth(thrustScale!.scale) + halfWidth(polar!.cd0) / 2 + halfWidth(polar!.k) / 2;
    expect(bound).toBeLessThan(0.2);
    expect(
      relativeError(envelopeFitted.maxSustainedLoadFactor!.value, flown.maxSustainedLoadFactor!.value),
    ).toBeLessThan(bound);
    expect(
      relativeError(envelopeFitted.maxSustainedTurnRateDps!.value, flown.maxSustainedTurnRateDps!.value),
    ).toBeLessThan(bound);
  });
});
