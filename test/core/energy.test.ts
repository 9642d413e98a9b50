import { describe, expect, it } from 'vitest';
import {
  impliedDragErrorPct,
  modelSpecificExcessPowerMps,
  modelThrustN,
  psResidualMps,
  specificExcessPowerMps,
  timeToStallS,
  timeToStallUtilizationS,
} from '../../src/core/energy.js';
import { dragAtLoadFactorN, stallLoadFactor, thrustAvailableN } from '../../src/core/performance.js';
import { createRateEstimator } from '../../src/core/rate-estimator.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { exampleAirframe } from '../helpers/airframes.js';

const G = 9.80665; // standard gravity, m/s² (ICAO / USSA 1976)

describe('measured specific excess power', () => {
  it('matches a worked example of the energy method', () => {
    // Worked by hand from Ps = dh/dt + (V/g)·dV/dt (the energy method, Rutowski 1954; as set out in Anderson,
    // Introduction to Flight, ch. 6 — from memory, the figures are ours): climbing at 3 m/s while decelerating at
    // 1 m/s² through 50 m/s, Ps = 3 − 50/9.80665 = 3 − 5.09858 = −2.09858 m/s: the climb is bought with more kinetic energy than
    // it gains in height.
    expect(specificExcessPowerMps(3, 50, -1)).toBeCloseTo(-2.09858, 5);
  });

  it('is the rate of change of the energy height h + V²/(2g)', () => {
    // Energy height He = h + V²/(2·g0) and Ps = dHe/dt (Rutowski 1954, from memory): a central difference of He
    // along a climbing, decelerating path.
    const h = (t: number) => 120 + 2.5 * t + 0.3 * t * t;
    const v = (t: number) => 42 - 0.8 * t + 0.05 * t * t;
    const he = (t: number) => h(t) + v(t) ** 2 / (2 * G);
    for (const t of [0, 1.5, 4]) {
      const d = 1e-4;
      const dHe = (he(t + d) - he(t - d)) / (2 * d);
      const ps = specificExcessPowerMps(2.5 + 0.6 * t, v(t), -0.8 + 0.1 * t)!;
      expect(ps).toBeCloseTo(dHe, 6);
    }
  });

  it('is null when a rate or the speed is missing', () => {
    expect(specificExcessPowerMps(null, 30, 0)).toBeNull();
    expect(specificExcessPowerMps(1, null, 0)).toBeNull();
    expect(specificExcessPowerMps(1, 30, null)).toBeNull();
    expect(psResidualMps(null, 1)).toBeNull();
    expect(psResidualMps(1, null)).toBeNull();
    expect(psResidualMps(1.5, 0.25)).toBe(1.25);
  });
});

