/**
 * The turn envelope of an airframe at one density and mass: limits per speed, stall and corner speeds, and the
 * sustained-turn optima (load factor, turn rate, radius) over the speed range.
 */
import type { Aircraft } from './aircraft.js';
import { computeAirState, type TemperatureOptions } from './atmosphere.js';
import { G0_MPS2 } from './units.js';
import {
  computeLimits,
  cornerSpeedMps,
  levelTurnAt,
  loadFactorForBank,
  stallSpeedMps,
  topSpeedMps,
  vneTasMps,
  type LimitName,
  type TurnGeometry,
} from './performance.js';
import { sustainedBandMps } from './sustained-band.js';

export interface EnvelopeConditions {
  altitudeM: number;
  temperature: TemperatureOptions;
  massKg: number;
}

export interface EnvelopeTurn extends TurnGeometry {
  n: number | null;
  limitedBy: LimitName | null;
}

export interface EnvelopePoint {
  speedMps: number;
  nStall: number;
  nThrust: number | null;
  nStructural: number;
  sustained: EnvelopeTurn;
  instantaneous: EnvelopeTurn;
}

export interface Optimum {
  value: number;
  speedMps: number;
}

/**
 * An optimum sitting on an end of the thrust table: beyond it the thrust is unknown, so the true optimum may lie
 * outside the table.
 */
export interface TableEdgeOptimum {
  optimum: 'max_sustained' | 'max_sustained_turn_rate' | 'min_sustained_radius';
  speedMps: number;
  /** The table's first or last speed. */
  edgeMps: number;
}

/** One row of the turn table (`envelope --banks`): a level coordinated turn at a bank angle. */
export interface BankTurn {
  bankDeg: number;
  /** n = 1/cos(bank). */
  loadFactor: number;
  /** Vs1·√n, TAS. */
  stallSpeedMps: number;
  /** The sustainable speed band at n, with the turn rate and radius at its lowest speed; null when none. */
  sustained: { minSpeedMps: number; maxSpeedMps: number; turnRateDps: number; radiusM: number | null } | null;
}

export interface Envelope {
  aircraftName: string;
  altitudeM: number;
  temperatureK: number;
  pressurePa: number;
  densityKgM3: number;
  massKg: number;
  weightN: number;
  stallSpeedMps: number;
  cornerSpeedMps: number;
  /** vne_mps from the file, CAS; null without vne. */
  vneCasMps: number | null;
  /** vne_mps (CAS) as TAS at these conditions; null without vne. */
  vneTasMps: number | null;
  /** Speed range searched for the optima: Vs1 to vne as TAS (4·Vs1 without vne). */
  searchFromMps: number;
  searchToMps: number;
  maxSustainedLoadFactor: Optimum | null;
  maxSustainedTurnRateDps: Optimum | null;
  minSustainedRadiusM: Optimum | null;
  /** Optima lying on an end of the thrust table (empty unless the thrust comes from a table). */
  tableEdgeOptima: TableEdgeOptimum[];
  /** The turn table, one row per bank asked for (empty when none). */
  turns: BankTurn[];
  points: EnvelopePoint[];
}

export function envelopePointAt(
  aircraft: Aircraft,
  speedMps: number,
  densityKgM3: number,
  massKg: number,
): EnvelopePoint {
  const limits = computeLimits(aircraft, speedMps, densityKgM3, massKg);
  const sustainedTurn: TurnGeometry =
    limits.sustained === null
      ? { bankDeg: null, turnRateDps: null, radiusM: null }
      : levelTurnAt(limits.sustained, speedMps);
  return {
    speedMps,
    nStall: limits.nStall,
    nThrust: limits.nThrust,
    nStructural: limits.nStructural,
    sustained: { n: limits.sustained, limitedBy: limits.sustainedLimitedBy, ...sustainedTurn },
    instantaneous: {
      n: limits.instantaneous,
      limitedBy: limits.instantaneousLimitedBy,
      ...levelTurnAt(limits.instantaneous, speedMps),
    },
  };
}

/**
 * Maximise f over [lo, hi]: a coarse scan, then repeated finer scans around the best sample. Scanning (not
 * golden-section) is used because the optimum often sits on a kink where two limits cross.
 * f returns null where it is undefined; those samples are skipped.
 */
export function maximizeByScan(
  f: (x: number) => number | null,
  lo: number,
  hi: number,
  coarse = 400,
  rounds = 10,
): Optimum | null {
  if (!(hi > lo)) return null;
  let best: Optimum | null = null;
  let a = lo;
  let b = hi;
  let samples = coarse;
  for (let round = 0; round <= rounds; round++) {
    const step = (b - a) / samples;
    for (let i = 0; i <= samples; i++) {
      const x = a + step * i;
      const y = f(x);
      if (y !== null && Number.isFinite(y) && (best === null || y > best.value)) best = { value: y, speedMps: x };
    }
    if (best === null) return null;
    a = Math.max(lo, best.speedMps - step);
    b = Math.min(hi, best.speedMps + step);
    samples = 40;
  }
  return best;
}

function better(a: Optimum | null, b: Optimum | null): Optimum | null {
  if (a === null) return b;
  if (b === null) return a;
  return b.value > a.value ? b : a;
}

/** A window of 1/200 of the range around a speed, clipped to the range. */
function nearWindow(speedMps: number, lo: number, hi: number): { lo: number; hi: number } {
  const half = (hi - lo) / 200;
  return { lo: Math.max(lo, speedMps - half), hi: Math.min(hi, speedMps + half) };
}

