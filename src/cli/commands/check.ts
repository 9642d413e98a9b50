/**
 * `turnmargin check FILE --aircraft FILE [--fail-on caution|warning]`: pass/fail of a recorded flight for an
 * autopilot's CI. Exit 0 when no event reaches the level, 1 when one does, 2 for unusable input.
 */
import { checkSummary, failingEvents, type FailLevel } from '../../report/review-report.js';
import { choiceOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { EXIT_CHECK_FAILED, EXIT_OK, UsageError } from '../../errors.js';
import { testPointSummary } from '../../report/card-report.js';
import { CARD_OPTION, openCardReview } from './card.js';
import { FLIGHT_INPUT_OPTIONS, parseFlightInput, reviewFlight } from './review.js';

export const spec: CommandSpec = {
  name: 'check',
  summary: 'pass/fail a recorded flight against the alert levels (for CI)',
  usage:
    'turnmargin check FILE --aircraft FILE [--fail-on caution|warning] [--card CARD.json [--require-points]] [--thresholds FILE] [--smooth S] [--rate-window S] [--throttle full|idle] [--mapping FILE]',
  options: [
    ...FLIGHT_INPUT_OPTIONS,
    CARD_OPTION,
    { name: 'require-points', type: 'boolean', description: 'with --card: fail (exit 1) when a point is not achieved' },
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
    "Advisory only; the aircraft's approved limits, the operator's procedures and local aviation rules take precedence.",
  ],
};

export async function run(args: ParsedArgs): Promise<number> {
  const failOn = choiceOption<FailLevel>(args, 'fail-on', ['caution', 'warning'], 'warning');
  const input = parseFlightInput(args, 'check');
  if (args.values['require-points'] === true && args.values['card'] === undefined)
    throw new UsageError('--require-points needs --card FILE');
  const card = openCardReview(stringOption(args, 'card'), input.aircraft, input.file);
  const review = await reviewFlight(input, card?.onRecord, card?.onBreak);
  process.stdout.write(
    checkSummary(review, { source: input.file, aircraft: input.aircraft, aircraftFile: input.aircraftFile }, failOn),
  );
  const missed = card ? card.results().filter((p) => p.status !== 'achieved') : [];
  if (card) process.stdout.write(testPointSummary(card.results()));
  const pointsFail = args.values['require-points'] === true && missed.length > 0;
  return failingEvents(review, failOn).length > 0 || pointsFail ? EXIT_CHECK_FAILED : EXIT_OK;
}
