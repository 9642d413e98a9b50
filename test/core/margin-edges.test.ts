import { describe, expect, it } from 'vitest';
import { casToTasMps, tasToCasMps } from '../../src/core/airspeed.js';
import { computeAirState } from '../../src/core/atmosphere.js';
import { createAssumptionCounter } from '../../src/core/assumptions.js';
import { nothingCheckableReason } from '../../src/core/checkable.js';
import { createEventTracker } from '../../src/core/events.js';
import { lowPassStep, type LowPassState } from '../../src/core/filter.js';
import { createFlightReviewer } from '../../src/core/flight-review.js';
import type { Frame } from '../../src/core/frame.js';
import { createMarginTracker, frameRejection, MAX_BANK_LOAD_FACTOR } from '../../src/core/margins.js';
import { FOOT_M, G0_MPS2, KNOT_MPS } from '../../src/core/units.js';
import { exampleAirframe } from '../helpers/airframes.js';

// The example airframe of the issue text (3.2 kg, S 0.55 m², CLmax 1.2, n_limit +3.8/−1.52 from the file,
// vne 30 m/s).
function frame(tS: number, fields: Partial<Frame> = {}): Frame {
  return { tS, airspeedKind: 'tas', airspeedMps: 12, altM: 0, nz: 1, ...fields };
}

describe('the first-order filter', () => {
  it('matches the closed form of a first-order lag to a step, y = x + (y0 − x)·e^(−t/τ), at uneven steps', () => {
    // Textbook response of dy/dt = (x − y)/τ to a step held constant (any control text; exact for a held input).
    const tauS = 0.15;
    let state: LowPassState | null = lowPassStep(null, 0, 0, tauS).state;
    let tS = 0;
    for (const dtS of [0.013, 0.002, 0.05, 0.1, 0.007, 0.2, 0.031]) {
      tS += dtS;
      state = lowPassStep(state, tS, 1, tauS).state;
      expect(state.value).toBeCloseTo(1 - Math.exp(-tS / tauS), 12);
    }
  });
});

describe('airspeed smoothing', () => {
  it('low-passes TAS with the same τ as n and keeps the raw TAS beside it', () => {
    const tracker = createMarginTracker(exampleAirframe());
    tracker.push(frame(0, { airspeedMps: 12 }));
    const rec = tracker.push(frame(0.1, { airspeedMps: 14 }));
    // α = 1 − e^(−0.1/0.15) = 0.48658 (first-order lag, common practice)
    expect(rec.tas_mps).toBeCloseTo(12 + 2 * (1 - Math.exp(-0.1 / 0.15)), 9);
    expect(rec.tas_raw_mps).toBe(14);
    // The limits use the smoothed TAS: n_stall = q·S·CLmax/W at that speed, sea level (1.225 kg/m³, USSA 1976).
    expect(rec.n_stall).toBeCloseTo((0.5 * 1.225 * rec.tas_mps ** 2 * 0.55 * 1.2) / (3.2 * G0_MPS2), 6);
  });

  it('restarts at the raw TAS after a gap over 1 s and after reset()', () => {
    const tracker = createMarginTracker(exampleAirframe());
    tracker.push(frame(0, { airspeedMps: 12 }));
    expect(tracker.push(frame(1.5, { airspeedMps: 20 })).tas_mps).toBe(20);
    tracker.reset();
    expect(tracker.push(frame(1.6, { airspeedMps: 15 })).tas_mps).toBe(15);
  });
});

