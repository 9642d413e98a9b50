import { describe, expect, it } from 'vitest';
import { defaultNegativeLimit, defaultPositiveLimit } from '../../src/core/aircraft.js';
import {
  computeLimits,
  cornerSpeedMps,
  dragAtLoadFactorN,
  levelTurnAt,
  levelTurnRadiusM,
  levelTurnRateDps,
  loadFactorForBank,
  stallSpeedMps,
  thrustAvailableN,
  thrustLoadFactor,
} from '../../src/core/performance.js';
import { G0_MPS2, KNOT_MPS, POUND_KG } from '../../src/core/units.js';
import { exampleAirframe } from '../helpers/airframes.js';

describe('bank and load factor in a level coordinated turn', () => {
  // FAA Pilot's Handbook of Aeronautical Knowledge (FAA-H-8083-25), load factor chart. The chart's values
  // are truncated, so the check allows 0.001.
  const chart: Array<[number, number, number]> = [
    [30, 1.154, 7.5],
    [45, 1.414, 18.9],
    [60, 2.0, 41.4],
    [70, 2.923, 71.0],
  ];
  for (const [bankDeg, n, stallIncreasePct] of chart) {
    it(`gives n = ${n} at ${bankDeg}° of bank and the bank back from n`, () => {
      expect(Math.abs(loadFactorForBank(bankDeg) - n)).toBeLessThan(0.001);
      expect(levelTurnAt(loadFactorForBank(bankDeg), 20).bankDeg).toBeCloseTo(bankDeg, 9);
    });
    it(`raises the stall speed by ${stallIncreasePct} % at ${bankDeg}° of bank`, () => {
      // Same chart: stall speed grows with √n (accelerated stall).
      const ac = exampleAirframe();
      const ratio = stallSpeedMps(ac, 1.225, 3.2, loadFactorForBank(bankDeg)) / stallSpeedMps(ac, 1.225, 3.2);
      expect((ratio - 1) * 100).toBeCloseTo(stallIncreasePct, 0);
    });
  }

  it('puts the standard-rate (3°/s) bank within 1° of 15 % of TAS in knots from 80 to 160 kt', () => {
    // Instrument Flying Handbook (FAA-H-8083-15B), ch. 7: rule of thumb for the standard-rate bank.
    for (let kt = 80; kt <= 160; kt += 10) {
      const tasMps = kt * KNOT_MPS;
      let lo = 0;
      let hi = 60;
      for (let i = 0; i < 60; i++) {
        const mid = (lo + hi) / 2;
        const rate = levelTurnAt(loadFactorForBank(mid), tasMps).turnRateDps ?? 0;
        if (rate < 3) lo = mid;
        else hi = mid;
      }
      expect(Math.abs(lo - 0.15 * kt)).toBeLessThan(1);
    }
  });

  it('gives radius V²/(g·tan φ) and rate g·tan φ/V', () => {
    // Anderson, Aircraft Performance and Design, ch. 6 (level turn relations).
    const v = 25;
    const bank = 50;
    const turn = levelTurnAt(loadFactorForBank(bank), v);
    const tan = Math.tan((bank * Math.PI) / 180);
    expect(turn.radiusM).toBeCloseTo((v * v) / (G0_MPS2 * tan), 9);
    expect(turn.turnRateDps).toBeCloseTo(((G0_MPS2 * tan) / v) * (180 / Math.PI), 9);
  });

  it('has no turn below n = 1 and no radius at n = 1', () => {
    expect(levelTurnAt(0.9, 20)).toEqual({ bankDeg: null, turnRateDps: null, radiusM: null });
    expect(levelTurnAt(1, 20).radiusM).toBeNull();
    expect(levelTurnAt(1, 20).bankDeg).toBe(0);
  });

  it('gives the turn rate and radius alone exactly as levelTurnAt gives them', () => {
    // Anderson, Aircraft Performance and Design, ch. 6: R = V²/(g·tan φ) and ω = g·tan φ/V at n = 1/cos φ.
    const v = 25;
    const tan = Math.tan((50 * Math.PI) / 180);
    expect(levelTurnRadiusM(loadFactorForBank(50), v)).toBeCloseTo((v * v) / (G0_MPS2 * tan), 9);
    expect(levelTurnRateDps(loadFactorForBank(50), v)).toBeCloseTo(((G0_MPS2 * tan) / v) * (180 / Math.PI), 9);
    for (const n of [0.5, 0.9999, 1, 1.0000001, 1.2, 2, 3.7, 9]) {
      for (const tasMps of [0, 12, 31.5]) {
        const turn = levelTurnAt(n, tasMps);
        expect(levelTurnRateDps(n, tasMps)).toBe(turn.turnRateDps);
        expect(levelTurnRadiusM(n, tasMps)).toBe(turn.radiusM);
      }
    }
  });
});