describe('modelled specific excess power', () => {
  const constantThrust = (thrustN: number) =>
    exampleAirframe({ thrust: { model: 'constant', thrust_n: thrustN }, vne_mps: undefined });

  it('vanishes in level flight at the speeds where thrust equals drag (closed form for constant thrust)', () => {
    // Level-flight speeds with T = D: V² = (T/W ± √((T/W)² − 4·CD0·k))·W/(ρ·S·CD0) — the standard performance
    // relation (Anderson, Aircraft Performance and Design, ch. 5; from memory), n = 1.
    const ac = constantThrust(6);
    const w = 3.2 * G;
    const tw = 6 / w;
    const root = Math.sqrt(tw * tw - 4 * ac.cd0 * ac.k);
    for (const sign of [1, -1]) {
      const v = Math.sqrt(((tw + sign * root) * w) / (1.225 * ac.wingAreaM2 * ac.cd0));
      const ps = modelSpecificExcessPowerMps(ac, {
        tasMps: v,
        densityKgM3: 1.225,
        massKg: 3.2,
        loadFactor: 1,
        throttle: 1,
      });
      expect(Math.abs(ps!)).toBeLessThan(1e-9);
    }
  });

  it('at idle equals minus the glide sink rate V/(L/D)', () => {
    // Gliding flight: sink rate = V·sin γ = V·D/W = V/(L/D) (Anderson, Introduction to Flight, ch. 6; from memory).
    const ac = exampleAirframe();
    const v = 14;
    const q = 0.5 * 1.225 * v * v;
    const cl = (3.2 * G) / (q * ac.wingAreaM2);
    const liftToDrag = cl / (ac.cd0 + ac.k * cl * cl);
    const ps = modelSpecificExcessPowerMps(ac, {
      tasMps: v,
      densityKgM3: 1.225,
      massKg: 3.2,
      loadFactor: 1,
      throttle: 0,
    });
    expect(ps).toBeCloseTo(-v / liftToDrag, 9);
  });

  it('reproduces the energy rate of an independently integrated point-mass flight (full throttle and idle)', () => {
    // Point-mass equations along the path (Anderson, Aircraft Performance and Design, ch. 4; from memory):
    // m·dV/dt = T − D − W·sin γ, dh/dt = V·sin γ, with the lift n·W. Integrated here by RK4 with a path angle that
    // swings; the measured Ps (rates from the estimator) must match the model's V·(T − D)/W frame by frame.
    const ac = exampleAirframe();
    for (const throttle of [1, 0]) {
      const m = 3.2;
      const rho = 1.225;
      const gamma = (t: number) => (throttle === 1 ? 0.12 : -0.12) + 0.05 * Math.sin(0.7 * t);
      const n = (t: number) => 1.3 + 0.2 * Math.sin(0.4 * t);
      const thrust = (v: number) => (throttle === 1 ? thrustAvailableN(ac.thrust, v, rho)! : 0);
      const dvdt = (t: number, v: number) =>
        (thrust(v) - dragAtLoadFactorN(ac, v, rho, m, n(t)) - m * G0_MPS2 * Math.sin(gamma(t))) / m;
      const dhdt = (t: number, v: number) => v * Math.sin(gamma(t));
      const hz = 1000;
      const dt = 1 / hz;
      let v = 18;
      let h = 200;
      const vRate = createRateEstimator(0.05);
      const hRate = createRateEstimator(0.05);
      let checked = 0;
      for (let i = 0; i <= 4 * hz; i++) {
        const t = i * dt;
        const a = vRate.push(t, v);
        const c = hRate.push(t, h);
        if (a !== null && c !== null && i % 50 === 0) {
          // The window's slope belongs to its middle (t − W/2): compare the model there.
          const tm = t - 0.025;
          const vm = v - a * 0.025;
          const measured = specificExcessPowerMps(c, vm, a)!;
          const model = modelSpecificExcessPowerMps(ac, {
            tasMps: vm,
            densityKgM3: rho,
            massKg: m,
            loadFactor: n(tm),
            throttle,
          })!;
          expect(Math.abs(measured - model), `throttle ${throttle} at ${t.toFixed(2)} s`).toBeLessThan(2e-3);
          checked++;
        }
        // RK4 step.
        const k1v = dvdt(t, v);
        const k1h = dhdt(t, v);
        const k2v = dvdt(t + dt / 2, v + (dt / 2) * k1v);
        const k2h = dhdt(t + dt / 2, v + (dt / 2) * k1v);
        const k3v = dvdt(t + dt / 2, v + (dt / 2) * k2v);
        const k3h = dhdt(t + dt / 2, v + (dt / 2) * k2v);
        const k4v = dvdt(t + dt, v + dt * k3v);
        const k4h = dhdt(t + dt, v + dt * k3v);
        v += (dt / 6) * (k1v + 2 * k2v + 2 * k3v + k4v);
        h += (dt / 6) * (k1h + 2 * k2h + 2 * k3h + k4h);
      }
      expect(checked).toBeGreaterThan(70);
    }
  });

  it('takes the thrust available at full throttle (≥ 0.98), none at idle (≤ 0.02), and nothing in between', () => {
    const ac = exampleAirframe();
    const full = thrustAvailableN(ac.thrust, 20, 1.225);
    expect(modelThrustN(ac, 0.98, 20, 1.225)).toBe(full);
    expect(modelThrustN(ac, 1, 20, 1.225)).toBe(full);
    expect(modelThrustN(ac, 0.02, 20, 1.225)).toBe(0);
    expect(modelThrustN(ac, 0, 20, 1.225)).toBe(0);
    expect(modelThrustN(ac, 0.5, 20, 1.225)).toBeNull();
    expect(modelThrustN(ac, 0.97, 20, 1.225)).toBeNull();
    expect(modelThrustN(ac, 0.03, 20, 1.225)).toBeNull();
  });

  it('assumes full or idle for frames without a throttle only when told to', () => {
    const ac = exampleAirframe();
    expect(modelThrustN(ac, null, 20, 1.225)).toBeNull();
    expect(modelThrustN(ac, null, 20, 1.225, 'full')).toBe(thrustAvailableN(ac.thrust, 20, 1.225));
    expect(modelThrustN(ac, null, 20, 1.225, 'idle')).toBe(0);
    // A frame that carries a throttle is taken at its word.
    expect(modelThrustN(ac, 0.5, 20, 1.225, 'full')).toBeNull();
    const input = { tasMps: 20, densityKgM3: 1.225, massKg: 3.2, loadFactor: 1, throttle: null };
    expect(modelSpecificExcessPowerMps(ac, input)).toBeNull();
    expect(modelSpecificExcessPowerMps(ac, { ...input, assumeThrottle: 'idle' })).toBeLessThan(0);
  });

  it('is null where a thrust table does not cover the speed', () => {
    const ac = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [10, 8],
          [20, 6],
        ],
      },
    });
    const input = { densityKgM3: 1.225, massKg: 3.2, loadFactor: 1, throttle: 1 };
    expect(modelSpecificExcessPowerMps(ac, { ...input, tasMps: 25 })).toBeNull();
    expect(modelSpecificExcessPowerMps(ac, { ...input, tasMps: 15 })).not.toBeNull();
    // At idle the table is not needed.
    expect(modelSpecificExcessPowerMps(ac, { ...input, tasMps: 25, throttle: 0 })).not.toBeNull();
  });

  it('turns a residual into the drag error that explains it: 20 % more drag at idle gives +20 %', () => {
    // At idle Ps = −V·D/W; with D' = 1.2·D the measured Ps is −1.2·V·D/W, residual −0.2·V·D/W, and
    // ΔD/D = −W·residual/(V·D) = +20 % (the energy relation solved for D).
    const ac = exampleAirframe();
    const v = 16;
    const d = dragAtLoadFactorN(ac, v, 1.225, 3.2, 1.2);
    const w = 3.2 * G;
    const residual = (-v * 1.2 * d) / w - (-v * d) / w;
    expect(impliedDragErrorPct(residual, v, d, 3.2)).toBeCloseTo(20, 9);
    expect(impliedDragErrorPct(residual, 0, d, 3.2)).toBeNull();
  });
});

