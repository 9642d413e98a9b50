import { describe, expect, it } from 'vitest';
import { stallSpeedMps } from '../../src/core/performance.js';
import { sustainedBandMps } from '../../src/core/sustained-band.js';
import { exampleAirframe } from '../helpers/airframes.js';

const G = 9.80665; // standard gravity, m/s² (ICAO / USSA 1976)

/**
 * Level-turn speeds where constant thrust equals the drag at load factor n:
 * V² = (T/W ± √((T/W)² − 4·n²·CD0·k))·W/(ρ·S·CD0) — a standard performance relation (from memory; it is T = D with
 * D = q·S·CD0 + k·n²·W²/(q·S) solved for q).
 */
function closedForm(thrustN: number, massKg: number, rho: number, s: number, cd0: number, k: number, n: number) {
  const w = massKg * G;
  const tw = thrustN / w;
  const disc = tw * tw - 4 * n * n * cd0 * k;
  if (disc < 0) return null;
  const v = (sign: number) => Math.sqrt(((tw + sign * Math.sqrt(disc)) * w) / (rho * s * cd0));
  return { lo: v(-1), hi: v(1) };
}

// Constant thrust, a high CLmax and structural limit so that the thrust sets both ends of the band.
const thrustBound = exampleAirframe({
  thrust: { model: 'constant', thrust_n: 9, density_exponent: 0 },
  cl_max: 3,
  n_limit_pos: 6,
  vne_mps: undefined,
});

describe('the sustainable speed band', () => {
  for (const [rho, mass, n] of [
    [1.225, 3.2, 2],
    [1.225, 3.2, 2.5],
    [1.0, 3.6, 2],
    [0.9, 2.8, 2.4],
    [1.0, 2.5, 3],
  ] as const) {
    it(`meets the closed form for constant thrust to 0.1 % (ρ ${rho}, ${mass} kg, n ${n})`, () => {
      const ac = thrustBound;
      const expected = closedForm(9, mass, rho, ac.wingAreaM2, ac.cd0, ac.k, n)!;
      const band = sustainedBandMps(ac, rho, mass, n, 100)!;
      expect(band).not.toBeNull();
      expect(Math.abs(band.loMps / expected.lo - 1)).toBeLessThan(1e-3);
      expect(Math.abs(band.hiMps / expected.hi - 1)).toBeLessThan(1e-3);
    });
  }

  it('is null when the thrust cannot hold n at any speed (the closed form has no real root)', () => {
    // (T/W)² < 4·n²·CD0·k: no level turn at n.
    const ac = thrustBound;
    const nMax = 9 / (3.2 * G) / (2 * Math.sqrt(ac.cd0 * ac.k)); // (T/W)·(L/D)max, Anderson ch. 6
    expect(closedForm(9, 3.2, 1.225, ac.wingAreaM2, ac.cd0, ac.k, nMax * 1.01)).toBeNull();
    expect(sustainedBandMps(ac, 1.225, 3.2, nMax * 1.01, 100)).toBeNull();
    expect(sustainedBandMps(ac, 1.225, 3.2, nMax * 0.999, 100)).not.toBeNull();
  });

  it('starts at the stall speed at n when the stall binds, Vs1·√n', () => {
    // Accelerated stall speed Vs1·√n (FAA-H-8083-25, load factor chart; Anderson ch. 6).
    const ac = exampleAirframe({ thrust: { model: 'constant', thrust_n: 9 }, vne_mps: undefined });
    const band = sustainedBandMps(ac, 1.225, 3.2, 1.4, 200)!;
    expect(Math.abs(band.loMps / (stallSpeedMps(ac, 1.225, 3.2) * Math.sqrt(1.4)) - 1)).toBeLessThan(1e-3);
    const thrustEnd = closedForm(9, 3.2, 1.225, ac.wingAreaM2, ac.cd0, ac.k, 1.4)!;
    expect(Math.abs(band.hiMps / thrustEnd.hi - 1)).toBeLessThan(1e-3);
  });

  it('uses max(1, n): at n below 1 the band is the level-flight band, from Vs1', () => {
    const ac = exampleAirframe({ thrust: { model: 'constant', thrust_n: 9 }, vne_mps: undefined });
    const level = sustainedBandMps(ac, 1.225, 3.2, 1, 200)!;
    expect(sustainedBandMps(ac, 1.225, 3.2, 0.4, 200)).toEqual(level);
    expect(sustainedBandMps(ac, 1.225, 3.2, -2, 200)).toEqual(level);
    expect(level.loMps).toBeCloseTo(stallSpeedMps(ac, 1.225, 3.2), 9);
  });

  it('ends at the top speed given (vne as TAS) when the thrust would allow more', () => {
    const band = sustainedBandMps(thrustBound, 1.225, 3.2, 1, 20)!;
    expect(band.hiMps).toBe(20);
  });

  it('is null above the structural limit and when the top is below Vs1', () => {
    expect(sustainedBandMps(thrustBound, 1.225, 3.2, 6.5, 100)).toBeNull();
    expect(sustainedBandMps(thrustBound, 1.225, 3.2, 1, 3)).toBeNull();
  });

  it('leaves out speeds where a thrust table gives no thrust', () => {
    const ac = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [12, 9],
          [18, 9],
        ],
        density_exponent: 0,
      },
      cl_max: 3,
      n_limit_pos: 6,
    });
    const band = sustainedBandMps(ac, 1.225, 3.2, 1, 40)!;
    expect(band.loMps).toBeCloseTo(12, 3);
    expect(band.hiMps).toBeCloseTo(18, 3);
  });

  it('finds a band narrower than the scan step', () => {
    // Thrust known only from 12 to 12.02 m/s.
    const ac = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [12, 9],
          [12.02, 9],
        ],
        density_exponent: 0,
      },
      cl_max: 3,
      n_limit_pos: 6,
    });
    const band = sustainedBandMps(ac, 1.225, 3.2, 1, 100)!;
    expect(band).not.toBeNull();
    expect(band.loMps).toBeCloseTo(12, 3);
    expect(band.hiMps).toBeCloseTo(12.02, 3);
  });
});
