/**
 * `turnmargin review FILE… --aircraft FILE`: stream recorded flights through the margin computation and report
 * their limit events, peaks and time in each level (Markdown, JSON, CSV or HTML), optionally with the per-frame
 * records and an n–V plot of one flight. Memory does not grow with the files; several files are reviewed in
 * parallel (src/cli/review-flights.ts, shared with `turnmargin check`).
 */
import { basename } from 'node:path';
import type { TestPointResult } from '../../core/test-point.js';
import type { MarginRecord } from '../../core/margin-record.js';
import { reviewToCsv, reviewToJson, reviewToMarkdown } from '../../report/review-report.js';
import type { ReportedFlight } from '../../report/multi-review-report.js';
import { choiceOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { EXIT_OK, UsageError } from '../../errors.js';
import { checkOutputPath, createOutputFile, inputFilesOf } from '../output-path.js';
import { DEFAULT_THRESHOLDS } from '../../core/thresholds.js';
import {
  CARD_OPTION,
  FLIGHT_INPUT_OPTIONS,
  parseFlightInputs,
  reviewFlights,
  testPointsOverFlights,
  type ReviewedFlight,
} from '../review-flights.js';

export const spec: CommandSpec = {
  name: 'review',
  summary: 'report the limit events, peaks and time in each alert level of recorded flights',
  usage:
    'turnmargin review FILE... --aircraft FILE [--card CARD.json] [--format md|json|csv|html] [--out FILE [--force]] [--per-frame OUT.ndjson] [--plot OUT.svg] [--thresholds FILE] [--smooth S] [--rate-window S] [--throttle full|idle] [--mapping FILE]',
  options: [
    ...FLIGHT_INPUT_OPTIONS,
    CARD_OPTION,
    {
      name: 'format',
      type: 'string',
      valueName: 'FORMAT',
      defaultText: 'md',
      description:
        'report format: md (for a flight-test record), json, csv (one row per event; one with the event columns empty when there is none), or html (one self-contained page with time histories and the n–V plane, printable)',
    },
    {
      name: 'out',
      type: 'string',
      valueName: 'FILE',
      description: 'write the report to this file instead of standard output (refused if it exists, unless --force)',
    },
    {
      name: 'per-frame',
      type: 'string',
      valueName: 'OUT.ndjson',
      description: 'also write one margin record (JSON) per accepted frame to this file (one FILE only)',
    },
    {
      name: 'plot',
      type: 'string',
      valueName: 'OUT.svg',
      description: "also draw the n–V plot with the flight's points to this SVG file (one FILE only)",
    },
    { name: 'force', type: 'boolean', description: 'overwrite existing --out, --per-frame and --plot files' },
  ],
  notes: [
    'Several FILEs give one report over all of them: a summary per flight (lines, time span, the UTC start and end ' +
      'of a recording from its receive times, events, peaks), with --card each point over all flights (its longest ' +
      'hold in any file wins), then each flight in full; JSON {flights: [one review per file], test_points}. The ' +
      'files are reviewed in parallel, one per core. A file that cannot be read stops the review with its name ' +
      '(exit 2) and nothing is printed. --per-frame and --plot take one FILE (they describe one flight): review ' +
      'that file on its own for them.',
    'FILE is NDJSON (one frame per line), CSV with a header (or a --mapping file), or a turnmargin recording. ' +
      'Rejected lines are counted and listed (the first 100) with their reason; they do not stop the review.',
    'Events: one per interval in which one (limit, level) alert is on; a warning lies inside its caution and both are listed. ' +
      'An alert comes on at the first frame at its threshold and goes off once the utilization has stayed below ' +
      `threshold − hysteresis for clear_s (default ${DEFAULT_THRESHOLDS.clearS} s); the event ends at the first frame of that clear stretch. ` +
      'Limits: stall, structure, thrust (load factor ÷ limit) and speed (CAS ÷ vne_mps, a calibrated airspeed). ' +
      'A flight where no limit could be computed on any flying frame exits 2 with the likely cause. ' +
      'Exit 0 when the report is written, 2 for unusable input (unreadable file, invalid airframe, no accepted frame).',
    "Advisory only; the aircraft's approved limits, the operator's procedures and local aviation rules take precedence.",
  ],
};

export async function run(args: ParsedArgs): Promise<number> {
  const inputs = parseFlightInputs(args, 'review');
  const several = inputs.length > 1;
  const format = choiceOption(args, 'format', ['md', 'json', 'csv', 'html'] as const, 'md');
  const perFramePath = stringOption(args, 'per-frame');
  const plotPath = stringOption(args, 'plot');
  const outPath = stringOption(args, 'out');
  const force = args.values['force'] === true;
  if (force && perFramePath === undefined && plotPath === undefined && outPath === undefined)
    throw new UsageError('--force applies to --per-frame, --plot and --out only', 'review');
  for (const [option, path] of [
    ['per-frame', perFramePath],
    ['plot', plotPath],
  ] as const)
    if (several && path !== undefined)
      throw new UsageError(
        `--${option} describes one flight: give one telemetry FILE with it (got ${inputs.length}), ` +
          'or review that file on its own',
        'review',
      );
  if (perFramePath !== undefined)
    checkOutputPath({ option: 'per-frame', path: perFramePath, force, inputs: inputFilesOf(args) });
  if (plotPath !== undefined)
    checkOutputPath({ option: 'plot', path: plotPath, force, inputs: inputFilesOf(args), extension: '.svg' });
  if (outPath !== undefined) checkOutputPath({ option: 'out', path: outPath, force, inputs: inputFilesOf(args) });

  const cardPath = stringOption(args, 'card');
  // What only some runs need is loaded by those runs: a plain review starts without the card, HTML and plot code.
  const card =
    cardPath !== undefined ? (await import('./card.js')).loadCardFile(cardPath, inputs[0]!.aircraft) : undefined;
  const perFrame = perFramePath !== undefined ? createOutputFile(perFramePath) : undefined;
  let flights: ReviewedFlight[];
  try {
    flights = await reviewFlights(inputs, {
      timeHistory: format === 'html',
      ...(card ? { cardPoints: card.points } : {}),
      ...(perFrame ? { onRecord: (rec: MarginRecord) => perFrame.write(JSON.stringify(rec) + '\n') } : {}),
    });
    perFrame?.commit();
  } finally {
    perFrame?.discard();
  }

  const reported: ReportedFlight[] = flights.map((f) => ({
    review: f.review,
    ctx: { source: f.input.file, aircraft: f.input.aircraft, aircraftFile: f.input.aircraftFile },
    label: f.label,
    received: f.received,
  }));
  const testPoints = testPointsOverFlights(flights);
  if (plotPath !== undefined) {
    const { review, ctx } = reported[0]!;
    const { renderNvPlotSvg } = await import('../../report/nv-plot-svg.js');
    const { nvPlotInputFrom } = await import('../../report/html-report.js');
    const svg = renderNvPlotSvg({ ...nvPlotInputFrom(review, ctx), source: basename(ctx.source) });
    const writer = createOutputFile(plotPath);
    writer.write(svg);
    writer.commit();
  }

  const cardName = cardPath !== undefined ? basename(cardPath) : undefined;
  const output =
    format === 'html'
      ? await htmlReport(reported, testPoints, several, args)
      : several
        ? await severalFlightsText(format, reported, testPoints, cardName)
        : await oneFlightText(format, reported[0]!, testPoints, cardName);
  if (outPath !== undefined) {
    const writer = createOutputFile(outPath);
    writer.write(output);
    writer.commit();
  } else {
    process.stdout.write(output);
  }
  return EXIT_OK;
}

/** The HTML page of one or several flights. */
async function htmlReport(
  reported: ReportedFlight[],
  testPoints: TestPointResult[] | null,
  several: boolean,
  args: ParsedArgs,
): Promise<string> {
  const { htmlFlightFrom, renderHtmlReport } = await import('../../report/html-report.js');
  const { flightJson } = await import('../../report/multi-review-report.js');
  return renderHtmlReport({
    flights: reported.map((f, i) => {
      const html = htmlFlightFrom(f.review, f.ctx, i);
      return several ? { ...html, json: { ...html.json, ...flightJson(f) } } : html;
    }),
    ...(testPoints !== null ? { testPoints: testPoints as unknown as Record<string, unknown>[] } : {}),
    command: reviewCommandLine(args),
  });
}

/** The report over several files (md, json or csv). */
async function severalFlightsText(
  format: 'md' | 'json' | 'csv',
  reported: ReportedFlight[],
  testPoints: TestPointResult[] | null,
  cardName: string | undefined,
): Promise<string> {
  const { flightsToCsv, flightsToJson, flightsToMarkdown } = await import('../../report/multi-review-report.js');
  if (format === 'json') return JSON.stringify(flightsToJson(reported, testPoints), null, 2) + '\n';
  if (format === 'csv') return flightsToCsv(reported, testPoints);
  return flightsToMarkdown(reported, testPoints, cardName);
}

/** The report of one file, in the shape it has always had (test_points added after it with a card). */
async function oneFlightText(
  format: 'md' | 'json' | 'csv',
  flight: ReportedFlight,
  testPoints: TestPointResult[] | null,
  cardName: string | undefined,
): Promise<string> {
  const { review, ctx } = flight;
  if (format === 'json') {
    const json = reviewToJson(review, ctx);
    return JSON.stringify(testPoints !== null ? { ...json, test_points: testPoints } : json, null, 2) + '\n';
  }
  if (format === 'csv') {
    const csv = reviewToCsv(review);
    if (testPoints === null) return csv;
    const { testPointsToCsv } = await import('../../report/card-report.js');
    return csv + '\n' + testPointsToCsv(testPoints);
  }
  const md = reviewToMarkdown(review, ctx);
  if (testPoints === null) return md;
  const { testPointsToMarkdown } = await import('../../report/card-report.js');
  return md + '\n' + testPointsToMarkdown(testPoints, cardName ?? 'card');
}

/** The command as a user would type it again (file names only: no machine paths in the report). */
function reviewCommandLine(args: ParsedArgs): string {
  const parts = ['turnmargin review', ...args.positionals.map((p) => basename(p))];
  for (const [name, value] of Object.entries(args.values)) {
    if (value === undefined || value === false || name === 'force') continue;
    parts.push(value === true ? `--${name}` : `--${name} ${basename(String(value))}`);
  }
  return parts.join(' ');
}
