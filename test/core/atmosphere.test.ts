import { describe, expect, it } from 'vitest';
import { computeAirState, isaPressurePa, isaTemperatureK } from '../../src/core/atmosphere.js';

// U.S. Standard Atmosphere 1976 (= ICAO Standard Atmosphere, Doc 7488), geopotential altitude.
// Published table values: temperature K, pressure Pa, density kg/m³.
const USSA_1976: Array<[number, number, number, number]> = [
  [0, 288.15, 101325, 1.225],
  [1000, 281.65, 89875, 1.1116],
  [11000, 216.65, 22632, 0.3639],
  [20000, 216.65, 5474.9, 0.088],
];

describe('ISA (U.S. Standard Atmosphere 1976)', () => {
  for (const [altitudeM, temperatureK, pressurePa, densityKgM3] of USSA_1976) {
    it(`matches the published table at ${altitudeM} m`, () => {
      const air = computeAirState(altitudeM);
      expect(air.temperatureK).toBeCloseTo(temperatureK, 2);
      expect(Math.abs(air.pressurePa - pressurePa) / pressurePa).toBeLessThan(2e-4);
      expect(Math.abs(air.densityKgM3 - densityKgM3) / densityKgM3).toBeLessThan(6e-4);
    });
  }

  it('keeps the temperature constant above the tropopause', () => {
    // U.S. Standard Atmosphere 1976: isothermal layer 216.65 K from 11 to 20 km.
    expect(isaTemperatureK(15000)).toBe(216.65);
    expect(isaPressurePa(15000)).toBeLessThan(isaPressurePa(11000));
  });

  it('uses the outside air temperature for density when one is given', () => {
    // Ideal gas law ρ = p/(R·T) with R = 287.05287 J/(kg·K) (U.S. Standard Atmosphere 1976).
    const air = computeAirState(0, { oatC: 35 });
    expect(air.temperatureK).toBeCloseTo(308.15, 6);
    expect(air.densityKgM3).toBeCloseTo(101325 / (287.05287 * 308.15), 6);
  });

  it('adds an ISA deviation to the standard temperature', () => {
    const air = computeAirState(1000, { isaDeviationK: 10 });
    expect(air.temperatureK).toBeCloseTo(291.65, 6);
    expect(air.pressurePa).toBeCloseTo(isaPressurePa(1000), 6); // pressure altitude fixes the pressure
  });
});
