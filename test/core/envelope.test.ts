import { describe, expect, it } from 'vitest';
import { computeEnvelope, maximizeByScan } from '../../src/core/envelope.js';
import { computeLimits, levelTurnAt } from '../../src/core/performance.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { exampleAirframe } from '../helpers/airframes.js';

const SEA_LEVEL = { altitudeM: 0, temperature: {}, massKg: 3.2 };

/** Brute force over a very fine grid: the reference the refined search must meet to 0.5 %. */
function bruteForce(f: (v: number) => number | null, lo: number, hi: number) {
  let best = { value: -Infinity, speedMps: NaN };
  for (let v = lo; v <= hi; v += (hi - lo) / 200_000) {
    const y = f(v);
    if (y !== null && y > best.value) best = { value: y, speedMps: v };
  }
  return best;
}

describe('the turn envelope', () => {
  it('reproduces the worked example of the envelope contract', () => {
    // The contract's worked example: Vs1 8.811, corner 17.175, max sustained n 3.031 at 15.34 m/s,
    // 104.80 °/s, 8.386 m. Vs1 = √(2W/(ρS·CLmax)) and V* = Vs1·√n_lim are textbook results (Anderson ch. 6).
    const env = computeEnvelope(exampleAirframe(), SEA_LEVEL, [12]);
    expect(env.stallSpeedMps).toBeCloseTo(8.811, 3);
    expect(env.cornerSpeedMps).toBeCloseTo(17.175, 3);
    expect(env.maxSustainedLoadFactor!.value).toBeCloseTo(3.031, 3);
    expect(env.maxSustainedLoadFactor!.speedMps).toBeCloseTo(15.34, 2);
    expect(env.maxSustainedTurnRateDps!.value).toBeCloseTo(104.8, 1);
    expect(env.minSustainedRadiusM!.value).toBeCloseTo(8.386, 2);
    const p = env.points[0]!;
    expect(p.sustained.bankDeg).toBeCloseTo(57.38, 2);
    expect(p.sustained.turnRateDps).toBeCloseTo(73.16, 2);
    expect(p.sustained.radiusM).toBeCloseTo(9.399, 3);
  });

  it('finds the optima to 0.5 % of a brute-force search, also at altitude and for other airframes', () => {
    const cases = [
      { ac: exampleAirframe(), rho: 1.225, cond: SEA_LEVEL },
      {
        ac: exampleAirframe({ thrust: { model: 'constant', thrust_n: 9 } }),
        rho: 0,
        cond: { altitudeM: 3000, temperature: {}, massKg: 3.6 },
      },
      {
        ac: exampleAirframe({ n_limit_pos: 2.2, vne_mps: undefined }),
        rho: 0,
        cond: { altitudeM: 1000, temperature: { isaDeviationK: 15 }, massKg: 3.2 },
      },
    ];
    for (const { ac, cond } of cases) {
      const env = computeEnvelope(ac, cond);
      const rho = env.densityKgM3;
      const sustained = (v: number) => computeLimits(ac, v, rho, cond.massKg).sustained;
      const n = bruteForce(sustained, env.searchFromMps, env.searchToMps);
      const rate = bruteForce((v) => levelTurnAt(sustained(v)!, v).turnRateDps, env.searchFromMps, env.searchToMps);
      const radius = bruteForce(
        (v) => {
          const r = levelTurnAt(sustained(v)!, v).radiusM;
          return r === null ? null : -r;
        },
        env.searchFromMps,
        env.searchToMps,
      );
      expect(Math.abs(env.maxSustainedLoadFactor!.value / n.value - 1)).toBeLessThan(0.005);
      expect(Math.abs(env.maxSustainedTurnRateDps!.value / rate.value - 1)).toBeLessThan(0.005);
      expect(Math.abs(env.minSustainedRadiusM!.value / -radius.value - 1)).toBeLessThan(0.005);
    }
  });

  it('keeps the three optima together when the sustained turn exists only in a narrow speed band', () => {
    // Thrust known only from 5 to 8.83 m/s, just above Vs1 = 8.811 m/s: the turn exists on a 0.02 m/s band.
    const ac = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [5, 14],
          [8.83, 14],
        ],
      },
    });
    const env = computeEnvelope(ac, SEA_LEVEL);
    expect(env.maxSustainedLoadFactor!.value).toBeGreaterThan(1);
    expect(env.maxSustainedTurnRateDps).not.toBeNull();
    expect(env.minSustainedRadiusM).not.toBeNull();
    // At the top of the band n = n_stall = q·S·CLmax/W (Anderson ch. 6); rate and radius from the level-turn relations.
    const n = env.maxSustainedLoadFactor!.value;
    const v = env.maxSustainedTurnRateDps!.speedMps;
    expect(env.maxSustainedTurnRateDps!.value).toBeCloseTo(((G0_MPS2 * Math.sqrt(n * n - 1)) / v) * (180 / Math.PI), 6);
  });

  it('gives bank 0, rate 0 and no radius at Vs1 (n = 1), not rounding noise', () => {
    for (const altitudeM of [0, 3000, 7000]) {
      const env = computeEnvelope(exampleAirframe(), { altitudeM, temperature: {}, massKg: 3.2 });
      const first = env.points[0]!;
      expect(first.sustained.bankDeg).toBe(0);
      expect(first.sustained.turnRateDps).toBe(0);
      expect(first.sustained.radiusM).toBeNull();
    }
  });

  it('reports no optima when no sustained turn exists', () => {
    const env = computeEnvelope(exampleAirframe({ thrust: { model: 'constant', thrust_n: 1 } }), SEA_LEVEL);
    expect(env.maxSustainedLoadFactor).toBeNull();
    expect(env.maxSustainedTurnRateDps).toBeNull();
    expect(env.minSustainedRadiusM).toBeNull();
  });

  it('searches up to 4·Vs1 when the airframe has no vne', () => {
    const env = computeEnvelope(exampleAirframe({ vne_mps: undefined }), SEA_LEVEL);
    expect(env.searchToMps).toBeCloseTo(4 * env.stallSpeedMps, 9);
    expect(env.points.at(-1)!.speedMps).toBeCloseTo(4 * env.stallSpeedMps, 9);
    expect(env.points).toHaveLength(31);
  });

  it('names the smallest limit and gives the turn at it', () => {
    const env = computeEnvelope(exampleAirframe(), SEA_LEVEL, [10, 16, 20, 29]);
    expect(env.points.map((p) => p.sustained.limitedBy)).toEqual(['stall', 'thrust', 'thrust', 'thrust']);
    expect(env.points.map((p) => p.instantaneous.limitedBy)).toEqual(['stall', 'stall', 'structure', 'structure']);
    const p = env.points[2]!;
    expect(p.instantaneous.n).toBe(3.8);
    expect(p.instantaneous.turnRateDps).toBeCloseTo(((G0_MPS2 * Math.sqrt(3.8 ** 2 - 1)) / 20) * (180 / Math.PI), 9);
  });
});

describe('the optimum search', () => {
  it('lands on a kink where two curves cross', () => {
    // min(x, 2 − x) peaks at the kink x = 1 — a smooth-only method would wander here.
    const best = maximizeByScan((x) => Math.min(x, 2 - x), 0, 2.3);
    expect(best!.speedMps).toBeCloseTo(1, 6);
    expect(best!.value).toBeCloseTo(1, 6);
  });
  it('returns null when the function is nowhere defined', () => {
    expect(maximizeByScan(() => null, 0, 1)).toBeNull();
  });
});
