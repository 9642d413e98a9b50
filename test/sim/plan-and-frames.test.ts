import { describe, expect, it } from 'vitest';
import { casToTasMps, iasToCasMps } from '../../src/core/airspeed.js';
import { computeAirState } from '../../src/core/atmosphere.js';
import { FOOT_M, KNOT_MPS } from '../../src/core/units.js';
import { createFrameWriter, invertCalibration, tasToCasMps } from '../../src/sim/frames.js';
import { createGaussian, createUniform } from '../../src/sim/noise.js';
import { parseFlightPlan, type FlightPlan } from '../../src/sim/plan.js';
import { simulateFlight } from '../../src/sim/point-mass.js';
import { exampleAirframe } from '../helpers/airframes.js';

function plan(json: unknown): FlightPlan {
  const result = parseFlightPlan(json, 'p.json');
  if (!result.ok) throw new Error(result.problems.join('\n'));
  return result.value;
}

describe('flight plan validation', () => {
  it('names every bad key with its value and what was expected', () => {
    const result = parseFlightPlan(
      {
        start: { alt_m: 100, tas_mps: 'fast' },
        segments: [
          { type: 'turn', bank_deg: 95, duration_s: 5 },
          { type: 'loop', duration_s: 5 },
          { type: 'straight', duration_s: 0 },
          { type: 'straight', duration_s: 3, throttle: 0.5, tas_mps: 18 },
          { type: 'turn', duration_s: 3 },
          { type: 'straight', duration_s: 3, wind: 5 },
        ],
      },
      'card.json',
    );
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.problems).toEqual(
      expect.arrayContaining([
        'card.json: start.tas_mps must be a positive number (got "fast")',
        'card.json: segments[0].bank_deg must be a number from -80 to 80 (got 95)',
        expect.stringMatching(
          /^card\.json: segments\[1\]\.type .*"straight", "turn", "speed_change", "pull_up" or "glide"/,
        ),
        'card.json: segments[2].duration_s must be a number above 0 and at most 3600 (got 0)',
        expect.stringMatching(/^card\.json: segments\[3\]\.throttle must not be given together with tas_mps/),
        expect.stringMatching(/^card\.json: segments\[4\] a turn needs exactly one of bank_deg and load_factor/),
        'card.json: segments[5].wind is not a known key',
      ]),
    );
  });

  it('requires the start and at least one segment', () => {
    const result = parseFlightPlan({ segments: [] }, 'empty.json');
    expect(result.ok).toBe(false);
    if (result.ok) return;
    expect(result.problems).toContain('empty.json: start is required (must be an object {alt_m, tas_mps})');
    expect(result.problems).toContain('empty.json: segments must hold at least one segment (got [])');
  });

  it('fills the defaults and labels unlabelled segments by position and type', () => {
    const p = plan({
      start: { alt_m: 50, tas_mps: 16 },
      segments: [
        { type: 'straight', duration_s: 2 },
        { type: 'turn', load_factor: 1.5, duration_s: 3, label: 'n 1.5' },
      ],
    });
    expect(p.segments.map((s) => s.label)).toEqual(['1:straight', 'n 1.5']);
    expect(p.segments[1]!.turn).toEqual({ kind: 'load-factor', loadFactor: 1.5, sign: 1 });
    expect(p.segments[0]!.speed).toEqual({ kind: 'hold-entry' });
    expect(p.airspeedKey).toBe('tas_mps');
    expect(p.name).toBe('p');
  });
});

describe('airspeed conversions for the frames', () => {
  it('inverts the CAS → TAS relation (round trip over the speed range and altitudes)', () => {
    for (const altM of [0, 1500, 3000]) {
      const air = computeAirState(altM);
      for (const tas of [5, 15, 30, 60]) {
        const cas = tasToCasMps(tas, air.pressurePa, air.temperatureK);
        expect(casToTasMps(cas, air.pressurePa, air.temperatureK)).toBeCloseTo(tas, 9);
      }
    }
  });

  it('gives CAS 100 kt for TAS 107.67 kt at 5 000 ft ISA', () => {
    // Computed from the standard subsonic relations (qc, Mach, TAS) with USSA 1976 at 5 000 ft; the project's
    // reference table lists CAS 100 kt ↔ TAS 107.67 kt there.
    const air = computeAirState(5000 * FOOT_M);
    expect(tasToCasMps(107.67 * KNOT_MPS, air.pressurePa, air.temperatureK) / KNOT_MPS).toBeCloseTo(100, 1);
  });

  it('reads the calibration table backwards for IAS frames, or refuses a table whose CAS does not increase', () => {
    const table: Array<[number, number]> = [
      [8, 8.6],
      [30, 30.4],
    ];
    const inverse = invertCalibration(table)!;
    for (const ias of [9, 15, 29]) {
      const cas = iasToCasMps(ias, table);
      expect(iasToCasMps(cas, inverse)).toBeCloseTo(ias, 9);
    }
    expect(
      invertCalibration([
        [8, 9],
        [10, 8.5],
      ]),
    ).toBeNull();
  });
});

