/**
 * `turnmargin fit FILE... --aircraft F`: estimate the drag polar, the thrust scale and the demonstrated CL from
 * recorded flights, and show what the fitted model changes in the envelope; optionally write the fitted airframe
 * file. Each file is read the way `review` reads it (NDJSON, CSV with --mapping, recordings with their #link lines)
 * through the frame engine: the records, their rates and the breaks are the engine's.
 */
import { closeSync, openSync, readSync, statSync } from 'node:fs';
import { basename } from 'node:path';
import { DEFAULT_SMOOTH_TAU_S, resolveMarginOptions } from '../../core/margins.js';
import { analyseFit, createFitAccumulator, fittedAirframeJson } from '../../core/fit-run.js';
import {
  FULL_THROTTLE,
  IDLE_THROTTLE,
  MAX_BANK_RATE_DPS,
  MAX_LOAD_FACTOR_SPREAD,
  MIN_CL2_RANGE,
  MIN_POLAR_SAMPLES,
} from '../../core/fit.js';
import { DEFAULT_RATE_WINDOW_S } from '../../core/rate-estimator.js';
import { RECORDING_MAGIC } from '../../recording/format.js';
import { fitToJson, fitToMarkdown, renderFitPlotSvg, type FitReportInput } from '../../report/fit-report.js';
import { EXIT_OK, InputError, UsageError } from '../../errors.js';
import { choiceOption, numberOption, requireOption, stringOption, type CommandSpec, type ParsedArgs } from '../args.js';
import { loadAircraftFile, readJson } from '../load.js';
import { checkOutputPath, createOutputFile, inputFilesOf } from '../output-path.js';
import { reviewFlights, type FlightInput } from '../review-flights.js';

/** Rate windows accepted, s (shorter is noise, longer smears every manoeuvre). */
const RATE_WINDOW_MIN_S = 0.2;
const RATE_WINDOW_MAX_S = 10;

export const spec: CommandSpec = {
  name: 'fit',
  summary: 'estimate the drag polar, the thrust and the demonstrated CL from recorded flights',
  usage:
    'turnmargin fit FILE... --aircraft FILE [--mapping FILE] [--rate-window S] [--format md|json] [--plot OUT.svg] [--write-airframe OUT.json] [--force]',
  options: [
    {
      name: 'aircraft',
      type: 'string',
      valueName: 'FILE',
      description: 'airframe model file (JSON): the model the data are compared with and the fit starts from; required',
    },
    {
      name: 'mapping',
      type: 'string',
      valueName: 'FILE',
      description: 'column mapping file (JSON) for CSV logs with other column names or units (the same for every FILE)',
    },
    {
      name: 'rate-window',
      type: 'string',
      valueName: 'S',
      unit: 's',
      defaultText: String(DEFAULT_RATE_WINDOW_S),
      description: `window of the dV/dt, dh/dt and bank-rate estimates (${RATE_WINDOW_MIN_S} to ${RATE_WINDOW_MAX_S}); also the spacing of the independent samples`,
    },
    {
      name: 'format',
      type: 'string',
      valueName: 'FORMAT',
      defaultText: 'md',
      description: 'report format on standard output: md (readable, with the method) or json',
    },
    {
      name: 'plot',
      type: 'string',
      valueName: 'OUT.svg',
      description:
        'also draw CD against CL² (samples, fit with its 95 % band, the file) and the Ps residual against time',
    },
    {
      name: 'write-airframe',
      type: 'string',
      valueName: 'OUT.json',
      description:
        'also write the airframe file with the fitted polar {cd0, k}, the thrust scaled, and a "fitted" record of the data',
    },
    { name: 'force', type: 'boolean', description: 'replace existing --plot and --write-airframe files' },
  ],
  notes: [
    'FILE: one or more flights, each NDJSON (one frame per line), CSV with a header (or --mapping) or a turnmargin ' +
      'recording. Frames need "throttle" (0…1).',
    `Usable frames: flying, throttle ≥ ${FULL_THROTTLE} (full) or ≤ ${IDLE_THROTTLE} (idle), the rates defined, the bank ` +
      `changing by less than ${MAX_BANK_RATE_DPS} °/s over the rate window, and no break inside the window. ` +
      'Idle frames give the polar CD = CD0 + k·CL² (the drag is D = −W·Ps/V); full-throttle frames give the thrust ' +
      'scale s in T_measured ≈ s·T_model. The fit uses at most one usable frame per rate window (neighbouring ' +
      'frames are not independent), and only where the whole window held one throttle regime and the load factor ' +
      `within ${MAX_LOAD_FACTOR_SPREAD} g; intervals are 95 %. fit never raises cl_max.`,
    `What to fly: power-off glides (throttle at idle, wings level) at three or more speeds between 1.3 and 2 Vs1 ` +
      `(${MIN_POLAR_SAMPLES} independent samples and a CL² range of ${MIN_CL2_RANGE} at least), and full-throttle ` +
      'level accelerations and level turns at several speeds, each steady for 10 s or more, in calm air.',
    'Exit 0 with a report; 2 when nothing can be estimated (no usable frame, no throttle, a single speed), with ' +
      'what is missing and what to fly, or for unusable input.',
    'Advisory only: a fitted model is only as good as its data (steady segments, calm air, a known throttle). ' +
      "The aircraft's approved limits, the operator's procedures and local aviation rules take precedence.",
  ],
};

