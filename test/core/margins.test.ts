import { describe, expect, it } from 'vitest';
import type { Frame } from '../../src/core/frame.js';
import {
  computeMarginRecord,
  createMarginTracker,
  initialMarginState,
  resolveMarginOptions,
} from '../../src/core/margins.js';
import { DEFAULT_THRESHOLDS } from '../../src/core/thresholds.js';
import { G0_MPS2, KNOT_MPS, FOOT_M } from '../../src/core/units.js';
import { airframe, exampleAirframe, exampleAirframeJson } from '../helpers/airframes.js';

// The example airframe of the issue text (3.2 kg, S 0.55 m², CLmax 1.2, CLmin −0.7, CD0 0.03, k 0.05,
// 200 W × 0.62 capped at 14 N static, n_limit +3.8/−1.52).
const W = 3.2 * G0_MPS2; // 31.381 N
const S = 0.55;
const RHO0 = 1.225; // U.S. Standard Atmosphere 1976, sea level

function frame(tS: number, fields: Partial<Frame> = {}): Frame {
  return { tS, airspeedKind: 'tas', airspeedMps: 12, altM: 0, ...fields };
}

/** One frame through a fresh tracker without smoothing. */
function single(f: Frame, overrides: Record<string, unknown> = {}) {
  return createMarginTracker(exampleAirframe(overrides), { smoothTauS: 0 }).push(f);
}

describe('air state and speeds of a frame', () => {
  it('uses ISA at the pressure altitude and TAS as given', () => {
    const rec = single(frame(0, { altM: 1000, bankDeg: 0 }));
    // U.S. Standard Atmosphere 1976 at 1 000 m: 281.65 K, 1.1116 kg/m³
    expect(rec.temperature_k).toBeCloseTo(281.65, 2);
    expect(rec.density_kg_m3).toBeCloseTo(1.1116, 3);
    expect(rec.tas_mps).toBe(12);
    // EAS = TAS·√σ (standard relation)
    expect(rec.eas_mps).toBeCloseTo(12 * Math.sqrt(1.1116 / RHO0), 3);
  });

  it('takes the temperature from oat_c when the frame has it', () => {
    const rec = single(frame(0, { altM: 0, oatC: 35, bankDeg: 0 }));
    // fluids 1.3.1 ATMOSPHERE_1976(0, dT = 20) (OAT 35 °C at sea level = ISA + 20 K): ρ = 1.145492476939946 kg/m³
    expect(rec.temperature_k).toBeCloseTo(308.15, 9);
    expect(Math.abs(rec.density_kg_m3 / 1.145492476939946 - 1)).toBeLessThan(2e-6);
  });

  it('converts CAS to TAS with the compressible relations (CAS 100 kt at 10 000 ft ISA is 116.22 kt)', () => {
    // Computed from the standard subsonic compressible relations with USSA 1976 pressure and temperature: 116.22 kt
    const rec = single(
      frame(0, { airspeedKind: 'cas', airspeedMps: 100 * KNOT_MPS, altM: 10000 * FOOT_M, bankDeg: 0 }),
    );
    expect(rec.tas_mps / KNOT_MPS).toBeCloseTo(116.22, 1);
  });

  it('corrects IAS through the airframe calibration table before CAS → TAS (IAS 8 → CAS 8.6 = TAS at sea level)', () => {
    // CAS equals TAS at sea level ISA (standard relation); the table [[8, 8.6], [30, 30.4]] maps 8 → 8.6.
    const rec = single(frame(0, { airspeedKind: 'ias', airspeedMps: 8, bankDeg: 0 }));
    expect(rec.tas_mps).toBeCloseTo(8.6, 6);
    // Halfway along the table: 19 → 19.5
    expect(single(frame(0, { airspeedKind: 'ias', airspeedMps: 19, bankDeg: 0 })).tas_mps).toBeCloseTo(19.5, 6);
  });

  it('takes the mass from the frame when given, else from the airframe', () => {
    expect(single(frame(0, { bankDeg: 0 })).mass_kg).toBe(3.2);
    const heavy = single(frame(0, { bankDeg: 0, massKg: 4.0 }));
    expect(heavy.mass_kg).toBe(4.0);
    // n_stall = q·S·CLmax/W scales with 1/W
    expect(heavy.n_stall).toBeCloseTo((0.5 * RHO0 * 144 * S * 1.2) / (4.0 * G0_MPS2), 4);
  });
});

