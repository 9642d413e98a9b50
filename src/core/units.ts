/** Physical constants and unit conversions (exact definitions where they exist). */

/** Standard gravity, m/s² (U.S. Standard Atmosphere 1976). */
export const G0_MPS2 = 9.80665;
/**
 * Specific gas constant of dry air, J/(kg·K): the ICAO Standard Atmosphere value (ICAO Doc 7488/3, ISO 2533:1975).
 * USSA 1976 uses R = 8314.32/28.9644 = 287.0531 (universal constant over molar mass); the two differ by 7e-7, far below any use here.
 */
export const R_AIR = 287.05287;
/** Ratio of specific heats of air. */
export const GAMMA_AIR = 1.4;
/** Sea-level ISA pressure, Pa (ICAO Doc 7488, ISO 2533; the same in USSA 1976). */
export const P0_PA = 101325;
/** Sea-level ISA temperature, K. */
export const T0_K = 288.15;
/** Sea-level ISA density, kg/m³. */
export const RHO0_KG_M3 = 1.225;
/** Sea-level ISA speed of sound, m/s. */
export const A0_MPS = Math.sqrt(GAMMA_AIR * R_AIR * T0_K);

export const KNOT_MPS = 1852 / 3600;
export const KMH_MPS = 1000 / 3600;
export const MPH_MPS = 1609.344 / 3600;
export const FOOT_M = 0.3048;
export const POUND_KG = 0.45359237;
export const KELVIN_OFFSET = 273.15;

export const DEG_PER_RAD = 180 / Math.PI;
export const RAD_PER_DEG = Math.PI / 180;

export function degToRad(deg: number): number {
  return deg * RAD_PER_DEG;
}

export function radToDeg(rad: number): number {
  return rad * DEG_PER_RAD;
}

export function celsiusToKelvin(celsius: number): number {
  return celsius + KELVIN_OFFSET;
}

/**
 * Bounds on a mass, kg, the same for the airframe file, a frame's mass_kg and --mass: outside them the number is a
 * typing or unit error (grams for kilograms), not an aircraft. From a 50 g micro air vehicle to 10 t.
 */
export const MASS_MIN_KG = 0.05;
export const MASS_MAX_KG = 10_000;