describe('noise and frames', () => {
  it('draws the same sequence from the same seed and another from another seed', () => {
    const a = createUniform(42);
    const b = createUniform(42);
    const c = createUniform(43);
    const seqA = Array.from({ length: 5 }, a);
    expect(Array.from({ length: 5 }, b)).toEqual(seqA);
    expect(Array.from({ length: 5 }, c)).not.toEqual(seqA);
    for (const x of seqA) expect(x >= 0 && x < 1).toBe(true);
  });

  it('gives normal noise with mean about 0 and standard deviation about 1', () => {
    const g = createGaussian(7);
    const n = 20_000;
    const xs = Array.from({ length: n }, g);
    const mean = xs.reduce((s, x) => s + x, 0) / n;
    const sd = Math.sqrt(xs.reduce((s, x) => s + (x - mean) ** 2, 0) / n);
    // Standard error of the mean 1/√n ≈ 0.007; of the sd ≈ 1/√(2n) ≈ 0.005 (common practice: 4σ bounds).
    expect(Math.abs(mean)).toBeLessThan(0.03);
    expect(Math.abs(sd - 1)).toBeLessThan(0.02);
  });

  it("writes the frame keys with the plan's airspeed key, noise only where asked, and the segment label", () => {
    const p = plan({
      start: { alt_m: 200, tas_mps: 18 },
      airspeed_key: 'cas_mps',
      isa_deviation_c: 10,
      mass_kg: 3.5,
      noise: { nz_sd: 0, airspeed_sd_mps: 0 },
      segments: [{ type: 'turn', bank_deg: 30, duration_s: 1, label: 'warm-up' }],
    });
    const aircraft = exampleAirframe();
    const write = createFrameWriter(aircraft, p, { seed: 1 });
    const [first] = [...simulateFlight(aircraft, p, { rateHz: 10 })].map(write);
    expect(Object.keys(first!)).toEqual([
      't_s',
      'cas_mps',
      'alt_m',
      'bank_deg',
      'nz',
      'oat_c',
      'mass_kg',
      'heading_deg',
      'throttle',
      'segment',
      'simulated',
    ]);
    expect(first!['simulated']).toBe(true);
    // ISA at 200 m is 286.85 K = 13.70 °C (15 °C − 0.0065 K/m · 200 m, USSA 1976 lapse rate); +10 K → 23.70 °C.
    expect(first!['oat_c']).toBeCloseTo(23.7, 2);
    expect(first!['nz']).toBe(1);
    expect(first!['segment']).toBe('warm-up');
    const air = computeAirState(200, { isaDeviationK: 10 });
    expect(first!['cas_mps']).toBeCloseTo(tasToCasMps(18, air.pressurePa, air.temperatureK), 3);
  });

  it('gives identical frames for the same seed and different noise for another seed', () => {
    const p = plan({ start: { alt_m: 100, tas_mps: 18 }, segments: [{ type: 'turn', bank_deg: 40, duration_s: 3 }] });
    const aircraft = exampleAirframe();
    const run = (seed: number) =>
      [...simulateFlight(aircraft, p, { rateHz: 20 })].map(createFrameWriter(aircraft, p, { seed }));
    expect(run(5)).toEqual(run(5));
    expect(run(5)).not.toEqual(run(6));
  });

  it('adds altitude noise of the asked standard deviation, leaving the airspeed and nz noise of the seed as they were', () => {
    const segments = [{ type: 'straight', duration_s: 60 }];
    const quietAlt = plan({ start: { alt_m: 100, tas_mps: 18 }, segments });
    const noisyAlt = plan({ start: { alt_m: 100, tas_mps: 18 }, noise: { alt_sd_m: 0.5 }, segments });
    const aircraft = exampleAirframe();
    const a = [...simulateFlight(aircraft, quietAlt, { rateHz: 20 })].map(
      createFrameWriter(aircraft, quietAlt, { seed: 3 }),
    );
    const b = [...simulateFlight(aircraft, noisyAlt, { rateHz: 20 })].map(
      createFrameWriter(aircraft, noisyAlt, { seed: 3 }),
    );
    expect(b.map((f) => [f['tas_mps'], f['nz']])).toEqual(a.map((f) => [f['tas_mps'], f['nz']]));
    const d = b.map((f, i) => (f['alt_m'] as number) - (a[i]!['alt_m'] as number));
    const mean = d.reduce((s, x) => s + x, 0) / d.length;
    const sd = Math.sqrt(d.reduce((s, x) => s + (x - mean) ** 2, 0) / d.length);
    // 1201 draws: the sd of the sample sd is about 0.5/√(2·1201) ≈ 0.01 m (common practice: 4σ bounds, plus the
    // 0.01 m rounding of alt_m).
    expect(Math.abs(sd - 0.5)).toBeLessThan(0.05);
    expect(Math.abs(mean)).toBeLessThan(0.07);
  });
});