describe('limits, utilization and bank limits', () => {
  it('matches the worked example at 12 m/s, sea level: n_stall 1.855, n_thrust 2.957, n_structural 3.8', () => {
    // Issue text's worked example (envelope at 12 m/s): 1.855, 2.957, 3.8
    const rec = single(frame(0, { bankDeg: 45 }));
    expect(rec.n_stall).toBeCloseTo(1.855, 3);
    expect(rec.n_thrust!).toBeCloseTo(2.957, 3);
    expect(rec.n_structural).toBe(3.8);
    expect(rec.n_structural_neg).toBe(-1.52);
  });

  it('computes utilization as n/limit at 45° of bank without nz (n = 1/cos 45° = 1.414, FAA-H-8083-25 chart)', () => {
    const rec = single(frame(0, { bankDeg: 45 }));
    expect(rec.n_measured).toBeCloseTo(1.414, 3); // FAA-H-8083-25 load factor chart
    // Hand computation: 1.41421/1.85499 = 0.76238; 1.41421/2.95746 = 0.47819; 1.41421/3.8 = 0.37216
    expect(rec.utilization.stall!).toBeCloseTo(0.76238, 4);
    expect(rec.utilization.thrust!).toBeCloseTo(0.47819, 4);
    expect(rec.utilization.structure!).toBeCloseTo(0.37216, 4);
    expect(rec.level).toBe('normal');
    expect(rec.alerts).toEqual([]);
  });

  it('gives the bank limit from min(0.8·n_stall, 0.8·n_limit_pos) and the sustained one with n_thrust too', () => {
    // At 20 m/s sea level (Anderson ch. 6 relations, hand computation):
    // q·S = 0.5·1.225·400·0.55 = 134.75 N; n_stall = 134.75·1.2/31.381 = 5.1527; 0.8·5.1527 = 4.122;
    // 0.8·3.8 = 3.04 → n = 3.04 → bank = acos(1/3.04) = acos(0.32895) = 70.80°.
    // T = min(14, 0.62·200/20) = 6.2 N; n_thrust = (134.75/31.381)·√((6.2 − 4.0425)/6.7375) = 2.4299
    // → bank_sustained = acos(1/2.4299) = 65.70°.
    const rec = single(frame(0, { airspeedMps: 20, bankDeg: 30 }));
    expect(rec.n_stall).toBeCloseTo(5.1527, 3);
    expect(rec.n_thrust!).toBeCloseTo(2.4299, 3);
    expect(rec.bank_limit_deg).toBeCloseTo(70.795, 2);
    expect(rec.bank_sustained_deg!).toBeCloseTo(65.7, 1);
  });

  it('reports a bank limit of 0 when the caution load factor is at or below 1', () => {
    // At 9.5 m/s: n_stall = 0.5·1.225·90.25·0.55·1.2/31.381 = 1.1626; 0.8·1.1626 = 0.93 ≤ 1 → 0°
    const rec = single(frame(0, { airspeedMps: 9.5, bankDeg: 0 }));
    expect(rec.n_stall).toBeCloseTo(1.1626, 3);
    expect(rec.bank_limit_deg).toBe(0);
    expect(rec.bank_sustained_deg).toBe(0);
  });

  it('uses n_limit_neg for structure and cl_min for stall when n is negative', () => {
    // At 20 m/s: n_stall_neg = 134.75·(−0.7)/31.381 = −3.0058; nz −1.0 → stall 0.3327, structure 1/1.52 = 0.6579
    const rec = single(frame(0, { airspeedMps: 20, nz: -1.0 }));
    expect(rec.n_stall_neg!).toBeCloseTo(-3.0058, 3);
    expect(rec.utilization.stall!).toBeCloseTo(0.3327, 4);
    expect(rec.utilization.structure!).toBeCloseTo(0.6579, 4);
    expect(rec.level).toBe('normal');
    // −1.3/−1.52 = 0.855 ≥ 0.80: structure caution
    const hard = single(frame(0, { airspeedMps: 20, nz: -1.3 }));
    expect(hard.utilization.structure!).toBeCloseTo(0.8553, 4);
    expect(hard.alerts).toEqual([{ limit: 'structure', level: 'caution' }]);
    // The stall speed at n < 0 comes from cl_min: √(2·1.3·31.381/(1.225·0.55·0.7)) = √173.0 = 13.153 m/s
    expect(hard.stall_speed_mps!).toBeCloseTo(Math.sqrt((2 * 1.3 * W) / (RHO0 * S * 0.7)), 6);
    expect(hard.stall_speed_mps!).toBeCloseTo(13.153, 2);
  });

  it('leaves the negative-g stall utilization null when the airframe has no cl_min', () => {
    const json = exampleAirframeJson() as Record<string, unknown>;
    delete json['cl_min'];
    const rec = createMarginTracker(airframe(json), { smoothTauS: 0 }).push(frame(0, { airspeedMps: 20, nz: -1.0 }));
    expect(rec.utilization.stall).toBeNull();
    expect(rec.n_stall_neg).toBeNull();
    expect(rec.stall_speed_mps).toBeNull();
    expect(rec.utilization.structure!).toBeCloseTo(0.6579, 4);
  });

  it('raises a thrust caution when n_thrust is 0 (level flight not sustainable), with a null thrust utilization', () => {
    // Constant 2 N at 20 m/s: q·S·CD0 = 4.04 N > 2 N → n_thrust = 0 (Anderson ch. 6: T ≤ D0)
    const rec = single(frame(0, { airspeedMps: 20, bankDeg: 0 }), { thrust: { model: 'constant', thrust_n: 2 } });
    expect(rec.n_thrust).toBe(0);
    expect(rec.utilization.thrust).toBeNull();
    expect(rec.alerts).toEqual([{ limit: 'thrust', level: 'caution' }]);
    expect(rec.level).toBe('caution');
    expect(rec.bank_sustained_deg).toBe(0);
  });

  it('leaves thrust null and raises no thrust alert where a thrust table does not cover the speed', () => {
    const rec = single(frame(0, { airspeedMps: 20, bankDeg: 60 }), {
      thrust: {
        model: 'table',
        points: [
          [5, 10],
          [15, 6],
        ],
      },
    });
    expect(rec.n_thrust).toBeNull();
    expect(rec.utilization.thrust).toBeNull();
    // Contract: the thrust term enters bank_sustained_deg only when n_thrust is known.
    expect(rec.bank_sustained_deg).toBe(rec.bank_limit_deg);
    expect(rec.alerts.some((a) => a.limit === 'thrust')).toBe(false);
  });

  it('raises a thrust caution at utilization ≥ 1.00 (the turn bleeds energy)', () => {
    // At 20 m/s n_thrust = 2.4299; nz 2.43 → 1.00003
    const rec = single(frame(0, { airspeedMps: 20, nz: 2.43 }));
    expect(rec.utilization.thrust!).toBeGreaterThanOrEqual(1);
    expect(rec.alerts).toEqual([{ limit: 'thrust', level: 'caution' }]);
    const below = single(frame(0, { airspeedMps: 20, nz: 2.42 }));
    expect(below.alerts).toEqual([]);
  });

  it('lists a stall warning together with its caution, most severe first', () => {
    // At 12 m/s n_stall = 1.85499: warning at 0.90 → n ≥ 1.6695
    const rec = single(frame(0, { nz: 1.7 }));
    expect(rec.alerts).toEqual([
      { limit: 'stall', level: 'warning' },
      { limit: 'stall', level: 'caution' },
    ]);
    expect(rec.level).toBe('warning');
  });

  it('applies thresholds from the options over those of the airframe', () => {
    const a = exampleAirframe({ alert_thresholds: { stall_caution: 0.7 } });
    expect(resolveMarginOptions(a).thresholds.stallCaution).toBe(0.7);
    // 45° at 12 m/s: stall utilization 0.762 ≥ 0.7 with the airframe's thresholds …
    expect(createMarginTracker(a, { smoothTauS: 0 }).push(frame(0, { bankDeg: 45 })).level).toBe('caution');
    // … but not with the defaults passed explicitly
    expect(
      createMarginTracker(a, { smoothTauS: 0, thresholds: DEFAULT_THRESHOLDS }).push(frame(0, { bankDeg: 45 })).level,
    ).toBe('normal');
  });
});

