/**
 * Test cards: a build-up of level-turn test points (a bank angle at a speed, held within tolerances) planned from
 * the airframe model at one condition, and the card file's validation. Pure: the shell reads and writes the files.
 *
 * A point's target load factor is a step of the instantaneous limit at its speed, n = s·min(n_stall(V), n_structural);
 * bank = acos(1/n) (level coordinated turn). A target at or beyond the warning threshold of the stall or structural
 * limit is never put on a card: it is listed as excluded with the reason, like targets below 1.05 g.
 */
import * as z from 'zod';
import type { Aircraft } from './aircraft.js';
import { computeAirState, isaTemperatureK, type TemperatureOptions } from './atmosphere.js';
import { casToTasMps } from './airspeed.js';
import {
  dragAtLoadFactorN,
  stallLoadFactor,
  stallSpeedMps,
  thrustAvailableN,
  thrustLoadFactor,
} from './performance.js';
import { describeIssues } from './validation.js';
import { radToDeg } from './units.js';

export const DEFAULT_CARD_STEPS: readonly number[] = Object.freeze([0.5, 0.7, 0.85]);
export const DEFAULT_HOLD_S = 3;
export const DEFAULT_TOLERANCE_BANK_DEG = 3;
export const DEFAULT_TOLERANCE_TAS_MPS = 1;
/** Targets below this load factor are not turns worth a test point (bank under about 18°). */
export const MIN_CARD_LOAD_FACTOR = 1.05;
/** Default speeds: this many, evenly spread from LOW·Vs1 to the lower of vne (as TAS) and HIGH·Vs1. */
export const DEFAULT_SPEED_COUNT = 5;
export const DEFAULT_SPEED_LOW_VS1 = 1.3;
export const DEFAULT_SPEED_HIGH_VS1 = 2.5;
/** Default speeds are rounded to this, m/s. */
export const SPEED_ROUNDING_MPS = 0.5;

/** The cautions every card carries (in its header and in `conditions.notes`). */
export const CARD_CAUTIONS: readonly string[] = Object.freeze([
  "A test card is a planning aid computed from the airframe model: the test team's own safety review, build-up " +
    "rules and the aircraft's approved limits prevail, with the operator's procedures and local aviation rules.",
  'No point on this card is at or beyond the warning threshold of any limit: card never produces one (such targets ' +
    'are listed as excluded).',
  'Predictions assume a level coordinated turn at the stated conditions; advisory, not flight-critical.',
]);

export interface CardUtilization {
  stall: number | null;
  thrust: number | null;
  structure: number | null;
}

export interface CardPoint {
  id: string;
  step: number;
  tas_mps: number;
  bank_deg: number;
  load_factor: number;
  hold_s: number;
  tolerance: { bank_deg: number; tas_mps: number };
  predicted: { utilization: CardUtilization; sustained: boolean; dvdt_mps2: number | null };
}

export interface CardExclusion {
  step: number;
  tas_mps: number;
  load_factor: number;
  reason: string;
}

export interface CardConditions {
  aircraft: string;
  mass_kg: number;
  altitude_m: number;
  /** Temperature off ISA at the card's altitude, K (also when the card was made from an OAT). */
  isa_deviation_k: number;
  oat_c: number | null;
  temperature_k: number;
  pressure_pa: number;
  density_kg_m3: number;
  vs1_mps: number;
  vne_tas_mps: number | null;
  n_structural: number;
  stall_warning: number;
  structure_warning: number;
  speeds_mps: number[];
  steps: number[];
  notes: string[];
}

export interface TestCard {
  conditions: CardConditions;
  points: CardPoint[];
  excluded: CardExclusion[];
}

export interface CardRequest {
  altitudeM: number;
  temperature: TemperatureOptions;
  massKg: number;
  /** TAS, m/s; default: see defaultCardSpeeds. */
  speedsMps?: readonly number[];
  steps?: readonly number[];
  holdS?: number;
  toleranceBankDeg?: number;
  toleranceTasMps?: number;
}

const roundTo = (x: number, step: number) => Math.round(x / step) * step;

