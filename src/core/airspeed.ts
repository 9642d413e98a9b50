/** Airspeed conversions: IAS → CAS (position-error table), CAS ↔ TAS (subsonic compressible), EAS. */
import { A0_MPS, GAMMA_AIR, P0_PA, R_AIR, RHO0_KG_M3 } from './units.js';

/** A position-error table: pairs [ias_mps, cas_mps], both columns strictly increasing (the airframe schema checks). */
export type CalibrationTable = ReadonlyArray<readonly [number, number]>;

/**
 * Linear interpolation in a table of [x, y] pairs sorted by x. Outside the table the correction (y − x) of the
 * nearest end is applied: a position error is a small offset, and extending the end segment's slope instead can
 * carry a low IAS into a negative CAS. The result is never below 0. Read backwards ([cas, ias] pairs) it gives the
 * exact inverse, ends included.
 */
export function interpolateTable(table: ReadonlyArray<readonly [number, number]>, x: number): number {
  if (table.length === 0) return x;
  const first = table[0]!;
  const last = table[table.length - 1]!;
  if (x <= first[0]) return Math.max(0, x + (first[1] - first[0]));
  if (x >= last[0]) return Math.max(0, x + (last[1] - last[0]));
  let i = 1;
  while (i < table.length - 1 && x > table[i]![0]) i++;
  const [x0, y0] = table[i - 1]!;
  const [x1, y1] = table[i]!;
  return x1 === x0 ? y0 : y0 + ((y1 - y0) * (x - x0)) / (x1 - x0);
}

/** CAS from IAS through the airframe's calibration table (identity without one). */
export function iasToCasMps(iasMps: number, calibration: CalibrationTable | undefined): number {
  if (!calibration || calibration.length === 0) return iasMps;
  return interpolateTable(calibration, iasMps);
}

/** x^3.5 as x³·√x: the same value to the last bit or two, several times faster than the general power. */
function power3p5(x: number): number {
  return x * x * x * Math.sqrt(x);
}

/**
 * x^(2/7), the other exponent of the relations below, for x ≥ 1. Their x is 1 + qc/p0 (or qc/p), and at the speeds of
 * small aircraft it stays just above 1 (1.007 at Mach 0.1): there the binomial series of (1 + e)^(2/7) to the third
 * order and two Newton steps on y⁷ = x² give the general power's value within one unit in the last place, about three
 * times faster. Elsewhere (e above 0.1, Mach above about 0.37) the general power.
 */
export function power2over7(x: number): number {
  const e = x - 1;
  if (!(e >= 0 && e <= 0.1)) return x ** (2 / 7);
  // 1 + (2/7)e − (5/49)e² + (20/343)e³: an error of at most 4·10⁻⁶ at e = 0.1, and each Newton step squares it.
  let y = 1 + e * (2 / 7 + e * (-5 / 49 + e * (20 / 343)));
  const x2 = x * x;
  let y3 = y * y * y;
  y = (6 * y + x2 / (y3 * y3)) / 7;
  y3 = y * y * y;
  return (6 * y + x2 / (y3 * y3)) / 7;
}

/**
 * TAS from CAS with the standard subsonic compressible relations:
 * qc = p0[(1 + 0.2(CAS/a0)²)^3.5 − 1]; M = √(5[(qc/p + 1)^(2/7) − 1]); TAS = M·√(γRT).
 */
export function casToTasMps(casMps: number, pressurePa: number, temperatureK: number): number {
  const impactPressurePa = P0_PA * (power3p5(1 + 0.2 * (casMps / A0_MPS) ** 2) - 1);
  const mach = Math.sqrt(5 * (power2over7(impactPressurePa / pressurePa + 1) - 1));
  return mach * Math.sqrt(GAMMA_AIR * R_AIR * temperatureK);
}

/**
 * CAS from TAS, the exact inverse of `casToTasMps`: M = TAS/√(γRT); qc = p[(1 + 0.2M²)^3.5 − 1];
 * CAS = a0·√(5[(qc/p0 + 1)^(2/7) − 1]).
 */
export function tasToCasMps(tasMps: number, pressurePa: number, temperatureK: number): number {
  return machToCasMps(tasMps / Math.sqrt(GAMMA_AIR * R_AIR * temperatureK), pressurePa);
}

/**
 * tasToCasMps at a known speed of sound √(γRT) (an air state's speedOfSoundMps, the same root): the per-frame
 * path, which reuses the air state's root.
 */
export function tasToCasAtMps(tasMps: number, pressurePa: number, speedOfSoundMps: number): number {
  return machToCasMps(tasMps / speedOfSoundMps, pressurePa);
}

/** CAS from the Mach number at static pressure p: qc = p[(1 + 0.2M²)^3.5 − 1]; CAS = a0·√(5[(qc/p0 + 1)^(2/7) − 1]). */
function machToCasMps(mach: number, pressurePa: number): number {
  const impactPressurePa = pressurePa * (power3p5(1 + 0.2 * mach * mach) - 1);
  return A0_MPS * Math.sqrt(5 * (power2over7(impactPressurePa / P0_PA + 1) - 1));
}

/** EAS = TAS·√σ. */
export function tasToEasMps(tasMps: number, densityKgM3: number): number {
  return tasMps * Math.sqrt(densityKgM3 / RHO0_KG_M3);
}
