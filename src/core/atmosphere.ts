/**
 * International Standard Atmosphere below 20 km geopotential (ICAO Doc 7488 / ISO 2533 constants; the same layers
 * as the U.S. Standard Atmosphere 1976), with an optional temperature deviation or a measured outside air
 * temperature. Held to the `fluids` library's USSA 1976 to 5e-6 by test/golden/atmosphere-fluids.json.
 */
import { G0_MPS2, GAMMA_AIR, P0_PA, R_AIR, RHO0_KG_M3, T0_K, celsiusToKelvin } from './units.js';

export const LAPSE_RATE_K_PER_M = 0.0065;
export const TROPOPAUSE_M = 11_000;
export const TROPOPAUSE_TEMPERATURE_K = 216.65;
/** Lowest and highest pressure altitude the model accepts, m. */
export const MIN_ALTITUDE_M = -500;
export const MAX_ALTITUDE_M = 20_000;

const TROPOSPHERE_EXPONENT = G0_MPS2 / (R_AIR * LAPSE_RATE_K_PER_M);
const TROPOPAUSE_PRESSURE_PA = P0_PA * (TROPOPAUSE_TEMPERATURE_K / T0_K) ** TROPOSPHERE_EXPONENT;

/** How the air temperature is chosen: ISA plus a deviation, or a measured outside air temperature. */
export interface TemperatureOptions {
  /** Deviation from ISA temperature, K (= °C). Default 0. */
  isaDeviationK?: number;
  /** Outside air temperature, °C; overrides the deviation when given. */
  oatC?: number;
}

export interface AirState {
  altitudeM: number;
  temperatureK: number;
  pressurePa: number;
  densityKgM3: number;
  /** Density ratio ρ/ρ0. */
  sigma: number;
  speedOfSoundMps: number;
}

/** ISA temperature at a geopotential pressure altitude, K. */
export function isaTemperatureK(altitudeM: number): number {
  return altitudeM <= TROPOPAUSE_M ? T0_K - LAPSE_RATE_K_PER_M * altitudeM : TROPOPAUSE_TEMPERATURE_K;
}

/** ISA static pressure at a geopotential pressure altitude, Pa. */
export function isaPressurePa(altitudeM: number): number {
  if (altitudeM <= TROPOPAUSE_M) {
    return P0_PA * (isaTemperatureK(altitudeM) / T0_K) ** TROPOSPHERE_EXPONENT;
  }
  return (
    TROPOPAUSE_PRESSURE_PA * Math.exp((-G0_MPS2 * (altitudeM - TROPOPAUSE_M)) / (R_AIR * TROPOPAUSE_TEMPERATURE_K))
  );
}

/** The inputs and result of the last computeAirState: telemetry repeats altitude and OAT from frame to frame. */
let lastAltitudeM = NaN;
let lastOatC: number | undefined = NaN;
let lastDeviationK: number | undefined = NaN;
let lastAirState: AirState | null = null;

/**
 * Air state at a pressure altitude; temperature from OAT when given, else ISA + deviation. The same inputs as the
 * call before give the same (read-only) object again, without computing it anew.
 */
export function computeAirState(altitudeM: number, temperature: TemperatureOptions = {}): AirState {
  const { oatC, isaDeviationK } = temperature;
  if (
    lastAirState !== null &&
    Object.is(altitudeM, lastAltitudeM) &&
    Object.is(oatC, lastOatC) &&
    Object.is(isaDeviationK, lastDeviationK)
  ) {
    return lastAirState;
  }
  lastAirState = airStateAt(altitudeM, temperature);
  lastAltitudeM = altitudeM;
  lastOatC = oatC;
  lastDeviationK = isaDeviationK;
  return lastAirState;
}

function airStateAt(altitudeM: number, temperature: TemperatureOptions): AirState {
  const pressurePa = isaPressurePa(altitudeM);
  const temperatureK =
    temperature.oatC !== undefined
      ? celsiusToKelvin(temperature.oatC)
      : isaTemperatureK(altitudeM) + (temperature.isaDeviationK ?? 0);
  const densityKgM3 = pressurePa / (R_AIR * temperatureK);
  return {
    altitudeM,
    temperatureK,
    pressurePa,
    densityKgM3,
    sigma: densityKgM3 / RHO0_KG_M3,
    speedOfSoundMps: Math.sqrt(GAMMA_AIR * R_AIR * temperatureK),
  };
}