/** Default speeds for a table: Vs1 to vne as TAS (4·Vs1 without vne) in 30 steps. */
export function defaultSpeeds(stallSpeed: number, topSpeed: number, steps = 30): number[] {
  const speeds: number[] = [];
  // The last speed is the top itself (a + (b − a)·n/n need not give b back in floating point).
  for (let i = 0; i <= steps; i++)
    speeds.push(i === steps ? topSpeed : stallSpeed + ((topSpeed - stallSpeed) * i) / steps);
  return speeds;
}

/** A speed this close (relative) to a table end counts as on it: the optimum search resolves far finer. */
const TABLE_EDGE_REL = 1e-4;

function tableEdgeOptima(
  aircraft: Aircraft,
  optima: Array<[TableEdgeOptimum['optimum'], Optimum | null]>,
): TableEdgeOptimum[] {
  if (aircraft.thrust.model !== 'table') return [];
  const pts = aircraft.thrust.points;
  const ends = [pts[0]![0], pts[pts.length - 1]![0]];
  const out: TableEdgeOptimum[] = [];
  for (const [optimum, o] of optima) {
    if (o === null) continue;
    const end = ends.find((e) => Math.abs(o.speedMps - e) <= TABLE_EDGE_REL * Math.max(e, 1));
    if (end !== undefined) out.push({ optimum, speedMps: o.speedMps, edgeMps: end });
  }
  return out;
}

/** The turn at each bank: n = 1/cos(bank), Vs1·√n, and the sustainable band at n (rate and radius at its low end). */
export function bankTurns(
  aircraft: Aircraft,
  densityKgM3: number,
  massKg: number,
  topMps: number,
  banksDeg: readonly number[],
): BankTurn[] {
  const vs1 = stallSpeedMps(aircraft, densityKgM3, massKg);
  return banksDeg.map((bankDeg) => {
    const n = loadFactorForBank(bankDeg);
    const band = sustainedBandMps(aircraft, densityKgM3, massKg, n, topMps);
    let sustained: BankTurn['sustained'] = null;
    if (band) {
      const turn = levelTurnAt(n, band.loMps);
      sustained = {
        minSpeedMps: band.loMps,
        maxSpeedMps: band.hiMps,
        turnRateDps: turn.turnRateDps ?? 0,
        // Bank 0 is straight flight: rate 0 and no radius.
        radiusM: turn.radiusM,
      };
    }
    return { bankDeg, loadFactor: n, stallSpeedMps: vs1 * Math.sqrt(n), sustained };
  });
}

export function computeEnvelope(
  aircraft: Aircraft,
  conditions: EnvelopeConditions,
  speeds?: readonly number[],
  banksDeg: readonly number[] = [],
): Envelope {
  const air = computeAirState(conditions.altitudeM, conditions.temperature);
  const rho = air.densityKgM3;
  const mass = conditions.massKg;
  const vs1 = stallSpeedMps(aircraft, rho, mass);
  const vneTas = vneTasMps(aircraft, air.pressurePa, air.temperatureK);
  const top = topSpeedMps(vneTas, vs1);

  const sustainedN = (v: number): number | null => computeLimits(aircraft, v, rho, mass).sustained;
  const maxN = maximizeByScan(sustainedN, vs1, top);
  const turnExists = maxN !== null && maxN.value > 1;

  let maxRate: Optimum | null = null;
  let minRadius: Optimum | null = null;
  if (turnExists) {
    // The turn may exist only in a narrow band that the coarse scan steps over; searching also around the speed
    // of the best load factor (which lies inside the band) keeps the three optima consistent.
    const near = nearWindow(maxN.speedMps, vs1, top);
    const rate = (v: number): number | null => {
      const n = sustainedN(v);
      return n === null || n <= 1 ? null : (G0_MPS2 * Math.sqrt(n * n - 1)) / v;
    };
    const negRadiusAt = (v: number): number | null => {
      const n = sustainedN(v);
      return n === null || n <= 1 ? null : -(v * v) / (G0_MPS2 * Math.sqrt(n * n - 1));
    };
    maxRate = better(maximizeByScan(rate, vs1, top), maximizeByScan(rate, near.lo, near.hi));
    const negRadius = better(maximizeByScan(negRadiusAt, vs1, top), maximizeByScan(negRadiusAt, near.lo, near.hi));
    if (maxRate) maxRate = { value: (maxRate.value * 180) / Math.PI, speedMps: maxRate.speedMps };
    if (negRadius) minRadius = { value: -negRadius.value, speedMps: negRadius.speedMps };
  }

  return {
    aircraftName: aircraft.name,
    altitudeM: conditions.altitudeM,
    temperatureK: air.temperatureK,
    pressurePa: air.pressurePa,
    densityKgM3: rho,
    massKg: mass,
    weightN: mass * G0_MPS2,
    stallSpeedMps: vs1,
    cornerSpeedMps: cornerSpeedMps(aircraft, rho, mass),
    vneCasMps: aircraft.vneMps ?? null,
    vneTasMps: vneTas,
    searchFromMps: vs1,
    searchToMps: top,
    maxSustainedLoadFactor: turnExists ? maxN : null,
    maxSustainedTurnRateDps: maxRate,
    minSustainedRadiusM: minRadius,
    tableEdgeOptima: tableEdgeOptima(aircraft, [
      ['max_sustained', turnExists ? maxN : null],
      ['max_sustained_turn_rate', maxRate],
      ['min_sustained_radius', minRadius],
    ]),
    turns: bankTurns(aircraft, rho, mass, top, banksDeg),
    // Above vne there is no flyable speed left: the default table then holds Vs1 alone.
    points: (speeds ?? (top > vs1 ? defaultSpeeds(vs1, top) : [vs1])).map((v) =>
      envelopePointAt(aircraft, v, rho, mass),
    ),
  };
}