describe('14 CFR 23.337 default limit load factors', () => {
  // 14 CFR 23.337(a)/(b), normal category: n ≥ 2.1 + 24000/(W + 10000), need not exceed 3.8; negative 0.4 × positive.
  it('gives 3.70 and −1.48 at 5 000 lb', () => {
    const n = defaultPositiveLimit(5000 * POUND_KG);
    expect(n).toBeCloseTo(3.7, 6);
    expect(defaultNegativeLimit(n)).toBeCloseTo(-1.48, 6);
  });
  it('caps at 3.8 (and −1.52) at 2 000 lb where the formula gives 4.10', () => {
    const n = defaultPositiveLimit(2000 * POUND_KG);
    expect(n).toBe(3.8);
    expect(defaultNegativeLimit(n)).toBeCloseTo(-1.52, 9);
  });
  it('applies the default when the airframe file gives no limit', () => {
    const ac = exampleAirframe({ n_limit_pos: undefined, n_limit_neg: undefined });
    expect(ac.nLimitPos).toBe(3.8); // a 3.2 kg UAV: the formula is far above the 3.8 cap
    expect(ac.nLimitPosSource).toBe('14 CFR 23.337(a) default');
    expect(ac.nLimitNeg).toBeCloseTo(-1.52, 9);
  });
});