describe('CAS from TAS', () => {
  it('inverts the compressible relation: TAS 107.67 kt at 5 000 ft and 116.22 kt at 10 000 ft ISA are CAS 100 kt', () => {
    // Shared reference table (airspeed section): CAS 100 kt → TAS 107.67 kt (5 000 ft), 116.22 kt (10 000 ft),
    // computed from the standard subsonic relations with the U.S. Standard Atmosphere 1976; values to 0.01 kt.
    for (const [ft, tasKt] of [
      [5000, 107.67],
      [10000, 116.22],
    ] as const) {
      const air = computeAirState(ft * FOOT_M);
      expect(tasToCasMps(tasKt * KNOT_MPS, air.pressurePa, air.temperatureK) / KNOT_MPS).toBeCloseTo(100, 1);
      expect(Math.abs(tasToCasMps(tasKt * KNOT_MPS, air.pressurePa, air.temperatureK) / KNOT_MPS - 100)).toBeLessThan(
        0.01,
      );
    }
  });

  it('round-trips CAS → TAS → CAS and equals TAS at sea level ISA (definition of CAS)', () => {
    const sea = computeAirState(0);
    expect(tasToCasMps(30, sea.pressurePa, sea.temperatureK)).toBeCloseTo(30, 9);
    const high = computeAirState(4000, { oatC: -5 });
    const tas = casToTasMps(40, high.pressurePa, high.temperatureK);
    expect(tasToCasMps(tas, high.pressurePa, high.temperatureK)).toBeCloseTo(40, 9);
  });
});

describe('the speed limit', () => {
  it('puts CAS in the record and its ratio to vne (a calibrated airspeed) in utilization.speed', () => {
    const rec = createMarginTracker(exampleAirframe(), { smoothTauS: 0 }).push(
      frame(0, { airspeedKind: 'cas', airspeedMps: 28.8, altM: 3000 }),
    );
    expect(rec.cas_mps).toBeCloseTo(28.8, 9);
    expect(rec.tas_mps).toBeGreaterThan(30); // TAS above CAS at altitude: vne compared as CAS, not TAS
    expect(rec.utilization.speed).toBeCloseTo(28.8 / 30, 9);
    expect(rec.alerts).toContainEqual({ limit: 'speed', level: 'caution' });
  });

  it('is null without vne_mps', () => {
    const aircraft = exampleAirframe();
    delete aircraft.vneMps;
    const rec = createMarginTracker(aircraft, { smoothTauS: 0 }).push(frame(0, { airspeedMps: 40 }));
    expect(rec.utilization.speed).toBeNull();
  });

  it('makes overspeed events with limit "speed": caution from 0.95·vne, warning from vne', () => {
    // 25 → 31 m/s → 25 m/s at sea level (CAS = TAS), vne 30: caution at ≥ 28.5, warning at ≥ 30.
    const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
    const events = createEventTracker();
    const speeds = [25, 27, 28.6, 30.2, 31, 30.1, 28, 25, 25, 25, 25, 25, 25, 25, 25];
    speeds.forEach((v, i) => events.push(tracker.push(frame(i * 0.1, { airspeedMps: v }))));
    const speed = events.finish().filter((e) => e.limit === 'speed');
    expect(speed.map((e) => [e.level, e.start_s, e.end_s])).toEqual([
      ['caution', expect.closeTo(0.2, 9), expect.closeTo(0.7, 9)],
      ['warning', expect.closeTo(0.3, 9), expect.closeTo(0.6, 9)],
    ]);
    expect(speed[1]!.peak_utilization).toBeCloseTo(31 / 30, 9);
  });
});

