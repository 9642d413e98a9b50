import { describe, expect, it } from 'vitest';
import { computeEnvelope, maximizeByScan, type BankTurn } from '../../src/core/envelope.js';
import { FOOT_M, G0_MPS2, KNOT_MPS } from '../../src/core/units.js';
import { exampleAirframe } from '../helpers/airframes.js';

const SEA_LEVEL = { altitudeM: 0, temperature: {}, massKg: 3.2 };

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

  it('meets the closed-form sustained-turn optima for constant thrust and a parabolic polar', () => {
    // Constant thrust, thrust-limited everywhere that matters (high CLmax and structural limit), sea level ISA.
    // Closed forms from the level-turn equations with D = q·S·CD0 + k·n²·W²/(q·S) (Anderson, Aircraft Performance
    // and Design, ch. 5–6; from memory):
    //   max n = (T/W)/(2√(k·CD0)) at q = T/(2·S·CD0);
    //   max rate ω = g·√(ρ/(W/S)·((T/W)/(2k) − √(CD0/k))) at V = √(2/ρ·(W/S)·√(k/CD0));
    //   min radius R = 4k(W/S)/(g·ρ·(T/W)·√(1 − 4k·CD0/(T/W)²)) at V = √(4k(W/S)/(ρ·(T/W))).
    const thrustN = 9;
    const ac = exampleAirframe({
      thrust: { model: 'constant', thrust_n: thrustN, density_exponent: 0 },
      cl_max: 6,
      n_limit_pos: 10,
      vne_mps: 40,
    });
    const rho = 1.225;
    const env = computeEnvelope(ac, SEA_LEVEL);
    const w = 3.2 * G0_MPS2;
    const ws = w / ac.wingAreaM2;
    const tw = thrustN / w;
    const { cd0, k } = ac;
    const nMax = tw / (2 * Math.sqrt(k * cd0));
    const vNMax = Math.sqrt((2 * (thrustN / (2 * ac.wingAreaM2 * cd0))) / rho);
    const omega = G0_MPS2 * Math.sqrt((rho / ws) * (tw / (2 * k) - Math.sqrt(cd0 / k)));
    const vOmega = Math.sqrt((2 / rho) * ws * Math.sqrt(k / cd0));
    const rMin = (4 * k * ws) / (G0_MPS2 * rho * tw * Math.sqrt(1 - (4 * k * cd0) / (tw * tw)));
    const vRMin = Math.sqrt((4 * k * ws) / (rho * tw));
    expect(Math.abs(env.maxSustainedLoadFactor!.value / nMax - 1)).toBeLessThan(1e-6);
    expect(Math.abs(env.maxSustainedLoadFactor!.speedMps / vNMax - 1)).toBeLessThan(1e-3);
    expect(Math.abs(env.maxSustainedTurnRateDps!.value / ((omega * 180) / Math.PI) - 1)).toBeLessThan(1e-6);
    expect(Math.abs(env.maxSustainedTurnRateDps!.speedMps / vOmega - 1)).toBeLessThan(1e-3);
    expect(Math.abs(env.minSustainedRadiusM!.value / rMin - 1)).toBeLessThan(1e-6);
    expect(Math.abs(env.minSustainedRadiusM!.speedMps / vRMin - 1)).toBeLessThan(1e-3);
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

  it('takes vne_mps as CAS and searches up to it as TAS at the conditions', () => {
    // CAS → TAS by the standard subsonic compressible relations; the shared check value: CAS 100 kt at 10 000 ft
    // ISA is TAS 116.22 kt (computed from the relations with USSA 1976 pressure and temperature).
    const vneKt = 100;
    const ac = exampleAirframe({ vne_mps: vneKt * KNOT_MPS });
    const env = computeEnvelope(ac, { altitudeM: 10000 * FOOT_M, temperature: {}, massKg: 3.2 });
    expect(env.vneCasMps).toBeCloseTo(vneKt * KNOT_MPS, 12);
    expect(env.vneTasMps! / KNOT_MPS).toBeCloseTo(116.22, 1);
    expect(env.searchToMps).toBe(env.vneTasMps);
    expect(env.points.at(-1)!.speedMps).toBe(env.vneTasMps);
    // At sea level ISA, CAS = TAS (definition of calibrated airspeed).
    expect(computeEnvelope(ac, SEA_LEVEL).vneTasMps).toBeCloseTo(vneKt * KNOT_MPS, 9);
  });

  it('notes an optimum that lies on the edge of a thrust table', () => {
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
    expect(env.tableEdgeOptima.map((e) => e.optimum)).toContain('max_sustained');
    expect(env.tableEdgeOptima.every((e) => e.edgeMps === 8.83)).toBe(true);
    // A table wide enough that the optima lie inside it: no note.
    const wide = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [0, 14],
          [40, 4],
        ],
      },
    });
    expect(computeEnvelope(wide, SEA_LEVEL).tableEdgeOptima).toEqual([]);
    expect(computeEnvelope(exampleAirframe(), SEA_LEVEL).tableEdgeOptima).toEqual([]);
  });

  it('gives a turn table per bank: n = 1/cos(bank), Vs1·√n, and the band of the closed form', () => {
    // FAA-H-8083-25 load factor chart: 30° → 1.154, 60° → 2.000 (truncated; 0.001). Stall speed grows as √n.
    // Band ends: the constant-thrust closed form V² = (T/W ± √((T/W)² − 4n²·CD0·k))·W/(ρ·S·CD0) (from memory) where
    // the thrust binds, the accelerated stall speed Vs1·√n where the stall does.
    const thrustN = 9;
    const ac = exampleAirframe({
      thrust: { model: 'constant', thrust_n: thrustN, density_exponent: 0 },
      vne_mps: 40,
    });
    const env = computeEnvelope(ac, SEA_LEVEL, undefined, [30, 60, 75]);
    expect(env.turns.map((t) => t.bankDeg)).toEqual([30, 60, 75]);
    const [t30, t60, t75] = env.turns as [BankTurn, BankTurn, BankTurn];
    expect(Math.abs(t30.loadFactor - 1.154)).toBeLessThan(0.001);
    expect(Math.abs(t60.loadFactor - 2.0)).toBeLessThan(0.001);
    expect(t60.stallSpeedMps).toBeCloseTo(env.stallSpeedMps * Math.SQRT2, 9);
    const w = 3.2 * G0_MPS2;
    const tw = thrustN / w;
    const hi = (n: number) =>
      Math.sqrt(((tw + Math.sqrt(tw * tw - 4 * n * n * ac.cd0 * ac.k)) * w) / (1.225 * ac.wingAreaM2 * ac.cd0));
    for (const t of [t30, t60]) {
      expect(Math.abs(t.sustained!.minSpeedMps / t.stallSpeedMps - 1)).toBeLessThan(1e-3);
      expect(Math.abs(t.sustained!.maxSpeedMps / hi(t.loadFactor) - 1)).toBeLessThan(1e-3);
      // Rate and radius at the band's lowest speed: ω = g·tan φ/V, R = V²/(g·tan φ) (Anderson ch. 6).
      const tan = Math.tan((t.bankDeg * Math.PI) / 180);
      const v = t.sustained!.minSpeedMps;
      expect(t.sustained!.turnRateDps).toBeCloseTo(((G0_MPS2 * tan) / v) * (180 / Math.PI), 6);
      expect(t.sustained!.radiusM!).toBeCloseTo((v * v) / (G0_MPS2 * tan), 6);
    }
    // n = 3.86 at 75° is beyond what 9 N can hold: (T/W)·(L/D)max = 2.36 (Anderson ch. 6).
    expect(tw / (2 * Math.sqrt(ac.k * ac.cd0))).toBeLessThan(t75.loadFactor);
    expect(t75.sustained).toBeNull();
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