describe('readouts: stall speed, CL, turn rate and radius', () => {
  it('raises the stall speed by 41.4 % at 60° of bank (FAA-H-8083-25 load factor chart)', () => {
    const level = single(frame(0, { bankDeg: 0 }));
    const banked = single(frame(0, { bankDeg: 60 }));
    // Vs1 = √(2W/(ρ·S·CLmax)) = 8.811 m/s (issue text's worked example)
    expect(level.stall_speed_mps!).toBeCloseTo(8.811, 3);
    expect(banked.stall_speed_mps! / level.stall_speed_mps!).toBeCloseTo(1.414, 3);
    // speed margin: (12/8.811 − 1)·100 = 36.19 %
    expect(level.stall_speed_margin_pct!).toBeCloseTo((12 / 8.8107 - 1) * 100, 1);
  });

  it('gives the CL in use as n·W/(q·S)', () => {
    // 45°, 12 m/s: 1.41421·31.381/(88.2·0.55) = 0.91486
    expect(single(frame(0, { bankDeg: 45 })).cl!).toBeCloseTo(0.91486, 4);
  });

  it('gives turn rate g·tan φ/V and radius V²/(g·tan φ) from bank and TAS (Anderson ch. 6)', () => {
    // 45° at 12 m/s: ω = 9.80665/12 rad/s = 46.823 °/s; R = 144/9.80665 = 14.684 m
    const rec = single(frame(0, { bankDeg: 45 }));
    expect(rec.turn_rate_dps!).toBeCloseTo(46.823, 2);
    expect(rec.radius_m!).toBeCloseTo(14.684, 2);
    // A left turn gives the same magnitudes
    expect(single(frame(0, { bankDeg: -45 })).radius_m!).toBeCloseTo(14.684, 2);
    // No bank in the frame: no turn readouts
    const nzOnly = single(frame(0, { nz: 1.2 }));
    expect(nzOnly.turn_rate_dps).toBeNull();
    expect(nzOnly.radius_m).toBeNull();
  });

  it('reports a standard-rate turn (3 °/s) at bank ≈ 15 % of TAS in knots (FAA-H-8083-15B rule of thumb)', () => {
    // 100 kt → bank ≈ 15°; the rule is good to about 1°, so 3 °/s within 0.25 °/s
    const rec = single(frame(0, { airspeedMps: 100 * KNOT_MPS, bankDeg: 15 }));
    expect(Math.abs(rec.turn_rate_dps! - 3)).toBeLessThan(0.25);
  });
});

