import { describe, expect, it } from 'vitest';
import { computeBankSchedule } from '../../src/core/bank-schedule.js';
import { DEFAULT_THRESHOLDS } from '../../src/core/thresholds.js';
import { computeAirState } from '../../src/core/atmosphere.js';
import { G0_MPS2 } from '../../src/core/units.js';
import { exampleAirframe } from '../helpers/airframes.js';

/** Bank of a level coordinated turn at n: acos(1/n) (FAA-H-8083-25 load-factor relation), 0 for n ≤ 1. */
const bankDeg = (n: number) => (n > 1 ? (Math.acos(1 / n) * 180) / Math.PI : 0);

describe('the bank-limit schedule', () => {
  it('applies the caution thresholds to each limit at every altitude, mass and speed', () => {
    const ac = exampleAirframe();
    const rows = computeBankSchedule(ac, DEFAULT_THRESHOLDS, {
      altitudesM: [0, 2000],
      massesKg: [3, 3.5],
      temperature: {},
      speedsMps: [11, 16, 24],
    });
    expect(rows).toHaveLength(2 * 2 * 3);
    for (const r of rows) {
      const rho = computeAirState(r.altitudeM).densityKgM3;
      const qS = 0.5 * rho * r.speedMps ** 2 * 0.55;
      const w = r.massKg * G0_MPS2;
      const nStall = (qS * 1.2) / w; // q·S·CLmax/W
      const thrust = Math.min(14, (0.62 * 200) / r.speedMps) * (rho / 1.225); // T = min(static, η·P/V)·σ
      const excess = thrust - qS * 0.03;
      const nThrust = excess <= 0 ? 0 : (qS / w) * Math.sqrt(excess / (qS * 0.05)); // Anderson ch. 6
      const nInstant = Math.min(0.8 * nStall, 0.8 * 3.8);
      expect(r.bankLimitDeg).toBeCloseTo(bankDeg(nInstant), 6);
      expect(r.bankSustainedDeg).toBeCloseTo(bankDeg(Math.min(nInstant, 1.0 * nThrust)), 6);
    }
  });

  it('leaves the thrust term out where a thrust table does not cover the speed', () => {
    const ac = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [8, 12],
          [15, 10],
        ],
      },
    });
    const [inside, outside] = computeBankSchedule(ac, DEFAULT_THRESHOLDS, {
      altitudesM: [0],
      massesKg: [3.2],
      temperature: {},
      speedsMps: [14, 20],
    });
    expect(inside!.nThrust).not.toBeNull();
    expect(outside!.nThrust).toBeNull();
    expect(outside!.bankSustainedDeg).toBe(outside!.bankLimitDeg);
  });
});
