/**
 * Simulated samples as telemetry frames (the wire keys of the frame format), with seeded measurement noise on
 * nz, on the airspeed and (when the plan asks) on the altitude. Pure and deterministic: the same samples and seed give the same frames.
 */
import type { Aircraft } from '../core/aircraft.js';
import { interpolateTable } from '../core/airspeed.js';
import { A0_MPS, GAMMA_AIR, KELVIN_OFFSET, P0_PA, R_AIR } from '../core/units.js';
import { createGaussian } from './noise.js';
import type { FlightPlan } from './plan.js';
import type { SimSample } from './point-mass.js';

/** One frame as written: wire keys in a fixed order. */
export type SimFrame = Record<string, number | string | boolean>;

/**
 * CAS from TAS: the inverse of the subsonic compressible relations the monitor uses (M = TAS/a;
 * qc = p[(1 + 0.2M²)^3.5 − 1]; CAS = a0·√(5[(qc/p0 + 1)^(2/7) − 1])).
 */
export function tasToCasMps(tasMps: number, pressurePa: number, temperatureK: number): number {
  const mach = tasMps / Math.sqrt(GAMMA_AIR * R_AIR * temperatureK);
  const impactPressurePa = pressurePa * ((1 + 0.2 * mach * mach) ** 3.5 - 1);
  return A0_MPS * Math.sqrt(5 * ((impactPressurePa / P0_PA + 1) ** (2 / 7) - 1));
}

/**
 * The calibration table read backwards (CAS → IAS), or null when its CAS column does not increase (then the
 * table has no single inverse and IAS frames cannot be written).
 */
export function invertCalibration(
  table: ReadonlyArray<readonly [number, number]> | undefined,
): Array<[number, number]> | null {
  if (!table || table.length === 0) return [];
  for (let i = 1; i < table.length; i++) if (table[i]![1] <= table[i - 1]![1]) return null;
  return table.map(([ias, cas]) => [cas, ias]);
}

const round = (x: number, decimals: number) => {
  const f = 10 ** decimals;
  const r = Math.round(x * f) / f;
  return Object.is(r, -0) ? 0 : r;
};

export interface FrameWriterOptions {
  seed: number;
}

/**
 * A stateful writer (it draws noise in order): sample → frame. Keys: t_s, the plan's airspeed key, alt_m, bank_deg,
 * nz, oat_c (when the plan sets an ISA deviation), mass_kg (when the plan sets a mass), heading_deg, throttle (the
 * fraction of the thrust available in use, 0…1), segment and `simulated: true`.
 */
export function createFrameWriter(
  aircraft: Aircraft,
  plan: FlightPlan,
  options: FrameWriterOptions,
): (s: SimSample) => SimFrame {
  const gaussian = createGaussian(options.seed);
  // The altitude noise has a stream of its own, so that adding it leaves the airspeed and nz noise of a seed as they
  // were (files made before it stay reproducible).
  const altitudeGaussian = createGaussian((options.seed ^ 0x9e3779b9) >>> 0);
  const casToIas = plan.airspeedKey === 'ias_mps' ? invertCalibration(aircraft.airspeedCalibration) : [];
  if (casToIas === null) {
    throw new RangeError(
      "the airframe's airspeed_calibration CAS column does not increase, so IAS cannot be derived from it",
    );
  }
  return (s) => {
    // Draw both noises on every frame, so the sequence does not depend on the noise levels being zero.
    const airspeedNoise = gaussian() * plan.airspeedNoiseSdMps;
    const nzNoise = gaussian() * plan.nzNoiseSd;
    const altNoise = altitudeGaussian() * plan.altNoiseSdM;
    const tasMps = Math.max(0, s.tasMps + airspeedNoise);
    let airspeed = tasMps;
    if (plan.airspeedKey !== 'tas_mps') {
      const cas = tasToCasMps(tasMps, s.pressurePa, s.temperatureK);
      airspeed = plan.airspeedKey === 'cas_mps' || casToIas.length === 0 ? cas : interpolateTable(casToIas, cas);
    }
    const frame: SimFrame = {
      t_s: round(s.tS, 4),
      [plan.airspeedKey]: round(Math.max(0, airspeed), 3),
      alt_m: round(s.altM + altNoise, 2),
      bank_deg: round(s.bankDeg, 2),
      nz: round(s.loadFactor + nzNoise, 4),
    };
    if (plan.isaDeviationK !== undefined) frame['oat_c'] = round(s.temperatureK - KELVIN_OFFSET, 2);
    if (plan.massKg !== undefined) frame['mass_kg'] = plan.massKg;
    const heading = round(s.headingDeg, 1);
    frame['heading_deg'] = heading >= 360 ? 0 : heading;
    frame['throttle'] = round(s.throttle, 3);
    frame['segment'] = plan.segments[s.segmentIndex]!.label;
    // Marks simulated data, so a file made by the simulator is never taken for a flight.
    frame['simulated'] = true;
    return frame;
  };
}