describe('not flying', () => {
  it('below 0.5·Vs1 leaves every utilization null and raises no alert', () => {
    // 0.5·Vs1 = 0.5·8.811 = 4.405 m/s; a large nz would otherwise be a warning
    const rec = single(frame(0, { airspeedMps: 4.3, nz: 3.0 }));
    expect(rec.flying).toBe(false);
    expect(rec.utilization).toEqual({ stall: null, thrust: null, structure: null });
    expect(rec.alerts).toEqual([]);
    expect(rec.level).toBe('normal');
  });

  it('is flying from 0.5·Vs1 up', () => {
    const rec = single(frame(0, { airspeedMps: 4.5, bankDeg: 0 }));
    expect(rec.flying).toBe(true);
    expect(rec.utilization.stall).not.toBeNull();
  });

  it('clears an alert that was on when the aircraft stops flying', () => {
    const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
    expect(tracker.push(frame(0, { nz: 1.6 })).level).toBe('caution');
    expect(tracker.push(frame(0.1, { airspeedMps: 2, nz: 1.6 })).alerts).toEqual([]);
  });
});

describe('smoothing of the measured load factor', () => {
  it('follows n_f ← n_f + (1 − e^(−Δt/τ))·(n − n_f) with τ = 0.15 s by default (first-order low-pass, common practice)', () => {
    const tracker = createMarginTracker(exampleAirframe());
    expect(tracker.push(frame(0, { nz: 1.0 })).n_measured).toBe(1.0);
    const rec = tracker.push(frame(0.1, { nz: 2.0 }));
    // 1 − e^(−0.1/0.15) = 0.48658
    expect(rec.n_measured).toBeCloseTo(1.48658, 5);
    expect(rec.n_raw).toBe(2.0);
  });

  it('reaches 63.2 % of a step after one time constant, whatever the frame rate (common practice)', () => {
    for (const dt of [0.01, 0.05]) {
      const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0.5 });
      tracker.push(frame(0, { nz: 1 }));
      let last = 0;
      for (let i = 1; i * dt <= 0.5 + 1e-9; i++) last = tracker.push(frame(i * dt, { nz: 2 })).n_measured;
      expect(last).toBeCloseTo(1 + (1 - Math.exp(-1)), 6);
    }
  });

  it('restarts at the raw value after a gap over 1 s, and not after a gap of exactly 1 s', () => {
    const tracker = createMarginTracker(exampleAirframe());
    tracker.push(frame(0, { nz: 1 }));
    expect(tracker.push(frame(1.0, { nz: 2 })).n_measured).toBeCloseTo(1 + (1 - Math.exp(-1 / 0.15)), 9);
    expect(tracker.push(frame(2.2, { nz: 1.2 })).n_measured).toBe(1.2);
  });

  it('is off with τ = 0', () => {
    const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
    tracker.push(frame(0, { nz: 1 }));
    expect(tracker.push(frame(0.1, { nz: 2 })).n_measured).toBe(2);
  });

  it('restarts after reset() (a reconnect or a seek), with the alerts cleared', () => {
    const tracker = createMarginTracker(exampleAirframe());
    tracker.push(frame(0, { nz: 1.7 }));
    tracker.reset();
    const rec = tracker.push(frame(0.1, { nz: 1.0 }));
    expect(rec.n_measured).toBe(1.0);
    expect(rec.alerts).toEqual([]);
  });

  it('is a pure step: the same state and frame give the same record', () => {
    const a = exampleAirframe();
    const opts = resolveMarginOptions(a);
    const first = computeMarginRecord(a, opts, initialMarginState(), frame(0, { nz: 1.2 }));
    const x = computeMarginRecord(a, opts, first.state, frame(0.05, { nz: 1.5 }));
    const y = computeMarginRecord(a, opts, first.state, frame(0.05, { nz: 1.5 }));
    expect(x).toEqual(y);
  });
});

