/**
 * `turnmargin review FILE --aircraft FILE`: stream a recorded flight through the margin computation and report
 * its limit events, peaks and time in each level (Markdown, JSON or CSV), optionally with the per-frame records
 * and an n–V plot. Memory does not grow with the file. Also the shared reading loop of `turnmargin check`.
 */
import { existsSync, statSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { basename } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Aircraft } from '../../core/aircraft.js';
import { nothingCheckableReason } from '../../core/checkable.js';
import { createFlightReviewer, type FlightReview } from '../../core/flight-review.js';
import { resolveMarginOptions, type MarginOptions } from '../../core/margins.js';
import { MARGIN_COMPUTATION_OPTIONS, parseMarginOptions } from '../margin-options.js';
import type { MarginRecord } from '../../core/margin-record.js';
import { readFramePackedBatches, type ReadFrameOptions } from '../../decode/read-frames.js';
import { feedPackedBatch } from '../review-worker.js';
import { renderNvPlotSvg } from '../../report/nv-plot-svg.js';
import { reviewToCsv, reviewToJson, reviewToMarkdown, type ReviewContext } from '../../report/review-report.js';
import { htmlFlightFrom, nvPlotInputFrom, renderHtmlReport } from '../../report/html-report.js';
import {
  choiceOption,
  requireOption,
  stringOption,
  type CommandSpec,
  type OptionSpec,
  type ParsedArgs,
} from '../args.js';
import { EXIT_OK, InputError, UsageError } from '../../errors.js';
import { loadAircraftFile, loadThresholdsFile } from '../load.js';
import { checkOutputPath, createOutputFile, inputFilesOf } from '../output-path.js';
import { DEFAULT_THRESHOLDS, describeDefaultThresholds } from '../../core/thresholds.js';
import type { ReviewWorkerData } from '../review-worker.js';
import type { PackedFrameBatch } from '../../decode/frame-batch.js';
import { CARD_OPTION, openCardReview } from './card.js';

/** Options shared by review and check. */
export const FLIGHT_INPUT_OPTIONS: OptionSpec[] = [
  {
    name: 'aircraft',
    type: 'string',
    valueName: 'FILE',
    description:
      "airframe model file (JSON; its vne_mps is a calibrated airspeed, compared with each frame's CAS); required",
  },
  {
    name: 'thresholds',
    type: 'string',
    valueName: 'FILE',
    description: "alert thresholds file (JSON), over the airframe's own",
    defaultText: `the airframe's, else ${describeDefaultThresholds()}`,
  },
  ...MARGIN_COMPUTATION_OPTIONS,
  {
    name: 'mapping',
    type: 'string',
    valueName: 'FILE',
    description:
      'column mapping file (JSON) for a CSV log with a header line: which column feeds which frame key, in which unit',
  },
];