/**
 * The default speeds: five evenly spread from 1.3·Vs1 to the lower of vne (a calibrated airspeed, converted to TAS
 * at the card's conditions) and 2.5·Vs1, each rounded to 0.5 m/s — except that a speed that rounding would lift
 * above vne is rounded down instead. Repeated speeds (a narrow range) are given once. Empty when the top is below
 * the bottom.
 */
export function defaultCardSpeeds(vs1Mps: number, vneTasMps: number | null): number[] {
  const low = DEFAULT_SPEED_LOW_VS1 * vs1Mps;
  const high = Math.min(vneTasMps ?? Number.POSITIVE_INFINITY, DEFAULT_SPEED_HIGH_VS1 * vs1Mps);
  if (!(high >= low)) return [];
  const speeds: number[] = [];
  for (let i = 0; i < DEFAULT_SPEED_COUNT; i++) {
    const v = low + ((high - low) * i) / (DEFAULT_SPEED_COUNT - 1);
    let rounded = roundTo(v, SPEED_ROUNDING_MPS);
    if (vneTasMps !== null && rounded > vneTasMps) rounded -= SPEED_ROUNDING_MPS;
    if (!speeds.includes(rounded)) speeds.push(rounded);
  }
  return speeds;
}

/** Full-throttle acceleration in a level turn at load factor n, (T − D)/m, m/s²; null where the thrust is unknown. */
export function levelTurnAccelerationMps2(
  aircraft: Aircraft,
  tasMps: number,
  densityKgM3: number,
  massKg: number,
  loadFactor: number,
): number | null {
  const thrustN = thrustAvailableN(aircraft.thrust, tasMps, densityKgM3);
  if (thrustN === null) return null;
  return (thrustN - dragAtLoadFactorN(aircraft, tasMps, densityKgM3, massKg, loadFactor)) / massKg;
}

export type CardResult = { ok: true; card: TestCard } | { ok: false; reason: string };

const fmt = (x: number, d = 2) => x.toFixed(d);

