/**
 * `turnmargin check FILE… --aircraft FILE [--fail-on caution|warning]`: pass/fail of recorded flights for an
 * autopilot's CI. Exit 0 when no event of any flight reaches the level, 1 when one does, 2 for unusable input.
 */
import { checkSummary, failingEvents, type FailLevel } from '../../report/review-report.js';
import { choiceOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { EXIT_CHECK_FAILED, EXIT_OK, UsageError } from '../../errors.js';
import {
  CARD_OPTION,
  FLIGHT_INPUT_OPTIONS,
  parseFlightInputs,
  reviewFlights,
  testPointsOverFlights,
} from '../review-flights.js';

export const spec: CommandSpec = {
  name: 'check',
  summary: 'pass/fail recorded flights against the alert levels (for CI)',
  usage:
    'turnmargin check FILE... --aircraft FILE [--fail-on caution|warning] [--card CARD.json [--require-points]] [--thresholds FILE] [--smooth S] [--rate-window S] [--throttle full|idle] [--mapping FILE]',
  options: [
    ...FLIGHT_INPUT_OPTIONS,
    CARD_OPTION,
    {
      name: 'require-points',
      type: 'boolean',
      description: 'with --card: fail (exit 1) when a point is not achieved in any of the flights',
    },
    {
      name: 'fail-on',
      type: 'string',
      valueName: 'LEVEL',
      defaultText: 'warning',
      description: 'fail when an event reaches this level: caution or warning',
    },
  ],
  notes: [
    'Prints a one-screen summary. Exit 0: no event reached the level; 1: at least one did; 2: unusable input ' +
      '(unreadable file, invalid airframe or thresholds, no accepted frame, or no limit computable on any flying frame: ' +
      'nothing checked is not a pass). Rejected lines are reported but do not by ' +
      'themselves fail the check.',
    'Several FILEs are checked together (in parallel, one per core): a summary per flight, then the verdict over ' +
      'all of them; exit 1 when any flight fails. With --card the points count over all flights (the longest hold ' +
      'in any file), so --require-points passes when every point was achieved in some flight.',
    "Advisory only; the aircraft's approved limits, the operator's procedures and local aviation rules take precedence.",
  ],
};

export async function run(args: ParsedArgs): Promise<number> {
  const failOn = choiceOption<FailLevel>(args, 'fail-on', ['caution', 'warning'], 'warning');
  const inputs = parseFlightInputs(args, 'check');
  if (args.values['require-points'] === true && args.values['card'] === undefined)
    throw new UsageError('--require-points needs --card FILE');
  const cardPath = stringOption(args, 'card');
  // The card and several-flight code is loaded only by the runs that use it: a plain check starts faster.
  const card =
    cardPath !== undefined ? (await import('./card.js')).loadCardFile(cardPath, inputs[0]!.aircraft) : undefined;
  const flights = await reviewFlights(inputs, { timeHistory: false, ...(card ? { cardPoints: card.points } : {}) });
  const reported = flights.map((f) => ({
    review: f.review,
    ctx: { source: f.input.file, aircraft: f.input.aircraft, aircraftFile: f.input.aircraftFile },
    label: f.label,
    received: f.received,
  }));
  process.stdout.write(
    reported.length === 1
      ? checkSummary(reported[0]!.review, reported[0]!.ctx, failOn)
      : (await import('../../report/multi-review-report.js')).flightsCheckSummary(reported, failOn),
  );
  const points = testPointsOverFlights(flights);
  if (points !== null) process.stdout.write((await import('../../report/card-report.js')).testPointSummary(points));
  const missed = points?.filter((p) => p.status !== 'achieved') ?? [];
  const pointsFail = args.values['require-points'] === true && missed.length > 0;
  const eventsFail = flights.some((f) => failingEvents(f.review, failOn).length > 0);
  return eventsFail || pointsFail ? EXIT_CHECK_FAILED : EXIT_OK;
}
