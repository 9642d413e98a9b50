/**
 * Reading recorded flights through the margin computation, for `review` and `check`: one file or several, each in
 * bounded memory. One file is reviewed as it always was: in this thread, or from 8 MiB on with the computation in a
 * worker while this thread reads. Several files are reviewed in parallel, up to one per core
 * (os.availableParallelism()): each long one in a worker of its own that reads and computes, the short ones here.
 */
import { accessSync, constants as fsConstants, existsSync, statSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { basename } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { Aircraft } from '../core/aircraft.js';
import type { CardPoint } from '../core/card.js';
import { nothingCheckableReason } from '../core/checkable.js';
import type { FlightReview } from '../core/flight-review.js';
import type { DataBreak } from '../core/frame-engine.js';
import { resolveMarginOptions, type MarginOptions } from '../core/margins.js';
import type { MarginRecord } from '../core/margin-record.js';
import { mergeTestPointResults, type TestPointResult } from '../core/test-point.js';
import { createPackedBatchPool, type PackedArrays, type PackedFrameBatch } from '../decode/frame-batch.js';
import { readFramePackedBatches, type ReadFrameOptions } from '../decode/read-frames.js';
import { InputError, UsageError } from '../errors.js';
import { systemErrorWords } from '../system-errors.js';
import { describeDefaultThresholds } from '../core/thresholds.js';
import { requireOption, stringOption, type OptionSpec, type ParsedArgs } from './args.js';
import { MARGIN_COMPUTATION_OPTIONS, parseMarginOptions } from './margin-options.js';
import { loadAircraftFile, loadThresholdsFile } from './load.js';
import {
  createReceivedSpan,
  createReviewRun,
  type ReceivedSpan,
  type ReviewRunResult,
  type ReviewWorkerData,
  type ReviewWorkerFailure,
} from './review-worker.js';

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

/** The --card option of review and check. */
export const CARD_OPTION: OptionSpec = {
  name: 'card',
  type: 'string',
  valueName: 'FILE',
  description: 'a test card (JSON from `turnmargin card`): report which of its points were achieved (test_points)',
};

export interface FlightInput {
  file: string;
  aircraftFile: string;
  aircraft: Aircraft;
  margins: MarginOptions;
  mappingPath?: string;
}

/**
 * Parse the options review and check share: FILE…, --aircraft, --thresholds, --smooth, --mapping. One input per
 * file, in the order given, all with the same airframe and options.
 */
export function parseFlightInputs(args: ParsedArgs, command: string): FlightInput[] {
  if (args.positionals.length === 0) throw new UsageError('the telemetry FILE to read is missing', command);
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
  const mappingPath = stringOption(args, 'mapping');
  return args.positionals.map((file) => {
    const input: FlightInput = { file, aircraftFile, aircraft, margins };
    if (mappingPath !== undefined) input.mappingPath = mappingPath;
    return input;
  });
}

/** A reviewed flight: the review, the card's points as this file flew them, the receive times of a recording. */
export interface ReviewedFlight {
  input: FlightInput;
  /** The file name the report and the test points use (its base name; the path when two inputs share it). */
  label: string;
  review: FlightReview;
  testPoints: TestPointResult[] | null;
  received: ReceivedSpan | null;
}

export interface ReviewFlightsOptions {
  /** Follow these test points (a card) in every file. */
  cardPoints?: CardPoint[];
  /** Each margin record (for --per-frame, fit): one file only, reviewed in this thread. */
  onRecord?: (rec: MarginRecord) => void;
  /** Each break the engine reports, before the record after it (with onRecord). */
  onBreak?: (brk: DataBreak) => void;
  /** Keep each flight's time history (default true; only the HTML report draws it). */
  timeHistory?: boolean;
}

/** Labels of the inputs: base names, unless two inputs share one (then the paths as given). */
export function flightLabels(inputs: readonly FlightInput[]): string[] {
  const names = inputs.map((i) => basename(i.file));
  return inputs.map((input, i) => (names.indexOf(names[i]!) !== names.lastIndexOf(names[i]!) ? input.file : names[i]!));
}

/** The points of a card over all the flights: per point the longest hold of any file. */
export function testPointsOverFlights(flights: readonly ReviewedFlight[]): TestPointResult[] | null {
  const lists = flights.map((f) => f.testPoints).filter((t): t is TestPointResult[] => t !== null);
  return lists.length === 0 ? null : mergeTestPointResults(lists);
}

// ---------------------------------------------------------------------------------------------------------------
// Progress

interface Progress {
  update(file: number, bytes: number, total: number): void;
  fileDone(file: number): void;
  done(): void;
}

/**
 * A progress line on stderr, only when it is a terminal and the work is long enough to need one, at most five
 * times a second: "reading F: 42 % (…)" for one file, "reviewing N files: 42 % (…), K of N done" for several.
 */
function createProgress(inputs: readonly FlightInput[], labels: readonly string[]): Progress {
  const tty = process.stderr.isTTY === true;
  const bytes = inputs.map(() => 0);
  const totals = inputs.map((i) => {
    try {
      return statSync(i.file).size;
    } catch {
      return 0;
    }
  });
  let finished = 0;
  let lastMs = 0;
  let shown = false;
  const show = (force: boolean): void => {
    const total = totals.reduce((s, t) => s + t, 0);
    if (!tty || total < 4 * 1024 * 1024) return;
    const now = Date.now();
    if (!force && now - lastMs < 200) return;
    lastMs = now;
    shown = true;
    const read = bytes.reduce((s, b) => s + b, 0);
    const pct = Math.min(100, (read / total) * 100);
    const amount = `${pct.toFixed(0).padStart(3)} % (${(read / 1048576).toFixed(1)} of ${(total / 1048576).toFixed(1)} MiB)`;
    process.stderr.write(
      inputs.length === 1
        ? `\rreading ${labels[0]}: ${amount}`
        : `\rreviewing ${inputs.length} files: ${amount}, ${finished} of ${inputs.length} done`,
    );
  };
  return {
    update(file, read, total) {
      bytes[file] = read;
      totals[file] = total;
      show(false);
    },
    fileDone(file) {
      bytes[file] = totals[file]!;
      finished += 1;
      if (inputs.length > 1) show(true);
    },
    done() {
      if (shown) process.stderr.write('\r\x1b[2K');
    },
  };
}

// ---------------------------------------------------------------------------------------------------------------
// The three ways to review one file

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

/**
 * Frames read ahead of the worker at most (in batches handed over and not yet acknowledged): bounds the memory when
 * the computation is the slower side, whatever the size of a batch. At least one batch is always in flight.
 */
const MAX_FRAMES_IN_FLIGHT = 32_768;

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
  const url = new URL('./review-worker.js', import.meta.url);
  return existsSync(url) ? url : undefined;
}