/** Plan a card (see the module comment). */
export function buildCard(aircraft: Aircraft, request: CardRequest): CardResult {
  const steps = [...(request.steps ?? DEFAULT_CARD_STEPS)];
  for (const s of steps) {
    if (!(s > 0 && s < 1)) return { ok: false, reason: `every step must be above 0 and below 1 (got ${s})` };
  }
  const holdS = request.holdS ?? DEFAULT_HOLD_S;
  const tolBank = request.toleranceBankDeg ?? DEFAULT_TOLERANCE_BANK_DEG;
  const tolTas = request.toleranceTasMps ?? DEFAULT_TOLERANCE_TAS_MPS;
  const air = computeAirState(request.altitudeM, request.temperature);
  const rho = air.densityKgM3;
  const mass = request.massKg;
  const vs1 = stallSpeedMps(aircraft, rho, mass);
  const vneTas = aircraft.vneMps === undefined ? null : casToTasMps(aircraft.vneMps, air.pressurePa, air.temperatureK);
  const speeds = request.speedsMps ? [...request.speedsMps] : defaultCardSpeeds(vs1, vneTas);
  if (speeds.length === 0) {
    return {
      ok: false,
      reason:
        `no default speeds: vne as TAS (${vneTas?.toFixed(2)} m/s) is below ${DEFAULT_SPEED_LOW_VS1}·Vs1 ` +
        `(${fmt(DEFAULT_SPEED_LOW_VS1 * vs1)} m/s) at this altitude and mass; give --speeds`,
    };
  }
  const t = aircraft.thresholds;
  const nStructural = aircraft.nLimitPos;

  const points: CardPoint[] = [];
  const excluded: CardExclusion[] = [];
  const sortedSteps = [...steps].sort((a, b) => a - b);
  const sortedSpeeds = [...speeds].sort((a, b) => b - a);
  for (const step of sortedSteps) {
    for (const v of sortedSpeeds) {
      const nStall = stallLoadFactor(aircraft, v, rho, mass);
      const n = step * Math.min(nStall, nStructural);
      const exclude = (reason: string) => excluded.push({ step, tas_mps: v, load_factor: n, reason });
      if (vneTas !== null && v > vneTas) {
        exclude(`${fmt(v, 1)} m/s is above vne (${fmt(vneTas)} m/s TAS at these conditions)`);
        continue;
      }
      if (n < MIN_CARD_LOAD_FACTOR) {
        // Below Vs1 no level flight exists at all: say so rather than "too close to wings level".
        const why =
          v < vs1
            ? `${fmt(v, 1)} m/s is below the 1-g stall speed Vs1 ${fmt(vs1)} m/s TAS: no level flight there`
            : `too close to wings level at ${fmt(v, 1)} m/s`;
        exclude(`load factor ${fmt(n, 3)} is below ${MIN_CARD_LOAD_FACTOR} (${why})`);
        continue;
      }
      const uStall = n / nStall;
      const uStructure = n / nStructural;
      if (uStall >= t.stallWarning) {
        exclude(`stall utilization ${fmt(uStall, 3)} is at or beyond the stall warning threshold ${t.stallWarning}`);
        continue;
      }
      if (uStructure >= t.structureWarning) {
        exclude(
          `structure utilization ${fmt(uStructure, 3)} is at or beyond the structure warning threshold ${t.structureWarning}`,
        );
        continue;
      }
      const nThrust = thrustLoadFactor(aircraft, v, rho, mass);
      const dvdt = levelTurnAccelerationMps2(aircraft, v, rho, mass, n);
      points.push({
        id: '',
        step,
        tas_mps: v,
        bank_deg: radToDeg(Math.acos(1 / n)),
        load_factor: n,
        hold_s: holdS,
        tolerance: { bank_deg: tolBank, tas_mps: tolTas },
        predicted: {
          utilization: {
            stall: uStall,
            thrust: nThrust === null || nThrust === 0 ? null : n / nThrust,
            structure: uStructure,
          },
          // Sustainable when full thrust at least balances the drag of the turn (unknown thrust: not claimed).
          sustained: dvdt !== null && dvdt >= 0,
          dvdt_mps2: dvdt,
        },
      });
    }
  }
  const width = Math.max(2, String(points.length).length);
  points.forEach((p, i) => (p.id = `P${String(i + 1).padStart(width, '0')}`));

  const notes = [...CARD_CAUTIONS];
  if (aircraft.nLimitPosSource !== 'file') {
    notes.push(`n_limit_pos not in the airframe file: ${fmt(nStructural, 3)} from the ${aircraft.nLimitPosSource}`);
  }
  if (aircraft.thrust.model === 'table') {
    notes.push('thrust from a table: outside its speed range dvdt_mps2 is null and sustained is false');
  }
  return {
    ok: true,
    card: {
      conditions: {
        aircraft: aircraft.name,
        mass_kg: mass,
        altitude_m: request.altitudeM,
        isa_deviation_k: air.temperatureK - isaTemperatureK(request.altitudeM),
        oat_c: request.temperature.oatC ?? null,
        temperature_k: air.temperatureK,
        pressure_pa: air.pressurePa,
        density_kg_m3: rho,
        vs1_mps: vs1,
        vne_tas_mps: vneTas,
        n_structural: nStructural,
        stall_warning: t.stallWarning,
        structure_warning: t.structureWarning,
        speeds_mps: speeds,
        steps,
        notes,
      },
      points,
      excluded,
    },
  };
}

// --- The card file ---------------------------------------------------------------------------------------------

const num = (what: string) => z.number({ error: `must be ${what}` });
const positive = num('a positive number').gt(0, { error: 'must be a positive number' });
const ratioOrNull = num('a number ≥ 0 or null').gte(0, { error: 'must be a number ≥ 0 or null' }).nullable();