describe('the sustained (thrust-limited) turn', () => {
  it('reaches (T/W)·(L/D)max at CL = √(CD0/k) with constant thrust', () => {
    // Anderson, Aircraft Performance and Design, ch. 6: n_max = (T/W)(L/D)max with (L/D)max = 1/(2√(k·CD0)),
    // at the lift coefficient √(CD0/k). Stall and structure are moved out of the way.
    const ac = exampleAirframe({
      cl_max: 10,
      n_limit_pos: 50,
      vne_mps: 80,
      thrust: { model: 'constant', thrust_n: 20, density_exponent: 0 },
    });
    const w = 3.2 * G0_MPS2;
    const ldMax = 1 / (2 * Math.sqrt(0.05 * 0.03));
    const expected = (20 / w) * ldMax;
    let best = { n: 0, v: 0 };
    for (let v = 5; v < 80; v += 0.001) {
      const n = thrustLoadFactor(ac, v, 1.225, 3.2)!;
      if (n > best.n) best = { n, v };
    }
    expect(best.n).toBeCloseTo(expected, 4);
    const clAtBest = (best.n * w) / (0.5 * 1.225 * best.v ** 2 * 0.55);
    expect(clAtBest).toBeCloseTo(Math.sqrt(0.03 / 0.05), 2);
  });

  it('matches the worked example of the airframe contract at 12 m/s', () => {
    // The worked example (sea level ISA, 12 m/s): n_stall 1.855, n_thrust 2.957 — checked against
    // q·S·CLmax/W and (qS/W)·√((T − qS·CD0)/(qS·k)) with T = η·P/V (textbook propeller relation).
    const limits = computeLimits(exampleAirframe(), 12, 1.225, 3.2);
    expect(limits.nStall).toBeCloseTo(1.855, 3);
    expect(limits.nThrust).toBeCloseTo(2.957, 3);
    expect(limits.sustainedLimitedBy).toBe('stall');
  });

  it('gives the load factor at which thrust available equals the turn drag', () => {
    // Definition of the sustained turn: T = D at load factor n (Anderson ch. 6).
    const ac = exampleAirframe();
    for (const v of [10, 14, 18, 22]) {
      const n = thrustLoadFactor(ac, v, 1.1, 3.2)!;
      expect(dragAtLoadFactorN(ac, v, 1.1, 3.2, n)).toBeCloseTo(thrustAvailableN(ac.thrust, v, 1.1)!, 6);
    }
  });

  it('is zero where thrust cannot hold level flight', () => {
    const ac = exampleAirframe({ thrust: { model: 'constant', thrust_n: 0.5 } });
    expect(thrustLoadFactor(ac, 25, 1.225, 3.2)).toBe(0);
  });

  it('is unknown outside a thrust table and never extrapolated', () => {
    const ac = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [10, 12],
          [20, 8],
        ],
      },
    });
    expect(thrustLoadFactor(ac, 9.9, 1.225, 3.2)).toBeNull();
    expect(thrustLoadFactor(ac, 20.1, 1.225, 3.2)).toBeNull();
    expect(thrustAvailableN(ac.thrust, 15, 1.225)).toBeCloseTo(10, 9);
    expect(computeLimits(ac, 25, 1.225, 3.2).sustained).toBeNull();
  });

  it('scales thrust with the density ratio to the given exponent', () => {
    const ac = exampleAirframe({ thrust: { model: 'constant', thrust_n: 10, density_exponent: 0.5 } });
    expect(thrustAvailableN(ac.thrust, 15, 1.225 / 4)).toBeCloseTo(5, 9);
  });

  it('caps propeller thrust at the static thrust at low speed', () => {
    // T = η·P/V is singular at V → 0 (textbook relation), hence the cap.
    const ac = exampleAirframe();
    expect(thrustAvailableN(ac.thrust, 1, 1.225)).toBe(14);
    expect(thrustAvailableN(ac.thrust, 20, 1.225)).toBeCloseTo((0.62 * 200) / 20, 9);
  });
});

describe('fixed angle of attack', () => {
  it('scales airspeed with √n and drag with n', () => {
    // Standard textbook result (Anderson ch. 6): at a fixed CL, L = nW needs V ∝ √n; then D = (D/L)·L ∝ n.
    const ac = exampleAirframe();
    const cl = 0.8;
    const w = 3.2 * G0_MPS2;
    const speedAt = (n: number) => Math.sqrt((2 * n * w) / (1.225 * 0.55 * cl));
    for (const n of [1.5, 2, 3]) {
      expect(speedAt(n) / speedAt(1)).toBeCloseTo(Math.sqrt(n), 9);
      const ratio = dragAtLoadFactorN(ac, speedAt(n), 1.225, 3.2, n) / dragAtLoadFactorN(ac, speedAt(1), 1.225, 3.2, 1);
      expect(ratio).toBeCloseTo(n, 9);
    }
  });

  it('puts the corner speed at Vs1·√n_limit_pos', () => {
    // Standard textbook result: V* = √(2·n_lim·W/(ρ·S·CLmax)) = Vs·√n_lim.
    const ac = exampleAirframe();
    expect(cornerSpeedMps(ac, 1.0, 3.2)).toBeCloseTo(stallSpeedMps(ac, 1.0, 3.2) * Math.sqrt(3.8), 9);
    expect(computeLimits(ac, cornerSpeedMps(ac, 1.0, 3.2), 1.0, 3.2).nStall).toBeCloseTo(3.8, 9);
  });
});
