/** `turnmargin card`: plan a build-up of level-turn test points from the airframe model at one condition. */
import { basename } from 'node:path';
import type { Aircraft } from '../../core/aircraft.js';
import {
  buildCard,
  cardAirframeWarnings,
  parseCard,
  DEFAULT_HOLD_S,
  type LoadedCard,
  DEFAULT_TOLERANCE_BANK_DEG,
  DEFAULT_TOLERANCE_TAS_MPS,
  MIN_CARD_LOAD_FACTOR,
} from '../../core/card.js';
import { cardToCsv, cardToJson, cardToMarkdown } from '../../report/card-report.js';
import {
  choiceOption,
  numberListOption,
  numberOption,
  requireOption,
  stringOption,
  type CommandSpec,
  type ParsedArgs,
} from '../args.js';
import { EXIT_OK, InputError, UsageError } from '../../errors.js';
import { altitudeFromArgs, CONDITIONS_OPTIONS, massFromArgs, temperatureFromArgs } from '../conditions-options.js';
import { checkOutputPath, createOutputFile, inputFilesOf } from '../output-path.js';
import { loadAircraftFile, readJson } from '../load.js';

/**
 * Read a card file for simulate, review or check: a malformed card is refused with every problem listed; a card
 * made for another airframe name or mass gives a warning on stderr.
 */
export function loadCardFile(
  path: string,
  aircraft: Aircraft,
  massKg: number = aircraft.massKg,
  onWarning?: (line: string) => void,
): LoadedCard {
  const label = basename(path);
  const result = parseCard(readJson(path, 'card'), label);
  if (!result.ok) throw new InputError(result.problems);
  for (const line of cardAirframeWarnings(result.value, aircraft, massKg, label)) {
    process.stderr.write(`turnmargin: warning: ${line}\n`);
    onWarning?.(line);
  }
  return result.value;
}

export const spec: CommandSpec = {
  name: 'card',
  summary: 'plan a build-up of turn test points (a test card) from the airframe model',
  usage:
    'turnmargin card --aircraft FILE [--altitude M] [--isa-dev K | --oat C] [--mass KG] [--speeds LIST]\n' +
    '                       [--steps LIST] [--hold S] [--tolerance-bank DEG] [--tolerance-speed MPS]\n' +
    '                       [--format md|json|csv] [--out FILE [--force]]',
  options: [
    { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model (JSON); required' },
    ...CONDITIONS_OPTIONS,
    {
      name: 'speeds',
      type: 'string',
      valueName: 'V1,V2,…',
      unit: 'm/s TAS',
      defaultText: '5 from 1.3·Vs1 to min(vne as TAS, 2.5·Vs1), rounded to 0.5',
      description: 'speeds of the points',
    },
    {
      name: 'steps',
      type: 'string',
      valueName: 'S1,S2,…',
      defaultText: '0.5,0.7,0.85',
      description: 'fractions of min(n_stall, n_structural) to target, each above 0 and below 1',
    },
    {
      name: 'hold',
      type: 'string',
      valueName: 'S',
      unit: 's',
      defaultText: String(DEFAULT_HOLD_S),
      description: 'time each point is held',
    },
    {
      name: 'tolerance-bank',
      type: 'string',
      valueName: 'DEG',
      unit: '°',
      defaultText: String(DEFAULT_TOLERANCE_BANK_DEG),
      description: 'bank tolerance of a hold',
    },
    {
      name: 'tolerance-speed',
      type: 'string',
      valueName: 'MPS',
      unit: 'm/s TAS',
      defaultText: String(DEFAULT_TOLERANCE_TAS_MPS),
      description: 'speed tolerance of a hold',
    },
    { name: 'format', type: 'string', valueName: 'FMT', defaultText: 'md', description: 'md (printable), json or csv' },
    { name: 'out', type: 'string', valueName: 'FILE', defaultText: 'stdout', description: 'write the card to a file' },
    { name: 'force', type: 'boolean', description: 'overwrite an existing --out file' },
  ],
  notes: [
    'For each speed V and step s the target is n = s·min(n_stall(V), n_structural) in a level coordinated turn,\n' +
      `bank = acos(1/n). Targets below ${MIN_CARD_LOAD_FACTOR} g, above vne, or at or beyond the stall or structure\n` +
      'warning threshold are not put on the card: they are listed as excluded with the reason. Points are in\n' +
      'build-up order: by step ascending, within a step by speed descending (the stall margin is widest at speed).',
    'Each point predicts the utilization of each limit, whether the turn is sustainable at full thrust, and the\n' +
      'full-throttle acceleration (T − D)/m in the level turn (negative: the speed bleeds). The JSON card is what\n' +
      '`simulate --card` flies.',
    "A test card is a planning aid: the test team's own safety review, build-up rules and the aircraft's approved\n" +
      "limits prevail, with the operator's procedures and local aviation rules. Advisory, not flight-critical.",
  ],
};

export async function run(args: ParsedArgs): Promise<number> {
  if (args.positionals.length > 0) throw new UsageError(`unexpected argument "${args.positionals[0]}"`);
  const aircraftPath = requireOption(args, 'aircraft');
  const format = choiceOption(args, 'format', ['md', 'json', 'csv'] as const, 'md');
  const temperature = temperatureFromArgs(args);
  const altitudeM = altitudeFromArgs(args);
  const speeds = numberListOption(args, 'speeds', { above: 0, max: 300 });
  const steps = numberListOption(args, 'steps', { above: 0 });
  if (steps?.some((s) => s >= 1)) {
    throw new UsageError(`--steps must be fractions above 0 and below 1 (got "${stringOption(args, 'steps')}")`);
  }
  const holdS = numberOption(args, 'hold', DEFAULT_HOLD_S, { above: 0, max: 600 });
  const tolBank = numberOption(args, 'tolerance-bank', DEFAULT_TOLERANCE_BANK_DEG, { above: 0, max: 30 });
  const tolTas = numberOption(args, 'tolerance-speed', DEFAULT_TOLERANCE_TAS_MPS, { above: 0, max: 20 });
  const out = stringOption(args, 'out');
  if (args.values['force'] && out === undefined) throw new UsageError('--force applies to --out only');
  // The shared check: an input by any name (a symbolic or hard link to the airframe too), FIFOs, directories, a
  // missing directory, and an existing file without --force are refused before any work.
  if (out !== undefined) {
    checkOutputPath({ option: 'out', path: out, force: args.values['force'] === true, inputs: inputFilesOf(args) });
  }
  const aircraft = loadAircraftFile(aircraftPath);
  const massKg = massFromArgs(args, aircraft);

  const result = buildCard(aircraft, {
    altitudeM,
    temperature,
    massKg,
    ...(speeds ? { speedsMps: speeds } : {}),
    ...(steps ? { steps } : {}),
    holdS,
    toleranceBankDeg: tolBank,
    toleranceTasMps: tolTas,
  });
  if (!result.ok) throw new InputError([`${aircraft.name}: ${result.reason}`]);
  const card = result.card;
  const text =
    format === 'json'
      ? JSON.stringify(cardToJson(card), null, 2) + '\n'
      : format === 'csv'
        ? cardToCsv(card)
        : cardToMarkdown(card);
  if (card.points.length === 0) {
    process.stderr.write('turnmargin: warning: no target qualifies: the card holds no point (see the excluded list)\n');
  }
  if (out === undefined) {
    process.stdout.write(text);
    return EXIT_OK;
  }
  const writer = createOutputFile(out);
  writer.write(text);
  writer.commit();
  process.stderr.write(`wrote ${card.points.length} points to ${out}\n`);
  return EXIT_OK;
}
