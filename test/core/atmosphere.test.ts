import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { computeAirState, isaPressurePa, isaTemperatureK } from '../../src/core/atmosphere.js';

// Published table values, geopotential altitude: temperature K, pressure Pa, density kg/m³.
// U.S. Standard Atmosphere 1976 (NOAA/NASA/USAF), table I; the same layers as the ICAO Standard Atmosphere
// (Doc 7488) below 20 km. 20 km: 216.65 K, 5474.9 Pa, 0.088035 kg/m³.
const USSA_1976: Array<[number, number, number, number]> = [
  [0, 288.15, 101325, 1.225],
  [1000, 281.65, 89875, 1.1116],
  [11000, 216.65, 22632, 0.3639],
  [20000, 216.65, 5474.9, 0.088035],
];

interface Golden {
  library: string;
  library_version: string;
  columns: string[];
  points: Array<[number, number, number, number, number, number]>;
}

// Made by test/golden/make-atmosphere-golden.py with fluids 1.3.1 (ATMOSPHERE_1976, given geometric altitude
// Z = r0·H/(r0 − H)); the file carries the library version.
const GOLDEN = JSON.parse(readFileSync(new URL('../golden/atmosphere-fluids.json', import.meta.url), 'utf8')) as Golden;

const relErr = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('ISA (U.S. Standard Atmosphere 1976 layers, ICAO constants)', () => {
  for (const [altitudeM, temperatureK, pressurePa, densityKgM3] of USSA_1976) {
    it(`matches the published table at ${altitudeM} m`, () => {
      const air = computeAirState(altitudeM);
      expect(air.temperatureK).toBeCloseTo(temperatureK, 2);
      expect(relErr(air.pressurePa, pressurePa)).toBeLessThan(2e-4);
      expect(relErr(air.densityKgM3, densityKgM3)).toBeLessThan(6e-4);
    });
  }

  it('gives 0.088035 kg/m³ at 20 km to the published digits', () => {
    // USSA 1976 table I, 20 000 m geopotential: 8.8035e-2 kg/m³.
    expect(relErr(computeAirState(20000).densityKgM3, 0.088035)).toBeLessThan(1e-5);
  });

  it('keeps the temperature constant above the tropopause', () => {
    // USSA 1976 / ICAO: isothermal layer at 216.65 K from 11 to 20 km geopotential.
    expect(isaTemperatureK(15000)).toBe(216.65);
    expect(isaPressurePa(15000)).toBeLessThan(isaPressurePa(11000));
  });

  it('uses the outside air temperature for density when one is given', () => {
    // fluids 1.3.1, ATMOSPHERE_1976(0, dT = 20): OAT 35 °C at sea level is ISA + 20 K, ρ = 1.145492476939946 kg/m³
    // (fluids' own gas constant 8314.32/28.9644, so agreement to 2e-6 only).
    const air = computeAirState(0, { oatC: 35 });
    expect(air.temperatureK).toBeCloseTo(308.15, 9);
    expect(relErr(air.densityKgM3, 1.145492476939946)).toBeLessThan(2e-6);
  });

  it('adds an ISA deviation to the standard temperature', () => {
    const air = computeAirState(1000, { isaDeviationK: 10 });
    expect(air.temperatureK).toBeCloseTo(291.65, 6);
    expect(air.pressurePa).toBeCloseTo(isaPressurePa(1000), 6); // pressure altitude fixes the pressure
  });
});

describe('ISA against the fluids library (golden table)', () => {
  it('holds about 400 points from −500 to 20 000 m over several ISA deviations, made with fluids 1.3.1', () => {
    expect(GOLDEN.library).toBe('fluids');
    expect(GOLDEN.library_version).toBe('1.3.1');
    expect(GOLDEN.points.length).toBeGreaterThanOrEqual(380);
    const hs = GOLDEN.points.map((p) => p[0]);
    expect(Math.min(...hs)).toBe(-500);
    expect(Math.max(...hs)).toBe(20000);
    expect(new Set(GOLDEN.points.map((p) => p[1])).size).toBeGreaterThanOrEqual(4);
  });

  it('agrees with every golden point to 5e-6 in temperature, pressure, density and speed of sound', () => {
    // fluids.atmosphere.ATMOSPHERE_1976 (U.S. Standard Atmosphere 1976); R differs by 7e-7 (ICAO vs USSA).
    let worst = 0;
    for (const [h, dT, t, p, rho, a] of GOLDEN.points) {
      const air = computeAirState(h, { isaDeviationK: dT });
      const errors = [
        relErr(air.temperatureK, t),
        relErr(air.pressurePa, p),
        relErr(air.densityKgM3, rho),
        relErr(air.speedOfSoundMps, a),
      ];
      for (const e of errors) worst = Math.max(worst, e);
      expect(Math.max(...errors), `H ${h} m, ISA${dT >= 0 ? '+' : ''}${dT}`).toBeLessThan(5e-6);
    }
    expect(worst).toBeGreaterThan(0); // the comparison really ran on two different implementations
  });
});
