import { describe, expect, it } from 'vitest';
import { computeAirState } from '../../src/core/atmosphere.js';
import { thrustAvailableN } from '../../src/core/performance.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { createFrameWriter } from '../../src/sim/frames.js';
import { parseFlightPlan, type FlightPlan } from '../../src/sim/plan.js';
import { simulateFlight, type SimSample } from '../../src/sim/point-mass.js';
import { exampleAirframe } from '../helpers/airframes.js';

function plan(json: unknown): FlightPlan {
  const result = parseFlightPlan(json, 'test-plan.json');
  if (!result.ok) throw new Error(result.problems.join('\n'));
  return result.value;
}

const quiet = { noise: { nz_sd: 0, airspeed_sd_mps: 0 } };
const aircraft = exampleAirframe();
const fly = (json: unknown): SimSample[] => [...simulateFlight(aircraft, plan(json), { rateHz: 10 })];

describe('glide segment', () => {
  it('holds the commanded speed by descending, with the glide angle tan γ = −CD/CL', () => {
    const samples = fly({
      ...quiet,
      start: { alt_m: 400, tas_mps: 20 },
      segments: [{ type: 'glide', tas_mps: 16, duration_s: 40, label: 'glide' }],
    });
    const last = samples[samples.length - 1]!;
    expect(last.tasMps).toBeCloseTo(16, 1);
    expect(last.thrustN).toBe(0);
    expect(last.throttle).toBe(0);
    // Steady unpowered glide: L = W·cos γ and D = −W·sin γ, so tan γ = −D/L = −CD/CL (Anderson, Introduction to
    // Flight, "gliding flight" — from memory), with CL from the flown load factor and CD from the polar.
    const cd = aircraft.cd0 + aircraft.k * last.cl * last.cl;
    expect(Math.tan((last.flightPathDeg * Math.PI) / 180)).toBeCloseTo(-cd / last.cl, 3);
    expect(last.altM).toBeLessThan(400 - 20);
    // The sink rate is V·sin γ.
    const before = samples[samples.length - 11]!;
    expect((last.altM - before.altM) / (last.tS - before.tS)).toBeCloseTo(
      16 * Math.sin((last.flightPathDeg * Math.PI) / 180),
      2,
    );
  });

  it('glides in a turn at an optional bank and holds the entry speed without tas_mps', () => {
    const samples = fly({
      ...quiet,
      start: { alt_m: 400, tas_mps: 18 },
      segments: [{ type: 'glide', bank_deg: -30, duration_s: 30 }],
    });
    const last = samples[samples.length - 1]!;
    expect(last.bankDeg).toBeCloseTo(-30, 3);
    expect(last.tasMps).toBeCloseTo(18, 1);
    expect(last.flightPathDeg).toBeLessThan(0);
  });

  it('refuses a glide with throttle or a vertical speed (the throttle is 0 and the path holds the speed)', () => {
    const r = parseFlightPlan(
      { start: { alt_m: 100, tas_mps: 18 }, segments: [{ type: 'glide', duration_s: 5, throttle: 0.5 }] },
      'p.json',
    );
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.problems.join()).toMatch(/segments\[0\]\.throttle is not a known key/);
  });
});

describe('throttle', () => {
  it('with a fixed throttle the speed is free: it accelerates as (T − D)/m and frames carry the throttle', () => {
    const p = plan({
      ...quiet,
      start: { alt_m: 0, tas_mps: 14 },
      segments: [{ type: 'straight', throttle: 0.8, duration_s: 2 }],
    });
    const samples = [...simulateFlight(aircraft, p, { rateHz: 10 })];
    const first = samples[0]!;
    const rho = computeAirState(0).densityKgM3;
    // dV/dt = (T − D)/m in level flight (Newton's second law along the path; Anderson, Aircraft Performance and
    // Design, ch. 6), T = 0.8 × the thrust available.
    expect(first.thrustN).toBeCloseTo(0.8 * thrustAvailableN(aircraft.thrust, 14, rho)!, 9);
    const dvdt = (samples[1]!.tasMps - first.tasMps) / 0.1;
    expect(dvdt).toBeCloseTo((first.thrustN - first.dragN) / aircraft.massKg, 1);
    expect(samples[samples.length - 1]!.tasMps).toBeGreaterThan(14.1);
    const frames = samples.map(createFrameWriter(aircraft, p, { seed: 1 }));
    for (const f of frames) {
      expect(f['throttle']).toBe(0.8);
      expect(f['simulated']).toBe(true);
    }
  });

  it('a full-throttle turn beyond the thrust limit bleeds speed at (T − D)/m', () => {
    const samples = fly({
      ...quiet,
      start: { alt_m: 0, tas_mps: 20 },
      segments: [{ type: 'turn', bank_deg: 72, throttle: 1, duration_s: 6 }],
    });
    const s = samples[40]!; // 4 s in: the bank is established
    expect(s.bankDeg).toBeCloseTo(72, 1);
    const next = samples[41]!;
    expect(s.throttle).toBe(1);
    expect((next.tasMps - s.tasMps) / 0.1).toBeCloseTo(
      (s.thrustN - s.dragN) / aircraft.massKg - G0_MPS2 * Math.sin((s.flightPathDeg * Math.PI) / 180),
      1,
    );
    expect(s.thrustN - s.dragN).toBeLessThan(0);
    expect(samples[samples.length - 1]!.tasMps).toBeLessThan(19);
  });

  it('reports the autothrottle as the fraction of the thrust available in use', () => {
    const samples = fly({
      ...quiet,
      start: { alt_m: 0, tas_mps: 16 },
      segments: [{ type: 'straight', duration_s: 5 }],
    });
    const last = samples[samples.length - 1]!;
    const rho = computeAirState(0).densityKgM3;
    expect(last.throttle).toBeCloseTo(last.thrustN / thrustAvailableN(aircraft.thrust, last.tasMps, rho)!, 9);
    expect(last.throttle).toBeGreaterThan(0);
    expect(last.throttle).toBeLessThan(1);
  });
});