describe('time to the stall', () => {
  const ac = exampleAirframe();
  const rho = 1.225;
  const m = 3.2;
  const uAt = (v: number, n: number) => n / stallLoadFactor(ac, v, rho, m);

  it('is the time for the deceleration to carry the stall utilization up to the threshold', () => {
    // Independent check: step the speed down at the constant deceleration until n/n_stall(V) (n_stall = q·S·CLmax/W,
    // Anderson ch. 6) reaches the threshold, and compare the time with the prediction.
    const v0 = 20;
    const n = 1.8;
    const decel = -1.5;
    for (const target of [0.8, 0.9]) {
      const predicted = timeToStallUtilizationS(
        { flying: true, tasMps: v0, loadFactor: n, stallUtilization: uAt(v0, n), dvdtMps2: decel },
        target,
      )!;
      let t = 0;
      while (uAt(v0 + decel * t, n) < target) t += 1e-5;
      expect(predicted).toBeCloseTo(t, 4);
    }
  });

  it('gives caution and warning times together, the caution first', () => {
    const r = timeToStallS(
      { flying: true, tasMps: 20, loadFactor: 1.8, stallUtilization: uAt(20, 1.8), dvdtMps2: -1.5 },
      { stallCaution: 0.8, stallWarning: 0.9 },
    );
    expect(r.cautionS).not.toBeNull();
    expect(r.warningS!).toBeGreaterThan(r.cautionS!);
  });

  it('is 0 at or above the threshold while decelerating', () => {
    const base = { flying: true, tasMps: 12, loadFactor: 1.5, dvdtMps2: -0.5 };
    expect(timeToStallUtilizationS({ ...base, stallUtilization: 0.8 }, 0.8)).toBe(0);
    expect(timeToStallUtilizationS({ ...base, stallUtilization: 0.95 }, 0.8)).toBe(0);
  });

  it('is null when not flying, at n ≤ 0, when not decelerating, without a rate, or beyond 60 s', () => {
    const base = { flying: true, tasMps: 20, loadFactor: 1.8, stallUtilization: uAt(20, 1.8), dvdtMps2: -1.5 };
    expect(timeToStallUtilizationS(base, 0.8)).not.toBeNull();
    expect(timeToStallUtilizationS({ ...base, flying: false }, 0.8)).toBeNull();
    expect(timeToStallUtilizationS({ ...base, loadFactor: 0 }, 0.8)).toBeNull();
    expect(timeToStallUtilizationS({ ...base, loadFactor: -1 }, 0.8)).toBeNull();
    expect(timeToStallUtilizationS({ ...base, dvdtMps2: 0 }, 0.8)).toBeNull();
    expect(timeToStallUtilizationS({ ...base, dvdtMps2: 0.3 }, 0.8)).toBeNull();
    expect(timeToStallUtilizationS({ ...base, dvdtMps2: null }, 0.8)).toBeNull();
    expect(timeToStallUtilizationS({ ...base, stallUtilization: 0.95, dvdtMps2: 0.3 }, 0.8)).toBeNull();
    // A slow bleed: (V − V*)/0.01 is far beyond 60 s.
    expect(timeToStallUtilizationS({ ...base, dvdtMps2: -0.01 }, 0.8)).toBeNull();
  });
});