/** Set when another file failed: the reviews still running stop at their next batch (a worker at once). */
interface StopSignal {
  readonly stopped: boolean;
  /** Call `listener` when the reviews are stopped; returns its removal. */
  onStop(listener: () => void): () => void;
}

function createStopSignal(): StopSignal & { stop(): void } {
  const listeners = new Set<() => void>();
  let stopped = false;
  return {
    get stopped() {
      return stopped;
    },
    onStop(listener) {
      listeners.add(listener);
      return () => listeners.delete(listener);
    },
    stop() {
      stopped = true;
      for (const l of [...listeners]) l();
    },
  };
}

const STOPPED = new Error('stopped: another file failed');

function workerDataOf(input: FlightInput, options: ReviewFlightsOptions, label: string): ReviewWorkerData {
  const data: ReviewWorkerData = { reviewWorker: true, aircraft: input.aircraft, margins: input.margins };
  if (options.timeHistory !== undefined) data.timeHistory = options.timeHistory;
  if (options.cardPoints) {
    data.cardPoints = options.cardPoints;
    data.fileLabel = label;
  }
  return data;
}

/**
 * The review in this thread: the accepted frames of each batch come packed (no object per line), each unpacked
 * into one reused frame (the engine keeps no reference to it) and fed to the frame engine through the reviewer.
 */
