/**
 * Bank limits for a level coordinated turn, with the alert thresholds applied: the bank whose load factor reaches
 * the caution level of the nearest limit.
 */
import type { AlertThresholds } from './thresholds.js';
import { radToDeg } from './units.js';

/** Bank of a level coordinated turn at load factor n: acos(1/n); 0 when n ≤ 1. */
export function bankForLoadFactorDeg(loadFactor: number): number {
  return loadFactor > 1 ? radToDeg(Math.acos(1 / loadFactor)) : 0;
}

export interface BankLimits {
  /** From min(stall caution × n_stall, structure caution × n_limit_pos). */
  bankLimitDeg: number;
  /** As above with thrust caution × n_thrust also in the min when n_thrust is known (else the same as bankLimitDeg). */
  bankSustainedDeg: number;
}

export function computeBankLimits(
  nStall: number,
  nThrust: number | null,
  nLimitPos: number,
  thresholds: AlertThresholds,
): BankLimits {
  const nInstant = Math.min(thresholds.stallCaution * nStall, thresholds.structureCaution * nLimitPos);
  const nSustained = nThrust === null ? nInstant : Math.min(nInstant, thresholds.thrustCaution * nThrust);
  const bankLimitDeg = bankForLoadFactorDeg(nInstant);
  // Where thrust does not bind, the same load factor gives the same bank: one acos, not two.
  return {
    bankLimitDeg,
    bankSustainedDeg: nSustained === nInstant ? bankLimitDeg : bankForLoadFactorDeg(nSustained),
  };
}
