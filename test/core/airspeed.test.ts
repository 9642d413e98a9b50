import { describe, expect, it } from 'vitest';
import { casToTasMps, iasToCasMps, power2over7, tasToCasMps, tasToEasMps } from '../../src/core/airspeed.js';
import { computeAirState } from '../../src/core/atmosphere.js';
import { FOOT_M, KNOT_MPS } from '../../src/core/units.js';

describe('airspeed conversions', () => {
  it('gives TAS equal to CAS at sea level ISA', () => {
    // Definition of calibrated airspeed: CAS = TAS in the ISA sea-level atmosphere.
    const air = computeAirState(0);
    for (const cas of [5, 20, 50, 100]) {
      expect(casToTasMps(cas, air.pressurePa, air.temperatureK)).toBeCloseTo(cas, 6);
    }
  });

  it('turns CAS 100 kt at 10 000 ft ISA into about 116.2 kt TAS', () => {
    // Computed from the standard subsonic compressible relations (qc, Mach, TAS = M·a) with
    // U.S. Standard Atmosphere 1976 pressure and temperature: 116.22 kt (incompressible √σ would give 116.37).
    const air = computeAirState(10000 * FOOT_M);
    const tasKt = casToTasMps(100 * KNOT_MPS, air.pressurePa, air.temperatureK) / KNOT_MPS;
    expect(tasKt).toBeCloseTo(116.22, 1);
  });

  it('turns CAS 100 kt at 5 000 ft ISA into about 107.7 kt TAS', () => {
    // Computed from the same standard relations (reference value 107.67 kt).
    const air = computeAirState(5000 * FOOT_M);
    const tasKt = casToTasMps(100 * KNOT_MPS, air.pressurePa, air.temperatureK) / KNOT_MPS;
    expect(tasKt).toBeCloseTo(107.67, 1);
  });

  it('gives the EAS whose sea-level dynamic pressure equals the true one, with density from fluids', () => {
    // EAS is defined by ½·ρ0·EAS² = ½·ρ·TAS² (standard definition). ρ at 2000 m geopotential from fluids 1.3.1
    // ATMOSPHERE_1976 (Z = r0·H/(r0 − H)): 1.0064895609198834 kg/m³; ρ0 = 1.225 kg/m³ (USSA 1976 / ICAO).
    const rhoFluids = 1.0064895609198834;
    const eas = tasToEasMps(30, computeAirState(2000).densityKgM3);
    expect(Math.abs((0.5 * 1.225 * eas * eas) / (0.5 * rhoFluids * 30 * 30) - 1)).toBeLessThan(5e-6);
    // The same at 3048 m (10 000 ft): fluids gives 0.904636508209189 kg/m³.
    const eas10k = tasToEasMps(50, computeAirState(3048).densityKgM3);
    expect(Math.abs((1.225 * eas10k * eas10k) / (0.904636508209189 * 50 * 50) - 1)).toBeLessThan(5e-6);
  });

  it('corrects IAS to CAS through the position-error table by linear interpolation', () => {
    const table = [
      [8, 8.6],
      [30, 30.4],
    ] as const;
    expect(iasToCasMps(8, table)).toBeCloseTo(8.6, 9);
    expect(iasToCasMps(19, table)).toBeCloseTo(19.5, 9);
    expect(iasToCasMps(12, undefined)).toBe(12);
  });
});

describe('CAS from TAS (the inverse relation)', () => {
  it('gives back CAS 100 kt from TAS 116.22 kt at 10 000 ft ISA', () => {
    // Computed from the standard subsonic compressible relations with USSA 1976 pressure and temperature:
    // CAS 100 kt at 10 000 ft ISA is TAS 116.22 kt (the same figure as the CAS → TAS check above).
    const air = computeAirState(10000 * FOOT_M);
    expect(tasToCasMps(116.22 * KNOT_MPS, air.pressurePa, air.temperatureK) / KNOT_MPS).toBeCloseTo(100, 1);
  });

  it('is the exact inverse of CAS → TAS over the subsonic range, altitudes and temperatures', () => {
    for (const altitudeM of [-500, 0, 3000, 11000, 20000]) {
      for (const isaDeviationK of [-30, 0, 30]) {
        const air = computeAirState(altitudeM, { isaDeviationK });
        for (const cas of [1, 10, 30, 80, 150]) {
          const tas = casToTasMps(cas, air.pressurePa, air.temperatureK);
          expect(tasToCasMps(tas, air.pressurePa, air.temperatureK)).toBeCloseTo(cas, 9);
        }
      }
    }
  });
});

describe('the calibration table beyond its ends', () => {
  const table = [
    [8, 8.6],
    [30, 30.4],
  ] as const;

  it('applies the correction of the nearest end outside the table', () => {
    // The position-error correction CAS − IAS is held at its end value (common practice: a small offset).
    expect(iasToCasMps(2, table)).toBeCloseTo(2.6, 9);
    expect(iasToCasMps(40, table)).toBeCloseTo(40.4, 9);
  });

  it('never turns a small IAS into a negative CAS, even where a steep end segment would', () => {
    // A table whose end slope (25 − 5)/(12 − 10) = 10 would carry IAS 2 to CAS −75 if the segment were extended.
    const steep = [
      [10, 5],
      [12, 25],
    ] as const;
    expect(iasToCasMps(2, steep)).toBe(0);
    expect(iasToCasMps(9, steep)).toBeCloseTo(4, 9);
    for (let ias = 0; ias <= 60; ias += 0.5) expect(iasToCasMps(ias, steep)).toBeGreaterThanOrEqual(0);
  });

  it('reads back exactly from a table read the other way round, ends included', () => {
    const inverse = table.map(([ias, cas]) => [cas, ias] as const);
    for (const ias of [2, 8, 19, 30, 45]) expect(iasToCasMps(iasToCasMps(ias, table), inverse)).toBeCloseTo(ias, 9);
  });
});

describe('the power 2/7 of the CAS relations', () => {
  it('gives the general power x^(2/7) within one unit in the last place over the speeds it shortcuts', () => {
    // Reference: the general power (Math.pow, IEEE-754 double); x = 1 + e, e from 0 to 0.1 (Mach up to about 0.37).
    let worstUlps = 0;
    for (let i = 0; i <= 100_000; i++) {
      const x = 1 + (i / 100_000) * 0.1;
      const reference = x ** (2 / 7);
      worstUlps = Math.max(worstUlps, Math.abs(power2over7(x) - reference) / (Number.EPSILON * reference));
    }
    expect(worstUlps).toBeLessThanOrEqual(1);
  });

  it('is the general power itself outside that range (below 1, above 1.1, NaN)', () => {
    for (const x of [0.5, 0.999, 1.1000001, 2, 40]) expect(power2over7(x)).toBe(x ** (2 / 7));
    expect(power2over7(NaN)).toBeNaN();
    expect(power2over7(1)).toBe(1);
  });
});