describe('physics edges', () => {
  it('gives nz −3 the thrust utilization of +3 (drag grows with n²)', () => {
    const up = createMarginTracker(exampleAirframe(), { smoothTauS: 0 }).push(frame(0, { airspeedMps: 20, nz: 3 }));
    const down = createMarginTracker(exampleAirframe(), { smoothTauS: 0 }).push(frame(0, { airspeedMps: 20, nz: -3 }));
    expect(up.utilization.thrust).not.toBeNull();
    expect(down.utilization.thrust).toBe(up.utilization.thrust);
    expect(down.alerts).toContainEqual({ limit: 'thrust', level: 'caution' });
  });

  it('takes turn rate and radius from the clamped load factor near 90° of bank', () => {
    const rec = createMarginTracker(exampleAirframe(), { smoothTauS: 0 }).push(
      frame(0, { airspeedMps: 20, nz: undefined, bankDeg: 89.99 }),
    );
    // Level coordinated turn (Anderson ch. 6): ω = g√(n²−1)/V, R = V²/(g√(n²−1)), n = 20 (the clamp)
    const root = Math.sqrt(MAX_BANK_LOAD_FACTOR ** 2 - 1);
    expect(rec.n_raw).toBe(MAX_BANK_LOAD_FACTOR);
    expect(rec.turn_rate_dps!).toBeCloseTo(((G0_MPS2 * root) / 20) * (180 / Math.PI), 9);
    expect(rec.radius_m!).toBeCloseTo(400 / (G0_MPS2 * root), 9);
  });

  it('rejects a frame whose TAS reaches Mach 1 at its temperature', () => {
    const aircraft = exampleAirframe();
    // CAS 300 m/s at 20 000 m ISA: TAS about 688 m/s, a = √(1.4·287.05287·216.65) = 295.07 m/s (USSA 1976).
    const r = frameRejection(aircraft, frame(0, { airspeedKind: 'cas', airspeedMps: 300, altM: 20000 }));
    expect(r).toEqual({
      code: 'out_of_range',
      key: 'cas_mps',
      got: 300,
      reason: expect.stringMatching(/^above the subsonic range \(Mach 2\.3\d\)$/),
    });
    // Speed of sound at sea level ISA 340.294 m/s (shared reference table, γ = 1.4).
    expect(frameRejection(aircraft, frame(0, { airspeedMps: 340.2 }))).toBeNull();
    expect(frameRejection(aircraft, frame(0, { airspeedMps: 340.4 }))).toEqual({
      code: 'out_of_range',
      key: 'tas_mps',
      got: 340.4,
      reason: 'above the subsonic range (Mach 1.00)',
    });
  });
});

describe('assumption flags', () => {
  it('flags n from bank, ISA temperature and a default structural limit, and nothing when all are given', () => {
    const given = createMarginTracker(exampleAirframe()).push(frame(0, { oatC: 15, bankDeg: 10 }));
    expect(given.assumed).toEqual([]);
    const defaults = exampleAirframe({ n_limit_pos: undefined, n_limit_neg: undefined });
    const rec = createMarginTracker(defaults).push(frame(0, { nz: undefined, bankDeg: 30 }));
    expect(rec.assumed).toEqual(['n_from_bank', 'temperature_isa', 'n_limit_default']);
  });

  it('counts for what share of the frames each assumption held', () => {
    const counter = createAssumptionCounter();
    expect(counter.shares().n_from_bank).toBeNull();
    counter.push({ assumed: ['n_from_bank', 'temperature_isa'] });
    counter.push({ assumed: ['temperature_isa'] });
    counter.push({ assumed: [] });
    counter.push({ assumed: ['temperature_isa'] });
    expect(counter.frames()).toBe(4);
    expect(counter.shares()).toEqual({ n_from_bank: 0.25, temperature_isa: 0.75, n_limit_default: 0 });
  });
});

describe('nothing checkable is not a pass', () => {
  it('names grams typed for kilograms when the stall speed is far above every speed flown', () => {
    // mass_kg 4200 instead of 4.2: Vs1 = √(2·4200·9.80665/(1.225·0.55·1.2)) ≈ 320 m/s (stall speed relation).
    const aircraft = exampleAirframe({ mass_kg: 4200 });
    const reviewer = createFlightReviewer(aircraft, { smoothTauS: 0 });
    for (let i = 0; i <= 50; i++) reviewer.accept(frame(i * 0.1, { airspeedMps: 10 + (25 * i) / 50 }));
    const review = reviewer.finish();
    const vs1 = Math.sqrt((2 * 4200 * G0_MPS2) / (review.conditions.medianDensityKgM3! * 0.55 * 1.2));
    expect(nothingCheckableReason(review, aircraft)).toBe(
      'no frame was flying (TAS below 0.5·Vs1 throughout), so no limit could be checked: ' +
        `stall speed ${vs1.toFixed(0)} m/s is above every speed flown (10–35 m/s): is mass_kg in kilograms?`,
    );
  });

  it('says nothing when a limit was computed on a flying frame', () => {
    const aircraft = exampleAirframe();
    const reviewer = createFlightReviewer(aircraft);
    reviewer.accept(frame(0));
    expect(nothingCheckableReason(reviewer.finish(), aircraft)).toBeNull();
  });
});
