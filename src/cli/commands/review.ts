/**
 * `turnmargin review FILE --aircraft FILE`: stream a recorded flight through the margin computation and report
 * its limit events, peaks and time in each level (Markdown, JSON or CSV), optionally with the per-frame records
 * and an n–V plot. Memory does not grow with the file. Also the shared reading loop of `turnmargin check`.
 */
import { closeSync, existsSync, openSync, statSync, writeSync } from 'node:fs';
import { basename } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Aircraft } from '../../core/aircraft.js';
import { createFlightReviewer, type FlightReview } from '../../core/flight-review.js';
import { DEFAULT_SMOOTH_TAU_S, type MarginOptions } from '../../core/margins.js';
import type { MarginRecord } from '../../core/margin-record.js';
import { readFrameBatches, readFramePackedBatches, type ReadFrameOptions } from '../../decode/read-frames.js';
import { renderNvPlotSvg } from '../../report/nv-plot-svg.js';
import { reviewToCsv, reviewToJson, reviewToMarkdown, type ReviewContext } from '../../report/review-report.js';
import {
  choiceOption,
  numberOption,
  requireOption,
  stringOption,
  type CommandSpec,
  type OptionSpec,
  type ParsedArgs,
} from '../args.js';
import { EXIT_OK, InputError, UsageError } from '../../errors.js';
import { loadAircraftFile, loadThresholdsFile } from '../load.js';
import type { FrameBatchMessage, ReviewWorkerData } from '../review-worker.js';

