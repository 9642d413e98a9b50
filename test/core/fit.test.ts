import { describe, expect, it } from 'vitest';
import { parseAircraft, type Aircraft } from '../../src/core/aircraft.js';
import { computeFit, createHeldMaximum, fittedAircraft, thinSamples, type FitSample } from '../../src/core/fit.js';
import { thrustAvailableN } from '../../src/core/performance.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { exampleAirframeJson } from '../helpers/airframes.js';

const aircraft: Aircraft = (() => {
  const r = parseAircraft(exampleAirframeJson(), 'example');
  if (!r.ok) throw new Error('example airframe');
  return r.value;
})();

/**
 * Frames of steady flight made from the energy relation Ps = V·(T − D)/W (the energy method; Rutowski 1954 — from
 * memory) with a known polar and thrust: a glide has T = 0, a full-throttle frame T = scale·T_model.
 */
function steadySamples(opts: {
  regime: 'idle' | 'full';
  speeds: number[];
  loadFactor?: number;
  cd0: number;
  k: number;
  thrustScale?: number;
  seconds?: number;
  rateHz?: number;
}): FitSample[] {
  const rho = 1.2;
  const mass = aircraft.massKg;
  const out: FitSample[] = [];
  opts.speeds.forEach((v, i) => {
    const n = opts.loadFactor ?? 1;
    const qS = 0.5 * rho * v * v * aircraft.wingAreaM2;
    const cl = (n * mass * G0_MPS2) / qS;
    const drag = qS * (opts.cd0 + opts.k * cl * cl);
    const thrust = opts.regime === 'idle' ? 0 : (opts.thrustScale ?? 1) * thrustAvailableN(aircraft.thrust, v, rho)!;
    const ps = (v * (thrust - drag)) / (mass * G0_MPS2);
    const frames = (opts.seconds ?? 20) * (opts.rateHz ?? 10);
    for (let f = 0; f < frames; f++) {
      out.push({
        flight: 0,
        stretch: i,
        tS: f / (opts.rateHz ?? 10),
        regime: opts.regime,
        tasMps: v,
        densityKgM3: rho,
        massKg: mass,
        loadFactor: n,
        psMps: ps,
      });
    }
  });
  return out;
}

describe('fit', () => {
  it('keeps one sample per rate window in each stretch and regime', () => {
    const s = steadySamples({ regime: 'idle', speeds: [15, 20], cd0: 0.03, k: 0.05, seconds: 10, rateHz: 50 });
    const thin = thinSamples(s, 1);
    expect(thin).toHaveLength(20); // 10 s at one per second, two stretches
    for (let i = 1; i < 10; i++) expect(thin[i]!.tS - thin[i - 1]!.tS).toBeGreaterThanOrEqual(1);
  });

  it('recovers CD0, k and the thrust scale from noise-free glides and full-throttle turns', () => {
    const truth = { cd0: 0.038, k: 0.058 };
    const speeds = [11, 12.5, 14, 16, 18, 20, 23, 26];
    const samples = [
      ...steadySamples({ regime: 'idle', speeds, ...truth }),
      ...steadySamples({ regime: 'full', speeds: [14, 18, 22], loadFactor: 1.4, ...truth, thrustScale: 0.9 }),
    ];
    const fit = computeFit(aircraft, samples, 1);
    expect(fit.polar).not.toBeNull();
    expect(fit.polar!.cd0.value).toBeCloseTo(truth.cd0, 10);
    expect(fit.polar!.k.value).toBeCloseTo(truth.k, 10);
    expect(fit.polar!.r2).toBeCloseTo(1, 10);
    expect(fit.thrustScale!.scale.value).toBeCloseTo(0.9, 10);
    const fitted = fittedAircraft(aircraft, fit);
    expect(thrustAvailableN(fitted.thrust, 20, 1.225)).toBeCloseTo(
      0.9 * thrustAvailableN(aircraft.thrust, 20, 1.225)!,
      10,
    );
  });

  it('does not estimate the polar from too few idle samples or a narrow CL² range, and says what to fly', () => {
    const few = computeFit(
      aircraft,
      steadySamples({ regime: 'idle', speeds: [15, 20], cd0: 0.03, k: 0.05, seconds: 5 }),
      1,
    );
    expect(few.polar).toBeNull();
    expect(few.polarReason).toMatch(
      /10 independent idle samples.*at least 30.*power-off glides.*at three or more speeds/,
    );
    const narrow = computeFit(aircraft, steadySamples({ regime: 'idle', speeds: [19, 20, 21], cd0: 0.03, k: 0.05 }), 1);
    expect(narrow.polar).toBeNull();
    expect(narrow.polarReason).toMatch(/span CL² .* at least 0\.15/);
  });
});

describe('the highest value held for a time', () => {
  it('is the maximum over windows of the minimum in the window', () => {
    const held = createHeldMaximum(0.5);
    // 10 Hz: 1.0 for 1 s, a 0.3 s spike to 1.4, then 1.2 held for 0.6 s.
    const values = [...Array(10).fill(1.0), 1.4, 1.4, 1.4, ...Array(7).fill(1.2), 0.9, 0.9];
    values.forEach((v, i) => held.push(i / 10, v));
    expect(held.value()).toBe(1.2);
  });

  it('holds nothing shorter than the time, and no hold spans a reset', () => {
    const held = createHeldMaximum(0.5);
    [1, 1, 1, 1].forEach((v, i) => held.push(i / 10, v)); // 0.3 s
    expect(held.value()).toBeNull();
    held.reset();
    [2, 2, 2, 2, 2, 2].forEach((v, i) => held.push(10 + i / 10, v)); // 0.5 s after the reset
    expect(held.value()).toBe(2);
  });
});
