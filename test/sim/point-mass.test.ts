import { describe, expect, it } from 'vitest';
import { G0_MPS2, RHO0_KG_M3 } from '../../src/core/units.js';
import { parseFlightPlan, type FlightPlan } from '../../src/sim/plan.js';
import { SimulationError, simulateFlight, type SimSample } from '../../src/sim/point-mass.js';
import { exampleAirframe } from '../helpers/airframes.js';

function plan(json: unknown): FlightPlan {
  const result = parseFlightPlan(json, 'test-plan.json');
  if (!result.ok) throw new Error(result.problems.join('\n'));
  return result.value;
}

const quiet = { noise: { nz_sd: 0, airspeed_sd_mps: 0 } };

function fly(json: unknown, rateHz = 10): SimSample[] {
  return [...simulateFlight(exampleAirframe(), plan(json), { rateHz })];
}

/** Heading change per second between two samples, deg/s, unwrapped. */
function headingRateDps(a: SimSample, b: SimSample): number {
  let d = b.headingDeg - a.headingDeg;
  if (d > 180) d -= 360;
  if (d < -180) d += 360;
  return d / (b.tS - a.tS);
}

describe('a steady level turn', () => {
  // Level coordinated turn: n = 1/cos φ and ω = g·tan φ/V (Anderson, Aircraft Performance and Design, ch. 6;
  // FAA-H-8083-25, "Load factors", load-factor chart: 30° → 1.154, 45° → 1.414, 60° → 2.000, truncated).
  const chart: Array<[number, number]> = [
    [30, 1.154],
    [45, 1.414],
    [60, 2.0],
  ];
  for (const [bankDeg, chartN] of chart) {
    it(`settles at n = 1/cos(${bankDeg}°) and the turn rate g·tan(bank)/V`, () => {
      const samples = fly({
        ...quiet,
        start: { alt_m: 0, tas_mps: 18 },
        segments: [{ type: 'turn', bank_deg: bankDeg, duration_s: 30 }],
      });
      const last = samples[samples.length - 1]!;
      const before = samples[samples.length - 11]!; // 1 s earlier
      expect(last.bankDeg).toBeCloseTo(bankDeg, 6);
      expect(last.loadFactor).toBeCloseTo(1 / Math.cos((bankDeg * Math.PI) / 180), 4);
      expect(Math.abs(last.loadFactor - chartN)).toBeLessThan(0.001);
      // The autothrottle holds the entry speed and the altitude hold keeps the turn level.
      expect(last.tasMps).toBeCloseTo(18, 3);
      expect(last.altM).toBeCloseTo(0, 2);
      const expectedRateDps = ((G0_MPS2 * Math.tan((bankDeg * Math.PI) / 180)) / 18) * (180 / Math.PI);
      expect(headingRateDps(before, last)).toBeCloseTo(expectedRateDps, 2);
    });
  }

  it('turns left with a negative bank and at the held load factor of a load-factor turn', () => {
    const left = fly({
      ...quiet,
      start: { alt_m: 100, tas_mps: 18, heading_deg: 90 },
      segments: [{ type: 'turn', bank_deg: -45, duration_s: 10 }],
    });
    expect(headingRateDps(left[left.length - 11]!, left[left.length - 1]!)).toBeLessThan(0);
    const byN = fly({
      ...quiet,
      start: { alt_m: 100, tas_mps: 18 },
      segments: [{ type: 'turn', load_factor: 2, direction: 'left', duration_s: 20 }],
    });
    const last = byN[byN.length - 1]!;
    expect(last.loadFactor).toBeCloseTo(2, 4);
    // A level turn at n = 2 is flown at acos(1/2) = 60° of bank (same relation, Anderson ch. 6).
    expect(last.bankDeg).toBeCloseTo(-60, 3);
  });
});