describe('coordination check', () => {
  it('flags nz differing from 1/cos(bank) by more than 0.15 only after more than 1 s', () => {
    const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
    // Wings level (1/cos 0 = 1) while nz reads 1.3: a pull-up, not a level turn
    const flags = [0, 0.5, 1.0, 1.1, 1.5].map((t) => tracker.push(frame(t, { bankDeg: 0, nz: 1.3 })).uncoordinated);
    expect(flags).toEqual([false, false, false, true, true]);
    // Back in agreement: the flag drops at once
    expect(tracker.push(frame(1.6, { bankDeg: 0, nz: 1.05 })).uncoordinated).toBe(false);
  });

  it('does not flag a difference of 0.15 or less', () => {
    const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
    // 1/cos 30° = 1.1547; nz 1.30 differs by 0.1453
    const flags = [0, 1, 2, 3].map((t) => tracker.push(frame(t * 0.9, { bankDeg: 30, nz: 1.3 })).uncoordinated);
    expect(flags).toEqual([false, false, false, false]);
  });

  it('never flags frames without nz (n then comes from the bank itself)', () => {
    const tracker = createMarginTracker(exampleAirframe());
    const flags = [0, 0.5, 1, 1.5, 2].map((t) => tracker.push(frame(t, { bankDeg: t * 30 })).uncoordinated);
    expect(flags.every((f) => !f)).toBe(true);
  });
});

describe('extreme bank without nz', () => {
  it('holds 1/cos(bank) to ±20 g near 90° of bank: the alerts err on the safe side without absurd peaks', () => {
    const rec = single(frame(0, { bankDeg: 90 }));
    expect(rec.n_measured).toBe(20);
    expect(rec.level).toBe('warning');
    expect(single(frame(0, { bankDeg: 60 })).n_measured).toBeCloseTo(2, 9); // FAA-H-8083-25 chart: 60° → 2.0
    expect(single(frame(0, { bankDeg: -89.99 })).n_measured).toBe(20);
    expect(rec.n_from_bank).toBeNull();
    expect(rec.turn_rate_dps).toBeNull();
  });
});