async function reviewInThread(
  input: FlightInput,
  label: string,
  readOptions: ReadFrameOptions,
  options: ReviewFlightsOptions,
  stop: StopSignal,
): Promise<ReviewRunResult> {
  const run = createReviewRun(workerDataOf(input, options, label), options.onRecord, options.onBreak);
  const received = createReceivedSpan();
  const batchPool = createPackedBatchPool();
  for await (const batch of readFramePackedBatches(input.file, {
    ...readOptions,
    onReceivedAt: received.at,
    batchPool,
  })) {
    if (stop.stopped) throw STOPPED;
    run.feed(batch);
    // The engine keeps no reference to the batch's frames: its arrays can be filled again.
    batchPool.give(batch);
  }
  return run.finish(received.span());
}

/** Messages a review worker posts. */
type WorkerMessage =
  | { ack: true; arrays?: PackedArrays }
  | { progress: [number, number] }
  | { result: ReviewRunResult }
  | { failure: ReviewWorkerFailure };

/** Start a worker; `settled` resolves with its result, rejects with its failure (an InputError for the input's). */
function startWorker(
  script: URL,
  data: ReviewWorkerData,
  file: string,
  onMessage: (m: WorkerMessage) => void,
): { worker: Worker; settled: Promise<ReviewRunResult> } {
  const worker = new Worker(script, { workerData: data });
  let done = false;
  const settled = new Promise<ReviewRunResult>((resolve, reject) => {
    const fail = (err: Error): void => {
      if (done) return;
      done = true;
      reject(err);
    };
    worker.on('message', (message: WorkerMessage) => {
      if ('result' in message) {
        done = true;
        resolve(message.result);
      } else if ('failure' in message) {
        const f = message.failure;
        fail('problems' in f ? new InputError(f.problems) : new Error(`${file}: review failed: ${f.message}`));
      } else onMessage(message);
    });
    worker.on('error', (err) => fail(new Error(`${file}: review worker failed: ${err.message}`)));
    worker.on('exit', (code) => fail(new Error(`${file}: review worker stopped (exit code ${code})`)));
  });
  settled.catch(() => undefined); // awaited by the caller; failures also stop its loops
  return { worker, settled };
}

/**
 * One file with the computation in a worker thread: this thread reads and validates, packs the accepted frames of
 * each batch and hands them over in file order; reading waits while MAX_FRAMES_IN_FLIGHT are queued.
 */
async function reviewAlongsideWorker(
  script: URL,
  input: FlightInput,
  label: string,
  readOptions: ReadFrameOptions,
  options: ReviewFlightsOptions,
  stop: StopSignal,
): Promise<ReviewRunResult> {
  // The frame count of each batch handed over and not yet acknowledged (acknowledgements come in order).
  const inFlight: number[] = [];
  let framesInFlight = 0;
  let failure: Error | undefined;
  let wake: (() => void) | undefined;
  // The worker sends each batch's arrays back with its ack, to be filled again.
  const batchPool = createPackedBatchPool();
  const { worker, settled } = startWorker(script, workerDataOf(input, options, label), input.file, (m) => {
    if ('ack' in m && m.arrays !== undefined) batchPool.give(m.arrays);
    framesInFlight -= inFlight.shift() ?? 0;
    wake?.();
  });
  settled.catch((err: Error) => {
    failure = err;
    wake?.();
  });
  const received = createReceivedSpan();
  const off = stop.onStop(() => wake?.());
  try {
    for await (const batch of readFramePackedBatches(input.file, {
      ...readOptions,
      onReceivedAt: received.at,
      batchPool,
    })) {
      if (stop.stopped) throw STOPPED;
      const message: PackedFrameBatch = batch;
      worker.postMessage(message, [batch.frames.buffer, batch.lineNos.buffer]);
      // A batch without frames still takes a place (its rejected lines), so its ack is counted.
      const frames = Math.max(1, batch.count);
      inFlight.push(frames);
      framesInFlight += frames;
      while (framesInFlight >= MAX_FRAMES_IN_FLIGHT && failure === undefined && !stop.stopped)
        await new Promise<void>((resolve) => (wake = resolve));
      if (failure) throw failure;
    }
    worker.postMessage({ end: true, received: received.span() });
    return await settled;
  } finally {
    off();
    void worker.terminate();
  }
}

