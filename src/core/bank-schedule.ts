/**
 * Bank-limit schedule for an autopilot: bank_limit_deg and bank_sustained_deg (alert thresholds applied) against
 * TAS, for each pressure altitude and mass.
 */
import type { Aircraft } from './aircraft.js';
import { computeAirState, type TemperatureOptions } from './atmosphere.js';
import { computeBankLimits } from './bank-limits.js';
import { computeLimits, stallSpeedMps, vneTasMps } from './performance.js';
import type { AlertThresholds } from './thresholds.js';

export interface BankScheduleRow {
  altitudeM: number;
  massKg: number;
  densityKgM3: number;
  speedMps: number;
  nStall: number;
  nThrust: number | null;
  nStructural: number;
  bankLimitDeg: number;
  bankSustainedDeg: number;
}

export interface BankScheduleRequest {
  altitudesM: readonly number[];
  massesKg: readonly number[];
  temperature: TemperatureOptions;
  /**
   * Speeds (TAS); when absent, from the lowest Vs1 of all conditions to the highest vne as TAS (4·Vs1 without vne)
   * in 30 steps.
   */
  speedsMps?: readonly number[];
}

export function computeBankSchedule(
  aircraft: Aircraft,
  thresholds: AlertThresholds,
  request: BankScheduleRequest,
): BankScheduleRow[] {
  const conditions = request.altitudesM.flatMap((altitudeM) =>
    request.massesKg.map((massKg) => ({
      altitudeM,
      massKg,
      rho: computeAirState(altitudeM, request.temperature).densityKgM3,
    })),
  );
  let speeds = request.speedsMps;
  if (!speeds) {
    let lo = Number.POSITIVE_INFINITY;
    let highestStall = 0;
    let highestVneTas: number | null = null;
    for (const c of conditions) {
      const vs1 = stallSpeedMps(aircraft, c.rho, c.massKg);
      lo = Math.min(lo, vs1);
      highestStall = Math.max(highestStall, vs1);
      // vne_mps is CAS: as TAS it is highest at the lowest density.
      const air = computeAirState(c.altitudeM, request.temperature);
      const vneTas = vneTasMps(aircraft, air.pressurePa, air.temperatureK);
      if (vneTas !== null) highestVneTas = Math.max(highestVneTas ?? 0, vneTas);
    }
    const hi = highestVneTas ?? 4 * highestStall;
    speeds = Array.from({ length: 31 }, (_, i) => lo + ((hi - lo) * i) / 30);
  }
  const rows: BankScheduleRow[] = [];
  for (const c of conditions) {
    for (const v of speeds) {
      const limits = computeLimits(aircraft, v, c.rho, c.massKg);
      const bank = computeBankLimits(limits.nStall, limits.nThrust, limits.nStructural, thresholds);
      rows.push({
        altitudeM: c.altitudeM,
        massKg: c.massKg,
        densityKgM3: c.rho,
        speedMps: v,
        nStall: limits.nStall,
        nThrust: limits.nThrust,
        nStructural: limits.nStructural,
        bankLimitDeg: bank.bankLimitDeg,
        bankSustainedDeg: bank.bankSustainedDeg,
      });
    }
  }
  return rows;
}