describe('speed under constant thrust', () => {
  // A constant-thrust airframe: T = 8 N at sea level whatever the speed (σ^m with σ = 1).
  const constantThrust = { thrust: { model: 'constant', thrust_n: 8 } };
  const m = 3.2;
  const S = 0.55;
  const cd0 = 0.03;
  const k = 0.05;
  const T = 8;
  const W = m * G0_MPS2;

  /** dV/dt of level flight by Newton's second law along the path: m·dV/dt = T − D, D = qS(CD0 + k·CL²), CL = W/(qS). */
  function accel(V: number): number {
    const qS = 0.5 * RHO0_KG_M3 * V * V * S;
    const cl = W / qS;
    return (T - qS * (cd0 + k * cl * cl)) / m;
  }

  it("accelerates as (T − D)/m integrated by hand (Newton's second law)", () => {
    const samples = [
      ...simulateFlight(
        exampleAirframe(constantThrust),
        plan({
          ...quiet,
          start: { alt_m: 0, tas_mps: 14 },
          segments: [{ type: 'straight', throttle: 1, duration_s: 5 }],
        }),
        { rateHz: 10 },
      ),
    ];
    // The hand integration: forward Euler with 0.1 ms steps (a different method from the simulator's RK4).
    let V = 14;
    const byTime = new Map<number, number>();
    const dt = 1e-4;
    for (let i = 1; i <= 50_000; i++) {
      V += accel(V) * dt;
      if (i % 10_000 === 0) byTime.set(i / 10_000, V);
    }
    for (const [tS, handV] of byTime) {
      const sample = samples.find((s) => Math.abs(s.tS - tS) < 1e-9)!;
      expect(Math.abs(sample.tasMps - handV)).toBeLessThan(2e-3);
      expect(sample.altM).toBeCloseTo(0, 6);
      expect(sample.thrustN).toBeCloseTo(T, 5);
    }
    // First second by hand: at 14 m/s qS = 66.03 N, CL = 0.4753, D = 66.03·(0.03 + 0.05·0.2259) = 2.727 N,
    // so dV/dt = (8 − 2.727)/3.2 = 1.648 m/s² at the start.
    expect(accel(14)).toBeCloseTo(1.648, 2);
    expect(samples[10]!.tasMps - 14).toBeGreaterThan(1.2);
  });

  it('settles at the level speed where thrust equals drag', () => {
    // T = a·V² + b/V² with a = ½ρS·CD0 and b = 2k·W²/(ρS): V² = (T + √(T² − 4ab))/(2a) (level-flight drag
    // relation, Anderson ch. 5; solved by hand here).
    const a = 0.5 * RHO0_KG_M3 * S * cd0;
    const b = (2 * k * W * W) / (RHO0_KG_M3 * S);
    const vMax = Math.sqrt((T + Math.sqrt(T * T - 4 * a * b)) / (2 * a));
    const samples = [
      ...simulateFlight(
        exampleAirframe(constantThrust),
        plan({
          ...quiet,
          start: { alt_m: 0, tas_mps: 15 },
          segments: [{ type: 'straight', throttle: 1, duration_s: 120 }],
        }),
        { rateHz: 1 },
      ),
    ];
    expect(samples[samples.length - 1]!.tasMps).toBeCloseTo(vMax, 2);
    expect(vMax).toBeGreaterThan(25); // about 27.9 m/s for these figures
  });

  it('decelerates at idle and the autothrottle holds a commanded speed', () => {
    const samples = fly({
      ...quiet,
      start: { alt_m: 0, tas_mps: 20 },
      segments: [
        { type: 'straight', throttle: 0, duration_s: 1 },
        { type: 'speed_change', to_tas_mps: 14, duration_s: 30 },
      ],
    });
    // At idle the only force along the path is drag: dV/dt = −D/m < 0.
    expect(samples[10]!.tasMps).toBeLessThan(20);
    expect(samples[10]!.thrustN).toBe(0);
    expect(samples[samples.length - 1]!.tasMps).toBeCloseTo(14, 2);
  });
});