/** One file of several, read and reviewed in a worker of its own. */
async function reviewInOwnWorker(
  script: URL,
  input: FlightInput,
  label: string,
  onProgress: (bytes: number, total: number) => void,
  options: ReviewFlightsOptions,
  stop: StopSignal,
): Promise<ReviewRunResult> {
  const data = workerDataOf(input, options, label);
  data.read =
    input.mappingPath !== undefined ? { path: input.file, mappingPath: input.mappingPath } : { path: input.file };
  const { worker, settled } = startWorker(script, data, input.file, (m) => {
    if ('progress' in m) onProgress(m.progress[0], m.progress[1]);
  });
  let off = (): void => undefined;
  const stopped = new Promise<never>((_, reject) => {
    off = stop.onStop(() => reject(STOPPED));
  });
  stopped.catch(() => undefined);
  try {
    return await Promise.race([settled, stopped]);
  } finally {
    off();
    void worker.terminate();
  }
}

/** The checks after a file's review: at least one accepted frame, and something checkable. */
function judgeReview(input: FlightInput, review: FlightReview): void {
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
}

/** Every input that cannot be opened for reading, named, before any work starts. */
function refuseUnreadable(inputs: readonly FlightInput[]): void {
  const problems: string[] = [];
  for (const { file } of inputs) {
    try {
      const st = statSync(file);
      if (st.isDirectory()) throw Object.assign(new Error('is a directory'), { code: 'EISDIR' });
      accessSync(file, fsConstants.R_OK);
    } catch (err) {
      problems.push(`${file}: cannot read the telemetry file (${systemErrorWords(err)})`);
    }
  }
  if (problems.length > 0) throw new InputError(problems);
}

/**
 * Review the flights, in the order given. Throws InputError naming the file when one cannot be read, has no
 * accepted frame or nothing checkable: then no result at all (the other reviews are stopped).
 */
export async function reviewFlights(
  inputs: readonly FlightInput[],
  options: ReviewFlightsOptions = {},
): Promise<ReviewedFlight[]> {
  const perRecord = options.onRecord !== undefined || options.onBreak !== undefined;
  if (perRecord && inputs.length !== 1) throw new Error('per-record output is for one file at a time');
  refuseUnreadable(inputs);
  const labels = flightLabels(inputs);
  const progress = createProgress(inputs, labels);
  const stop = createStopSignal();

  const reviewOne = async (i: number): Promise<ReviewedFlight> => {
    const input = inputs[i]!;
    const label = labels[i]!;
    const onProgress = (bytes: number, total: number) => progress.update(i, bytes, total);
    const readOptions: ReadFrameOptions = { onProgress };
    if (input.mappingPath !== undefined) readOptions.mappingPath = input.mappingPath;
    const script = perRecord ? undefined : reviewWorkerUrl(input.file);
    let result: ReviewRunResult;
    if (script === undefined) result = await reviewInThread(input, label, readOptions, options, stop);
    else if (inputs.length === 1)
      result = await reviewAlongsideWorker(script, input, label, readOptions, options, stop);
    else result = await reviewInOwnWorker(script, input, label, onProgress, options, stop);
    judgeReview(input, result.review);
    progress.fileDone(i);
    return { input, label, review: result.review, testPoints: result.testPoints, received: result.received };
  };

  const results: Array<ReviewedFlight | undefined> = inputs.map(() => undefined);
  let firstError: unknown;
  let next = 0;
  const lane = async (): Promise<void> => {
    while (!stop.stopped && next < inputs.length) {
      const i = next++;
      try {
        results[i] = await reviewOne(i);
      } catch (err) {
        if (err !== STOPPED && firstError === undefined) firstError = err;
        stop.stop();
      }
    }
  };
  const lanes = Math.max(1, Math.min(inputs.length, availableParallelism()));
  try {
    await Promise.all(Array.from({ length: lanes }, lane));
  } finally {
    progress.done();
  }
  if (firstError !== undefined) throw firstError;
  return results as ReviewedFlight[];
}