const CardPointSchema = z
  .strictObject(
    {
      id: z.string({ error: 'must be a text' }).min(1, { error: 'must not be empty' }),
      step: num('a number above 0 and below 1')
        .gt(0, { error: 'must be a number above 0 and below 1' })
        .lt(1, { error: 'must be a number above 0 and below 1' }),
      tas_mps: positive,
      bank_deg: num('a number from 0 to 85')
        .gte(0, { error: 'must be a number from 0 to 85' })
        .lte(85, { error: 'must be a number from 0 to 85' }),
      load_factor: num('a number of at least 1').gte(1, { error: 'must be a number of at least 1' }),
      hold_s: positive,
      tolerance: z.strictObject(
        { bank_deg: positive, tas_mps: positive },
        { error: 'must be an object {bank_deg, tas_mps}' },
      ),
      predicted: z.strictObject(
        {
          utilization: z.strictObject(
            { stall: ratioOrNull, thrust: ratioOrNull, structure: ratioOrNull },
            { error: 'must be an object {stall, thrust, structure}' },
          ),
          sustained: z.boolean({ error: 'must be true or false' }),
          dvdt_mps2: num('a number or null').nullable(),
        },
        { error: 'must be an object {utilization, sustained, dvdt_mps2}' },
      ),
    },
    { error: 'must be a point object' },
  )
  .check((ctx) => {
    const p = ctx.value;
    // bank and load factor describe the same level turn; a card edited by hand must keep them together.
    const bankFromN = radToDeg(Math.acos(1 / p.load_factor));
    if (Math.abs(bankFromN - p.bank_deg) > 0.5) {
      ctx.issues.push({
        code: 'custom',
        input: p.bank_deg,
        path: ['bank_deg'],
        message: `must match load_factor ${p.load_factor} (acos(1/n) = ${bankFromN.toFixed(2)}°)`,
      });
    }
  });

export const CardSchema = z.strictObject(
  {
    conditions: z.looseObject(
      {
        aircraft: z.string({ error: 'must be a text' }).min(1, { error: 'must not be empty' }),
        mass_kg: positive,
        altitude_m: num('a number'),
        isa_deviation_k: num('a number'),
      },
      { error: 'must be an object {aircraft, mass_kg, altitude_m, isa_deviation_k, …}' },
    ),
    points: z
      .array(CardPointSchema, { error: 'must be a list of points' })
      .min(1, { error: 'must hold at least one point' }),
    excluded: z.array(z.unknown(), { error: 'must be a list' }),
  },
  { error: 'must be a JSON object {conditions, points, excluded}' },
);

/** Repeated point ids, found on the raw input so they are listed along with the schema's problems. */
function duplicateIdProblems(input: unknown, label: string): string[] {
  const points = (input as { points?: unknown } | null)?.points;
  if (!Array.isArray(points)) return [];
  const seen = new Set<string>();
  const problems: string[] = [];
  points.forEach((p: unknown, i) => {
    const id = (p as { id?: unknown } | null)?.id;
    if (typeof id !== 'string') return;
    if (seen.has(id)) problems.push(`${label}: points[${i}].id must be unique (got "${id}" again)`);
    seen.add(id);
  });
  return problems;
}

/** A card read from a file: the points in full, the conditions the flight needs (other keys kept as they are). */
export type LoadedCard = z.infer<typeof CardSchema>;

export type CardParseResult = { ok: true; value: LoadedCard } | { ok: false; problems: string[] };

/** Validate parsed JSON as a card; every problem is listed, each starting with `label` (the file name). */
export function parseCard(input: unknown, label: string): CardParseResult {
  const result = CardSchema.safeParse(input);
  const duplicates = duplicateIdProblems(input, label);
  if (!result.success || duplicates.length > 0) {
    const problems = result.success ? [] : describeIssues(label, input, result.error.issues);
    return { ok: false, problems: [...problems, ...duplicates] };
  }
  return { ok: true, value: result.data };
}

/** Warnings when a card was made for another airframe (name) or another mass than the one flown. */
export function cardAirframeWarnings(
  card: LoadedCard | TestCard,
  aircraft: Aircraft,
  massKg: number,
  label: string,
): string[] {
  const warnings: string[] = [];
  if (card.conditions.aircraft !== aircraft.name) {
    warnings.push(
      `${label}: the card was made for "${card.conditions.aircraft}", not for "${aircraft.name}": its targets and predictions may not apply`,
    );
  }
  if (Math.abs(card.conditions.mass_kg - massKg) > 1e-6 * massKg) {
    warnings.push(
      `${label}: the card was made for ${card.conditions.mass_kg} kg, not ${massKg} kg: its targets and predictions may not apply`,
    );
  }
  return warnings;
}
