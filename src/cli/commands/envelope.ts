/** `turnmargin envelope`: the turn envelope at one condition, or a bank-limit schedule over altitudes and masses. */
import { computeBankSchedule } from '../../core/bank-schedule.js';
import { computeEnvelope, type Envelope } from '../../core/envelope.js';
import { stallSpeedMps, topSpeedMps, vneTasMps } from '../../core/performance.js';
import { computeAirState } from '../../core/atmosphere.js';
import type { Aircraft } from '../../core/aircraft.js';
import { bankScheduleToCsv, bankScheduleToJson, bankScheduleToTable } from '../../report/bank-schedule-report.js';
import { envelopeToCsv, envelopeToJson, envelopeToTable, turnsToCsv } from '../../report/envelope-report.js';
import {
  choiceOption,
  numberListOption,
  numberOption,
  requireOption,
  stringOption,
  type CommandSpec,
  type ParsedArgs,
} from '../args.js';
import { UsageError } from '../../errors.js';
import {
  ALTITUDE_RULE,
  altitudeFromArgs,
  CONDITIONS_OPTIONS,
  MASS_RULE,
  massFromArgs,
  temperatureFromArgs,
} from '../conditions-options.js';
import { loadAircraftFile, loadThresholdsFile } from '../load.js';

export const spec: CommandSpec = {
  name: 'envelope',
  summary: 'print the turn envelope (load-factor limits against TAS) of an airframe',
  usage:
    'turnmargin envelope --aircraft FILE [--altitude M] [--isa-dev K | --oat C] [--mass KG] ' +
    '[--speeds V1,V2,… | --from V --to V --step V] [--banks B1,B2,…] [--format table|json|csv]\n' +
    '       turnmargin envelope --aircraft FILE --altitudes A1,A2,… [--masses M1,M2,…] [--thresholds FILE] [--format csv|json|table]',
  options: [
    { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model (JSON)' },
    ...CONDITIONS_OPTIONS,
    { name: 'speeds', type: 'string', valueName: 'V1,V2,…', unit: 'm/s TAS', description: 'speeds to tabulate' },
    {
      name: 'from',
      type: 'string',
      valueName: 'V',
      unit: 'm/s TAS',
      defaultText: 'Vs1',
      description: 'first speed of a regular grid',
    },
    {
      name: 'to',
      type: 'string',
      valueName: 'V',
      unit: 'm/s TAS',
      defaultText: 'vne_mps as TAS, else 4·Vs1',
      description: 'last speed of a regular grid',
    },
    {
      name: 'banks',
      type: 'string',
      valueName: 'B1,B2,…',
      unit: '° of bank, 0 to 89',
      description: 'turn table: for each bank the load factor, stall speed and the speed band of a sustained turn',
    },
    {
      name: 'step',
      type: 'string',
      valueName: 'V',
      unit: 'm/s',
      defaultText: '(to − from)/30',
      description: 'speed step of a regular grid',
    },
    {
      name: 'format',
      type: 'string',
      valueName: 'FMT',
      defaultText: 'table',
      description: 'output format: table, json or csv',
    },
    {
      name: 'altitudes',
      type: 'string',
      valueName: 'A1,A2,…',
      unit: 'm',
      description: 'bank-limit schedule: pressure altitudes',
    },
    {
      name: 'masses',
      type: 'string',
      valueName: 'M1,M2,…',
      unit: 'kg',
      defaultText: "the file's mass_kg",
      description: 'bank-limit schedule: masses',
    },
    {
      name: 'thresholds',
      type: 'string',
      valueName: 'FILE',
      defaultText: "the airframe's, else 0.80/0.90 stall, 0.80/0.95 structure, 1.00 thrust",
      description: 'alert thresholds (JSON) for the schedule',
    },
  ],
  notes: [
    'Speeds are true airspeeds. The sustained limit is where thrust available equals drag in the turn; the\n' +
      'instantaneous limit is the lower of the stall and structural limits. Without n_limit_pos in the file,\n' +
      'the 14 CFR 23.337(a) normal-category default is used and the output says so.',
    'vne_mps is a calibrated airspeed (CAS): the envelope converts it to TAS at the altitude and temperature\n' +
      '(vne_tas_mps) and searches the optima from Vs1 up to that speed (4·Vs1 without vne).',
    '--banks adds a turn table (JSON "turns"): for each bank n = 1/cos(bank), the stall speed Vs1·√n and the\n' +
      'band of TAS, from Vs1 to vne, where thrust, stall and structure all allow n (one band assumed), with the\n' +
      'turn rate and radius at its lowest speed. With --format csv the turn table is printed instead of the\n' +
      'speed table (one table per CSV).',
    'With --altitudes the command prints, for each altitude and mass, bank_limit_deg and bank_sustained_deg\n' +
      'against TAS with the caution thresholds applied: a bank-limit schedule for an autopilot.',
    "Advisory figures for test planning, not flight-critical: the aircraft's approved limits, the operator's\n" +
      'procedures and local aviation rules take precedence.',
  ],
};

const MAX_POINTS = 100_000;
const MAX_CONDITIONS = 10_000;
const MAX_SCHEDULE_ROWS = 1_000_000;

function speedList(
  args: ParsedArgs,
  lowDefault: () => number,
  highDefault: (stallSpeed: number) => number,
): number[] | undefined {
  const speeds = numberListOption(args, 'speeds', { above: 0, max: 1000 });
  const hasGrid = ['from', 'to', 'step'].some((k) => args.values[k] !== undefined);
  if (speeds && hasGrid) throw new UsageError('give --speeds or --from/--to/--step, not both');
  if (speeds) return speeds;
  if (!hasGrid) return undefined;
  const from = numberOption(args, 'from', undefined, { above: 0, max: 1000 }) ?? lowDefault();
  const to = numberOption(args, 'to', undefined, { above: 0, max: 1000 }) ?? highDefault(lowDefault());
  if (to < from) throw new UsageError(`--to (${to}) must not be below --from (${from.toFixed(3)})`);
  const step = numberOption(args, 'step', undefined, { above: 0 }) ?? ((to - from) / 30 || 1);
  const count = Math.floor((to - from) / step + 1e-9) + 1;
  if (count > MAX_POINTS) throw new UsageError(`--step ${step} gives ${count} speeds; at most ${MAX_POINTS}`);
  const list = Array.from({ length: count }, (_, i) => from + step * i);
  if (to - list[list.length - 1]! > 1e-9) list.push(to);
  return list;
}

function limitNotes(aircraft: Aircraft): string[] {
  const notes: string[] = [];
  if (aircraft.nLimitPosSource !== 'file') {
    notes.push(
      `n_limit_pos not given: ${aircraft.nLimitPos.toFixed(3)} from the ${aircraft.nLimitPosSource} (normal category, capped at 3.8) ` +
        `at the file's mass_kg ${aircraft.massKg} kg`,
    );
  }
  if (aircraft.nLimitNegSource !== 'file') {
    notes.push(
      `n_limit_neg not given: ${aircraft.nLimitNeg.toFixed(3)} from the ${aircraft.nLimitNegSource} (−0.4 × n_limit_pos)`,
    );
  }
  if (aircraft.thrust.model === 'table') {
    notes.push('thrust from a table: outside its speed range the thrust limit is unknown (not extrapolated)');
  }
  return notes;
}

const countOf = (n: number): string => (n === 1 ? '1 speed of the table lies' : `${n} speeds of the table lie`);

const OPTIMUM_WORDS = {
  max_sustained: 'the maximum sustained load factor',
  max_sustained_turn_rate: 'the maximum sustained turn rate',
  min_sustained_radius: 'the minimum sustained radius',
} as const;

function speedNotes(aircraft: Aircraft, envelope: Envelope): string[] {
  const notes: string[] = [];
  const vne = envelope.vneTasMps;
  const vneWords = `vne_mps ${aircraft.vneMps} m/s CAS (${vne?.toFixed(2)} m/s TAS here)`;
  if (vne !== null && envelope.stallSpeedMps >= vne) {
    notes.push(
      `the stall speed Vs1 ${envelope.stallSpeedMps.toFixed(2)} m/s TAS is at or above ${vneWords} at this altitude and mass: ` +
        'no speed is both above the stall and below vne',
    );
  }
  const slow = envelope.points.filter((p) => p.speedMps < envelope.stallSpeedMps - 1e-9).length;
  const fast = vne === null ? 0 : envelope.points.filter((p) => p.speedMps > vne + 1e-9).length;
  if (slow > 0) notes.push(`${countOf(slow)} below the stall speed Vs1 (n_stall < 1 there)`);
  if (fast > 0) notes.push(`${countOf(fast)} above ${vneWords}`);
  for (const e of envelope.tableEdgeOptima) {
    notes.push(
      `${OPTIMUM_WORDS[e.optimum]} lies at ${e.speedMps.toFixed(2)} m/s, on the edge of the thrust table (${e.edgeMps} m/s): ` +
        'the thrust beyond the table is unknown, so the true optimum may lie outside it',
    );
  }
  return notes;
}

export async function run(args: ParsedArgs): Promise<number> {
  if (args.positionals.length > 0) throw new UsageError(`unexpected argument "${args.positionals[0]}"`);
  const aircraftPath = requireOption(args, 'aircraft');
  const temperature = temperatureFromArgs(args);
  const altitudes = numberListOption(args, 'altitudes', ALTITUDE_RULE);
  const masses = numberListOption(args, 'masses', MASS_RULE);
  const thresholdsPath = stringOption(args, 'thresholds');
  const aircraft = loadAircraftFile(aircraftPath);
  const out = (text: string) => process.stdout.write(text);

  if (altitudes) {
    if (args.values['altitude'] !== undefined) throw new UsageError('give --altitude or --altitudes, not both');
    if (args.values['mass'] !== undefined) throw new UsageError('with --altitudes, give masses as --masses');
    if (args.values['banks'] !== undefined)
      throw new UsageError('--banks goes with a single --altitude, not --altitudes');
    const format = choiceOption(args, 'format', ['csv', 'json', 'table'] as const, 'csv');
    const massList = masses ?? [aircraft.massKg];
    if (altitudes.length * massList.length > MAX_CONDITIONS) {
      throw new UsageError(
        `--altitudes × --masses gives ${altitudes.length * massList.length} conditions; at most ${MAX_CONDITIONS}`,
      );
    }
    const thresholds = thresholdsPath ? loadThresholdsFile(thresholdsPath, aircraft.thresholds) : aircraft.thresholds;
    const lowest = (): number => {
      let v = Number.POSITIVE_INFINITY;
      for (const a of altitudes) {
        const rho = computeAirState(a, temperature).densityKgM3;
        for (const m of massList) v = Math.min(v, stallSpeedMps(aircraft, rho, m));
      }
      return v;
    };
    // The schedule's default top: vne as TAS at the lowest density asked for (the highest TAS), else 4·Vs1.
    const highest = (stall: number): number => {
      let v = Number.NEGATIVE_INFINITY;
      for (const a of altitudes) {
        const air = computeAirState(a, temperature);
        v = Math.max(v, topSpeedMps(vneTasMps(aircraft, air.pressurePa, air.temperatureK), stall));
      }
      return v;
    };
    const speeds = speedList(args, lowest, highest);
    const request = {
      altitudesM: altitudes,
      massesKg: massList,
      temperature,
      ...(speeds ? { speedsMps: speeds } : {}),
    };
    const rowCount = altitudes.length * massList.length * (speeds?.length ?? 31);
    if (rowCount > MAX_SCHEDULE_ROWS) {
      throw new UsageError(
        `the schedule would have ${rowCount} rows; at most ${MAX_SCHEDULE_ROWS} (fewer altitudes, masses or speeds)`,
      );
    }
    const rows = computeBankSchedule(aircraft, thresholds, request);
    if (format === 'csv') out(bankScheduleToCsv(rows));
    else if (format === 'json')
      out(JSON.stringify(bankScheduleToJson(aircraft.name, thresholds, rows), null, 2) + '\n');
    else out(bankScheduleToTable(aircraft.name, rows));
    return 0;
  }
  if (masses) throw new UsageError('--masses goes with --altitudes (for a single mass use --mass)');
  const banks = numberListOption(args, 'banks', { min: 0, max: 89 });
  if (thresholdsPath) throw new UsageError('--thresholds goes with --altitudes (the schedule applies them)');

  const format = choiceOption(args, 'format', ['table', 'json', 'csv'] as const, 'table');
  const altitudeM = altitudeFromArgs(args);
  const massKg = massFromArgs(args, aircraft);
  const air = computeAirState(altitudeM, temperature);
  const rho = air.densityKgM3;
  const speeds = speedList(
    args,
    () => stallSpeedMps(aircraft, rho, massKg),
    (stall) => topSpeedMps(vneTasMps(aircraft, air.pressurePa, air.temperatureK), stall),
  );
  const envelope = computeEnvelope(aircraft, { altitudeM, temperature, massKg }, speeds ?? undefined, banks ?? []);
  const notes = { notes: [...limitNotes(aircraft), ...speedNotes(aircraft, envelope)], banks: banks !== undefined };
  if (format === 'json') out(JSON.stringify(envelopeToJson(envelope, notes), null, 2) + '\n');
  else if (format === 'csv') out(banks ? turnsToCsv(envelope) : envelopeToCsv(envelope));
  else out(envelopeToTable(envelope, notes));
  return 0;
}