export const spec: CommandSpec = {
  name: 'review',
  summary: 'report the limit events, peaks and time in each alert level of a recorded flight',
  usage:
    'turnmargin review FILE --aircraft FILE [--card CARD.json] [--format md|json|csv|html] [--out FILE [--force]] [--per-frame OUT.ndjson] [--plot OUT.svg] [--thresholds FILE] [--smooth S] [--rate-window S] [--throttle full|idle] [--mapping FILE]',
  options: [
    ...FLIGHT_INPUT_OPTIONS,
    CARD_OPTION,
    {
      name: 'format',
      type: 'string',
      valueName: 'FORMAT',
      defaultText: 'md',
      description:
        'report format: md (for a flight-test record), json, csv (one row per event), or html (one self-contained page with time histories and the n–V plane, printable)',
    },
    {
      name: 'out',
      type: 'string',
      valueName: 'FILE',
      description: 'write the report to this file instead of standard output (refused if it exists, unless --force)',
    },
    { name: 'force', type: 'boolean', description: 'overwrite an existing --out file' },
    {
      name: 'per-frame',
      type: 'string',
      valueName: 'OUT.ndjson',
      description: 'also write one margin record (JSON) per accepted frame to this file',
    },
    {
      name: 'plot',
      type: 'string',
      valueName: 'OUT.svg',
      description: "also draw the n–V plot with the flight's points to this SVG file",
    },
    { name: 'force', type: 'boolean', description: 'overwrite existing --per-frame and --plot files' },
  ],
  notes: [
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

export interface FlightInput {
  file: string;
  aircraftFile: string;
  aircraft: Aircraft;
  margins: MarginOptions;
  mappingPath?: string;
}

/** Parse the options review and check share: FILE, --aircraft, --thresholds, --smooth, --mapping. */
export function parseFlightInput(args: ParsedArgs, command: string): FlightInput {
  if (args.positionals.length === 0) throw new UsageError('the telemetry FILE to read is missing', command);
  if (args.positionals.length > 1)
    throw new UsageError(
      `one telemetry FILE expected (got ${args.positionals.length}: ${args.positionals.join(' ')})`,
      command,
    );
  const file = args.positionals[0]!;
  const aircraftFile = requireOption(args, 'aircraft');
  const aircraft = loadAircraftFile(aircraftFile);
  const thresholdsPath = stringOption(args, 'thresholds');
  const thresholds =
    thresholdsPath !== undefined ? loadThresholdsFile(thresholdsPath, aircraft.thresholds) : aircraft.thresholds;
  // The speed band is a search per frame: only the per-frame records show it.
  const margins = resolveMarginOptions(aircraft, {
    ...parseMarginOptions(args, thresholds),
    speedBand: args.values['per-frame'] !== undefined,
  });
  const input: FlightInput = { file, aircraftFile, aircraft, margins };
  const mappingPath = stringOption(args, 'mapping');
  if (mappingPath !== undefined) input.mappingPath = mappingPath;
  return input;
}

/** A progress line on stderr, only when it is a terminal, at most a few times a second. */
function createProgress(file: string): { update(bytes: number, total: number): void; done(): void } {
  const tty = process.stderr.isTTY === true;
  let lastMs = 0;
  let shown = false;
  return {
    update(bytes, total) {
      if (!tty || total < 4 * 1024 * 1024) return;
      const now = Date.now();
      if (now - lastMs < 200) return;
      lastMs = now;
      shown = true;
      const pct = total > 0 ? Math.min(100, (bytes / total) * 100) : 0;
      process.stderr.write(
        `\rreading ${basename(file)}: ${pct.toFixed(0).padStart(3)} % (${(bytes / 1048576).toFixed(1)} of ${(total / 1048576).toFixed(1)} MiB)`,
      );
    },
    done() {
      if (shown) process.stderr.write('\r\x1b[2K');
    },
  };
}

/**
 * Files from this size on are reviewed with the computation in a worker thread (below, starting it costs more).
 * TURNMARGIN_REVIEW_WORKER_MIN_BYTES lowers it (tests run small files through the worker).
 */
function workerMinFileBytes(): number {
  const fromEnv = Number(process.env['TURNMARGIN_REVIEW_WORKER_MIN_BYTES']);
  return process.env['TURNMARGIN_REVIEW_WORKER_MIN_BYTES'] !== undefined && Number.isFinite(fromEnv) && fromEnv >= 0
    ? fromEnv
    : 8 * 1024 * 1024;
}

/** Batches read ahead of the worker at most: bounds the memory when the computation is the slower side. */
const MAX_BATCHES_IN_FLIGHT = 128;

/** The worker script when the file is long enough to pay for a worker (and the built script is there). */
function reviewWorkerUrl(file: string): URL | undefined {
  // On one core the worker only adds the hand-over: the computation cannot overlap the reading.
  if (availableParallelism() < 2 && process.env['TURNMARGIN_REVIEW_WORKER_MIN_BYTES'] === undefined) return undefined;
  let size: number;
  try {
    size = statSync(file).size;
  } catch {
    return undefined; // the reader names the problem
  }
  if (size < workerMinFileBytes()) return undefined;
  const url = new URL('../review-worker.js', import.meta.url);
  return existsSync(url) ? url : undefined;
}

/**
 * The review in this thread: the accepted frames of each batch come packed (no object per line), each unpacked
 * into one reused frame (the engine keeps no reference to it) and fed to the frame engine through the reviewer.
 */
async function reviewInThread(
  input: FlightInput,
  readOptions: ReadFrameOptions,
  onRecord?: (rec: MarginRecord) => void,
  onBreak?: () => void,
): Promise<FlightReview> {
  const reviewer = createFlightReviewer(input.aircraft, input.margins, onBreak ? { dataBreak: onBreak } : {});
  for await (const batch of readFramePackedBatches(input.file, readOptions)) {
    feedPackedBatch(reviewer, batch, onRecord);
  }
  return reviewer.finish();
}

/**
 * The same review with the computation in a worker thread: this thread reads and validates, packs the accepted
 * frames of each batch and hands them over in file order; reading waits while MAX_BATCHES_IN_FLIGHT are queued.
 */
async function reviewInWorker(script: URL, input: FlightInput, readOptions: ReadFrameOptions): Promise<FlightReview> {
  const workerData: ReviewWorkerData = { reviewWorker: true, aircraft: input.aircraft, margins: input.margins };
  const worker = new Worker(script, { workerData });
  let inFlight = 0;
  let failure: Error | undefined;
  let wake: (() => void) | undefined;
  let settled = false;
  const result = new Promise<FlightReview>((resolve, reject) => {
    const fail = (err: Error): void => {
      if (settled) return;
      settled = true;
      failure = err;
      reject(err);
      wake?.();
    };
    worker.on('message', (message: { ack?: true; review?: FlightReview }) => {
      if (message.review) {
        settled = true;
        resolve(message.review);
      } else {
        inFlight -= 1;
        wake?.();
      }
    });
    worker.on('error', fail);
    worker.on('exit', (code) => fail(new Error(`review worker stopped (exit code ${code})`)));
  });
  result.catch(() => undefined); // awaited below; failures also stop the reading loop
  try {
    for await (const batch of readFramePackedBatches(input.file, readOptions)) {
      const message: PackedFrameBatch = batch;
      worker.postMessage(message, [batch.frames.buffer, batch.lineNos.buffer]);
      inFlight += 1;
      while (inFlight >= MAX_BATCHES_IN_FLIGHT && failure === undefined)
        await new Promise<void>((resolve) => (wake = resolve));
      if (failure) throw failure;
    }
    worker.postMessage({ end: true });
    return await result;
  } finally {
    void worker.terminate();
  }
}

/**
 * Read the flight file through the margin computation. `onRecord` sees each margin record (for --per-frame).
 * Throws InputError when the file cannot be read or has no accepted frame.
 */
export async function reviewFlight(
  input: FlightInput,
  onRecord?: (rec: MarginRecord) => void,
  onBreak?: () => void,
): Promise<FlightReview> {
  const progress = createProgress(input.file);
  const readOptions: ReadFrameOptions = { onProgress: progress.update };
  if (input.mappingPath !== undefined) readOptions.mappingPath = input.mappingPath;
  let review: FlightReview;
  try {
    const worker = onRecord === undefined ? reviewWorkerUrl(input.file) : undefined;
    review = worker
      ? await reviewInWorker(worker, input, readOptions)
      : await reviewInThread(input, readOptions, onRecord, onBreak);
  } finally {
    progress.done();
  }
  if (review.accepted === 0) {
    const first = review.rejects[0];
    throw new InputError([
      `${input.file}: no accepted frame (${review.frames} line${review.frames === 1 ? '' : 's'} read, ${review.rejected} rejected)` +
        (first ? `; first problem, line ${first.line}: ${first.reason}` : '') +
        (input.mappingPath === undefined && /\.(csv|tsv|txt|log)$/i.test(input.file)
          ? ' — if the log has other column names or units, give a --mapping file'
          : ''),
    ]);
  }
  const nothingCheckable = nothingCheckableReason(review, input.aircraft);
  if (nothingCheckable !== null) throw new InputError([`${input.file}: ${nothingCheckable}`]);
  return review;
}

export async function run(args: ParsedArgs): Promise<number> {
  const input = parseFlightInput(args, 'review');
  const format = choiceOption(args, 'format', ['md', 'json', 'csv', 'html'] as const, 'md');
  const perFramePath = stringOption(args, 'per-frame');
  const plotPath = stringOption(args, 'plot');
  const outPath = stringOption(args, 'out');
  const force = args.values['force'] === true;
  if (force && perFramePath === undefined && plotPath === undefined && outPath === undefined)
    throw new UsageError('--force applies to --per-frame, --plot and --out only', 'review');
  if (perFramePath !== undefined)
    checkOutputPath({ option: 'per-frame', path: perFramePath, force, inputs: inputFilesOf(args) });
  if (plotPath !== undefined)
    checkOutputPath({ option: 'plot', path: plotPath, force, inputs: inputFilesOf(args), extension: '.svg' });
  if (outPath !== undefined) checkOutputPath({ option: 'out', path: outPath, force, inputs: inputFilesOf(args) });

  const card = openCardReview(stringOption(args, 'card'), input.aircraft, input.file);
  const perFrame = perFramePath !== undefined ? createOutputFile(perFramePath) : undefined;
  const onRecord = perFrame ? (rec: MarginRecord) => perFrame.write(JSON.stringify(rec) + '\n') : undefined;
  let review: FlightReview;
  try {
    review = await reviewFlight(
      input,
      card ? (rec) => (onRecord?.(rec), card.onRecord(rec)) : onRecord,
      card ? card.onBreak : undefined,
    );
    perFrame?.commit();
  } finally {
    perFrame?.discard();
  }

  const ctx: ReviewContext = { source: input.file, aircraft: input.aircraft, aircraftFile: input.aircraftFile };
  if (plotPath !== undefined) {
    const svg = renderNvPlotSvg({ ...nvPlotInputFrom(review, ctx), source: basename(input.file) });
    const writer = createOutputFile(plotPath);
    writer.write(svg);
    writer.commit();
  }

  const text =
    format === 'json'
      ? JSON.stringify(reviewToJson(review, ctx), null, 2) + '\n'
      : format === 'csv'
        ? reviewToCsv(review)
        : format === 'html'
          ? renderHtmlReport({ flights: [htmlFlightFrom(review, ctx)], command: reviewCommandLine(args) })
          : reviewToMarkdown(review, ctx);
  const output = card && format !== 'html' ? card.render(format, reviewToJson(review, ctx), text) : text;
  if (outPath !== undefined) {
    const writer = createOutputFile(outPath);
    writer.write(output);
    writer.commit();
  } else {
    process.stdout.write(output);
  }
  return EXIT_OK;
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
