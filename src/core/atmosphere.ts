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
let lastAltitudeM = Number.NaN;
let lastOatC: number | undefined = Number.NaN;
let lastDeviationK: number | undefined = Number.NaN;
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

/**
 * The air temperature, K: the outside air temperature when given, else ISA plus the deviation (0 by default).
 */
export function airTemperatureK(altitudeM: number, oatC: number | undefined, isaDeviationK = 0): number {
  return oatC !== undefined ? celsiusToKelvin(oatC) : isaTemperatureK(altitudeM) + isaDeviationK;
}

/** Slots of an air state held in a Float64Array by fillAirValues. */
export const AIR_TEMPERATURE_K = 0;
export const AIR_PRESSURE_PA = 1;
export const AIR_DENSITY_KG_M3 = 2;
export const AIR_SPEED_OF_SOUND_MPS = 3;
export const AIR_VALUE_SLOTS = 4;

/**
 * The air state at a pressure altitude and air temperature, written into `out` at the AIR_* slots: the per-frame
 * form (the altitude changes at most frames, and an object per change would be an allocation per frame).
 */
export function fillAirValues(out: Float64Array, altitudeM: number, temperatureK: number): void {
  const pressurePa = isaPressurePa(altitudeM);
  out[AIR_TEMPERATURE_K] = temperatureK;
  out[AIR_PRESSURE_PA] = pressurePa;
  out[AIR_DENSITY_KG_M3] = pressurePa / (R_AIR * temperatureK);
  out[AIR_SPEED_OF_SOUND_MPS] = Math.sqrt(GAMMA_AIR * R_AIR * temperatureK);
}

const airValues = new Float64Array(AIR_VALUE_SLOTS);

function airStateAt(altitudeM: number, temperature: TemperatureOptions): AirState {
  fillAirValues(airValues, altitudeM, airTemperatureK(altitudeM, temperature.oatC, temperature.isaDeviationK));
  const densityKgM3 = airValues[AIR_DENSITY_KG_M3]!;
  return {
    altitudeM,
    temperatureK: airValues[AIR_TEMPERATURE_K]!,
    pressurePa: airValues[AIR_PRESSURE_PA]!,
    densityKgM3,
    sigma: densityKgM3 / RHO0_KG_M3,
    speedOfSoundMps: airValues[AIR_SPEED_OF_SOUND_MPS]!,
  };
}