/** Options shared by review and check. */
export const FLIGHT_INPUT_OPTIONS: OptionSpec[] = [
  { name: 'aircraft', type: 'string', valueName: 'FILE', description: 'airframe model file (JSON); required' },
  {
    name: 'thresholds',
    type: 'string',
    valueName: 'FILE',
    description: "alert thresholds file (JSON), over the airframe's own",
    defaultText: "the airframe's, else 0.80/0.90 stall, 0.80/0.95 structure, 1.00 thrust, hysteresis 0.02",
  },
  {
    name: 'smooth',
    type: 'string',
    valueName: 'S',
    unit: 's',
    defaultText: String(DEFAULT_SMOOTH_TAU_S),
    description: 'time constant of the load-factor low-pass filter; 0 turns smoothing off',
  },
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
    'turnmargin review FILE --aircraft FILE [--format md|json|csv] [--per-frame OUT.ndjson] [--plot OUT.svg] [--thresholds FILE] [--smooth S] [--mapping FILE]',
  options: [
    ...FLIGHT_INPUT_OPTIONS,
    {
      name: 'format',
      type: 'string',
      valueName: 'FORMAT',
      defaultText: 'md',
      description: 'report format: md (for a flight-test record), json, or csv (one row per event)',
    },
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
  ],
  notes: [
    'FILE is NDJSON (one frame per line), CSV with a header (or a --mapping file), or a turnmargin recording. ' +
      'Rejected lines are counted and listed (the first 100) with their reason; they do not stop the review.',
    'Events: one per interval in which one (limit, level) alert is on; a warning lies inside its caution and both are listed. ' +
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
  const smoothTauS = numberOption(args, 'smooth', DEFAULT_SMOOTH_TAU_S, { min: 0, max: 10 });
  const aircraft = loadAircraftFile(aircraftFile);
  const thresholdsPath = stringOption(args, 'thresholds');
  const thresholds =
    thresholdsPath !== undefined ? loadThresholdsFile(thresholdsPath, aircraft.thresholds) : aircraft.thresholds;
  const input: FlightInput = { file, aircraftFile, aircraft, margins: { thresholds, smoothTauS } };
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
 * Writes text to a file in large blocks (bounded buffer), so per-frame output does not hold the flight in memory.
 * The file is created (or replaced: it is derived output) at the first write.
 */
function describeWriteError(err: unknown): string {
  switch ((err as NodeJS.ErrnoException).code) {
    case 'ENOENT':
      return 'no such directory';
    case 'EISDIR':
      return 'is a directory';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'ENOSPC':
      return 'disk full';
    default:
      return (err as Error).message;
  }
}

function createBlockWriter(path: string): { write(text: string): void; close(): void } {
  let fd: number | null = null;
  let buffer: string[] = [];
  let size = 0;
  const flush = () => {
    if (buffer.length === 0) return;
    try {
      fd ??= openSync(path, 'w');
      writeSync(fd, buffer.join(''));
    } catch (err) {
      throw new InputError([`${path}: cannot write (${describeWriteError(err)})`]);
    }
    buffer = [];
    size = 0;
  };
  return {
    write(text) {
      buffer.push(text);
      size += text.length;
      if (size >= 256 * 1024) flush();
    },
    close() {
      try {
        flush();
      } finally {
        if (fd !== null) closeSync(fd);
        fd = null;
      }
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

/** The rejection code of a verdict, once the decoder gives one. */
function rejectionCode(verdict: { reason: string }): string | undefined {
  const code = (verdict as { code?: unknown }).code;
  return typeof code === 'string' ? code : undefined;
}
/** Batches read ahead of the worker at most: bounds the memory when the computation is the slower side. */
const MAX_BATCHES_IN_FLIGHT = 128;

/** The worker script when the file is long enough to pay for a worker (and the built script is there). */
function reviewWorkerUrl(file: string): URL | undefined {
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

async function reviewInThread(
  input: FlightInput,
  readOptions: ReadFrameOptions,
  onRecord?: (rec: MarginRecord) => void,
): Promise<FlightReview> {
  const reviewer = createFlightReviewer(input.aircraft, input.margins);
  for await (const batch of readFrameBatches(input.file, { ...readOptions, raw: false })) {
    for (const line of batch) {
      if (line.verdict.ok) {
        const rec = reviewer.accept(line.verdict.frame, line, line.lineNo);
        if (rec !== null) onRecord?.(rec);
      } else {
        // A reconnect marked on a rejected line is still a break.
        if (line.afterReconnect === true) reviewer.breakData('link_lost');
        reviewer.reject(line.lineNo, line.verdict.reason, rejectionCode(line.verdict));
      }
    }
  }
  return reviewer.finish();
}

/**
 * The same review with the computation in a worker thread: this thread reads and validates, packs the accepted
 * frames of each batch and hands them over in file order; reading waits while MAX_BATCHES_IN_FLIGHT are queued.
 */
async function reviewInWorker(script: URL, input: FlightInput, readOptions: ReadFrameOptions): Promise<FlightReview> {
  const workerData: ReviewWorkerData = { aircraft: input.aircraft, margins: input.margins };
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
      const message: FrameBatchMessage = batch;
      worker.postMessage(message, [batch.frames.buffer]);
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
export async function reviewFlight(input: FlightInput, onRecord?: (rec: MarginRecord) => void): Promise<FlightReview> {
  const progress = createProgress(input.file);
  const readOptions: ReadFrameOptions = { onProgress: progress.update };
  if (input.mappingPath !== undefined) readOptions.mappingPath = input.mappingPath;
  let review: FlightReview;
  try {
    const worker = onRecord === undefined ? reviewWorkerUrl(input.file) : undefined;
    review = worker
      ? await reviewInWorker(worker, input, readOptions)
      : await reviewInThread(input, readOptions, onRecord);
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
  return review;
}

export async function run(args: ParsedArgs): Promise<number> {
  const input = parseFlightInput(args, 'review');
  const format = choiceOption(args, 'format', ['md', 'json', 'csv'] as const, 'md');
  const perFramePath = stringOption(args, 'per-frame');
  const plotPath = stringOption(args, 'plot');
  for (const [name, path] of [
    ['per-frame', perFramePath],
    ['plot', plotPath],
  ] as const) {
    if (path !== undefined && (path === input.file || path === input.aircraftFile)) {
      throw new UsageError(`--${name} ${path} would overwrite an input file`, 'review');
    }
  }

  const perFrame = perFramePath !== undefined ? createBlockWriter(perFramePath) : undefined;
  let review: FlightReview;
  try {
    review = await reviewFlight(input, perFrame ? (rec) => perFrame.write(JSON.stringify(rec) + '\n') : undefined);
  } finally {
    perFrame?.close();
  }

  const ctx: ReviewContext = { source: input.file, aircraft: input.aircraft, aircraftFile: input.aircraftFile };
  if (plotPath !== undefined) {
    const svg = renderNvPlotSvg({
      aircraft: input.aircraft,
      densityKgM3: review.conditions.medianDensityKgM3!,
      massKg: review.conditions.medianMassKg!,
      points: review.plotPoints,
      pointsOf: review.plotPointsOf,
      source: basename(input.file),
    });
    const writer = createBlockWriter(plotPath);
    writer.write(svg);
    writer.close();
  }

  const text =
    format === 'json'
      ? JSON.stringify(reviewToJson(review, ctx), null, 2) + '\n'
      : format === 'csv'
        ? reviewToCsv(review)
        : reviewToMarkdown(review, ctx);
  process.stdout.write(text);
  return EXIT_OK;
}