describe('vertical manoeuvres', () => {
  it('climbs at the commanded vertical speed in a climbing turn and descends in a descending turn', () => {
    const climb = fly({
      ...quiet,
      start: { alt_m: 100, tas_mps: 18 },
      segments: [{ type: 'turn', bank_deg: 20, vertical_speed_mps: 1, duration_s: 20 }],
    });
    const a = climb[climb.length - 11]!;
    const b = climb[climb.length - 1]!;
    expect((b.altM - a.altM) / (b.tS - a.tS)).toBeCloseTo(1, 2);
    // In a steady climbing turn n = cos γ / cos φ (the vertical balance L·cos φ = W·cos γ).
    expect(b.loadFactor).toBeCloseTo(Math.cos((b.flightPathDeg * Math.PI) / 180) / Math.cos((20 * Math.PI) / 180), 3);
    const descent = fly({
      ...quiet,
      start: { alt_m: 100, tas_mps: 18 },
      segments: [{ type: 'turn', bank_deg: -20, vertical_speed_mps: -2, duration_s: 20 }],
    });
    const c = descent[descent.length - 11]!;
    const d = descent[descent.length - 1]!;
    expect((d.altM - c.altM) / (d.tS - c.tS)).toBeCloseTo(-2, 2);
  });

  it('holds the load factor of a pull-up and curves the path upward as dγ/dt = g(n − cos γ)/V', () => {
    const samples = fly(
      {
        ...quiet,
        start: { alt_m: 100, tas_mps: 20 },
        segments: [
          { type: 'straight', duration_s: 1 },
          { type: 'pull_up', load_factor: 2, duration_s: 0.3 },
        ],
      },
      100,
    );
    const pull = samples.filter((s) => s.tS > 1 + 1e-9);
    for (const s of pull) expect(s.loadFactor).toBe(2);
    // Over the first 10 ms γ ≈ g·(2 − 1)/20 · 0.01 rad (small-angle start from level flight).
    expect(pull[0]!.flightPathDeg).toBeCloseTo(((G0_MPS2 * 1) / 20) * 0.01 * (180 / Math.PI), 2);
    expect(pull[pull.length - 1]!.altM).toBeGreaterThan(100);
  });
});

describe('limits of the model', () => {
  it('caps the lift at CLmax: a load factor beyond the stall limit is not flown', () => {
    // At 12 m/s, sea level: n_stall = q·S·CLmax/W = 0.5·1.225·144·0.55·1.2/31.38 = 1.855.
    const samples = fly({
      ...quiet,
      start: { alt_m: 100, tas_mps: 12 },
      segments: [{ type: 'turn', load_factor: 2.5, duration_s: 2 }],
    });
    const capped = samples.filter((s) => s.liftLimited);
    expect(capped.length).toBeGreaterThan(0);
    for (const s of capped) {
      const nStall = (0.5 * s.densityKgM3 * s.tasMps ** 2 * 0.55 * 1.2) / (3.2 * G0_MPS2);
      expect(s.loadFactor).toBeCloseTo(nStall, 9);
      expect(s.cl).toBeCloseTo(1.2, 9);
    }
  });

  it('stops with a SimulationError naming the segment when the path goes past the vertical', () => {
    const p = plan({
      ...quiet,
      start: { alt_m: 100, tas_mps: 20 },
      segments: [{ type: 'pull_up', load_factor: 4, duration_s: 10, label: 'big pull' }],
    });
    expect(() => [...simulateFlight(exampleAirframe(), p, { rateHz: 10 })]).toThrow(SimulationError);
    expect(() => [...simulateFlight(exampleAirframe(), p, { rateHz: 10 })]).toThrow(/segment "big pull"/);
  });

  it('flies a table thrust model and holds its end values outside the table instead of losing the thrust', () => {
    // A table from 10 to 20 m/s; the flight starts at 22 m/s at full throttle, beyond the table.
    const table = exampleAirframe({
      thrust: {
        model: 'table',
        points: [
          [10, 9],
          [20, 5],
        ],
      },
    });
    const p = plan({
      ...quiet,
      start: { alt_m: 0, tas_mps: 22 },
      segments: [{ type: 'straight', throttle: 1, duration_s: 0.5 }],
    });
    const first = [...simulateFlight(table, p, { rateHz: 10 })][0]!;
    expect(first.thrustN).toBeCloseTo(5, 5); // the 20 m/s end value (σ = 1 at sea level)
    const inside = plan({
      ...quiet,
      start: { alt_m: 0, tas_mps: 15 },
      segments: [{ type: 'straight', throttle: 1, duration_s: 0.1 }],
    });
    expect([...simulateFlight(table, inside, { rateHz: 10 })][0]!.thrustN).toBeCloseTo(7, 5); // linear: (9 + 5)/2
  });

  it('emits a frame at the start and every 1/rate s to the end of the plan, with exact times', () => {
    const samples = fly(
      {
        ...quiet,
        start: { alt_m: 0, tas_mps: 18, t_s: 100 },
        segments: [
          { type: 'straight', duration_s: 1.5 },
          { type: 'turn', bank_deg: 10, duration_s: 1 },
        ],
      },
      4,
    );
    expect(samples.map((s) => s.tS)).toEqual([
      100, 100.25, 100.5, 100.75, 101, 101.25, 101.5, 101.75, 102, 102.25, 102.5,
    ]);
    expect(samples.map((s) => s.segmentIndex)).toEqual([0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1]);
  });
});