/** YYYY-MM-DD of the data in a file: a recording's start, else the file's modification date; null if unknown. */
function dataDateOf(file: string): { date: string; from: 'recording' | 'file modified' } | null {
  let fd: number | undefined;
  try {
    fd = openSync(file, 'r');
    const head = Buffer.alloc(4096);
    const text = head.subarray(0, readSync(fd, head, 0, head.length, 0)).toString('utf8');
    if (text.startsWith(RECORDING_MAGIC)) {
      const started = /^#started (\S+)$/m.exec(text);
      const date = started ? new Date(started[1]!) : null;
      if (date && Number.isFinite(date.getTime())) return { date: date.toISOString().slice(0, 10), from: 'recording' };
    }
    return { date: statSync(file).mtime.toISOString().slice(0, 10), from: 'file modified' };
  } catch {
    return null;
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}

export async function run(args: ParsedArgs): Promise<number> {
  const files = args.positionals;
  if (files.length === 0) throw new UsageError('the flight FILE(s) to fit are missing', 'fit');
  const aircraftFile = requireOption(args, 'aircraft');
  const format = choiceOption(args, 'format', ['md', 'json'] as const, 'md');
  const rateWindowS = numberOption(args, 'rate-window', DEFAULT_RATE_WINDOW_S, {
    min: RATE_WINDOW_MIN_S,
    max: RATE_WINDOW_MAX_S,
  });
  const mappingPath = stringOption(args, 'mapping');
  const plotPath = stringOption(args, 'plot');
  const airframePath = stringOption(args, 'write-airframe');
  const force = args.values['force'] === true;
  if (force && plotPath === undefined && airframePath === undefined)
    throw new UsageError('--force applies to --plot and --write-airframe only', 'fit');
  const inputs = inputFilesOf(args);
  if (plotPath !== undefined) checkOutputPath({ option: 'plot', path: plotPath, force, inputs, extension: '.svg' });
  if (airframePath !== undefined)
    checkOutputPath({ option: 'write-airframe', path: airframePath, force, inputs, extension: '.json' });
  if (plotPath !== undefined && airframePath !== undefined && plotPath === airframePath)
    throw new UsageError('--plot and --write-airframe name the same file', 'fit');

  const aircraft = loadAircraftFile(aircraftFile);
  const accumulator = createFitAccumulator(rateWindowS, DEFAULT_SMOOTH_TAU_S);
  const rejectedNotes: string[] = [];
  for (const file of files) {
    const input: FlightInput = {
      file,
      aircraftFile,
      aircraft,
      // No record is shown: the per-record speed band (a search over speeds) is not needed.
      margins: resolveMarginOptions(aircraft, { smoothTauS: DEFAULT_SMOOTH_TAU_S, rateWindowS, speedBand: false }),
    };
    if (mappingPath !== undefined) input.mappingPath = mappingPath;
    accumulator.startFile();
    // One file at a time: the accumulator takes the records of all files in order.
    const flights = await reviewFlights([input], {
      timeHistory: false,
      onRecord: accumulator.record,
      onBreak: accumulator.breakData,
    });
    const review = flights[0]!.review;
    if (review.rejected > 0)
      rejectedNotes.push(
        `${file}: ${review.rejected} rejected line${review.rejected === 1 ? '' : 's'} not used (see turnmargin review for the reasons)`,
      );
  }
  const data = accumulator.data();
  const analysis = analyseFit(aircraft, data, rateWindowS);
  if (!analysis.ok)
    throw new InputError(analysis.problems.map((p) => `${files.length === 1 ? `${files[0]}: ` : ''}${p}`));
  const outcome = analysis.value;
  outcome.warnings.push(...rejectedNotes);

  const report: FitReportInput = {
    files,
    aircraftFile,
    aircraft,
    rateWindowS,
    counts: data.counts,
    outcome,
    residuals: data.residuals,
  };
  if (airframePath !== undefined) report.writtenAirframe = airframePath;
  if (plotPath !== undefined) {
    const writer = createOutputFile(plotPath);
    writer.write(renderFitPlotSvg(report));
    writer.commit();
  }
  if (airframePath !== undefined) {
    const original = readJson(aircraftFile, 'airframe') as Record<string, unknown>;
    // The earliest date of the files.
    const dates = files
      .map(dataDateOf)
      .filter((d) => d !== null)
      .sort((a, b) => a.date.localeCompare(b.date));
    const json = fittedAirframeJson(original, outcome, {
      dataDate: dates[0]?.date ?? null,
      dataDateFrom: dates[0]?.from ?? null,
      files: files.map((f) => basename(f)),
      rateWindowS,
    });
    const writer = createOutputFile(airframePath);
    writer.write(JSON.stringify(json, null, 2) + '\n');
    writer.commit();
  }
  process.stdout.write(format === 'json' ? JSON.stringify(fitToJson(report), null, 2) + '\n' : fitToMarkdown(report));
  return EXIT_OK;
}
