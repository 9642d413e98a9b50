import { describe, expect, it } from 'vitest';
import { casToTasMps, iasToCasMps, tasToEasMps } from '../../src/core/airspeed.js';
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
    // U.S. Standard Atmosphere 1976 pressure and temperature; see shared reference table (116.22 kt).
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

  it('takes EAS as TAS times the square root of the density ratio', () => {
    // Definition EAS = TAS·√σ (standard relation).
    const air = computeAirState(2000);
    expect(tasToEasMps(30, air.densityKgM3)).toBeCloseTo(30 * Math.sqrt(air.densityKgM3 / 1.225), 9);
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
