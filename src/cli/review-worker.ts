/**
 * Worker thread of `review` and `check`. Two ways to use it:
 *
 * - Alongside the main thread (one long file): the frame engine and the flight review run here while the main
 *   thread reads and validates the next lines, so the two overlap on two cores. Messages in: PackedFrameBatch
 *   (frame-batch.ts: packed frames, their line numbers, rejected lines with their codes) in file order, then
 *   { end: true }. Out: { ack: true } per batch (the reader's flow control), then { result: ReviewRunResult }.
 * - On its own (several files at once, one worker per file): `workerData.read` names the file; the worker reads it
 *   and reviews it. Out: { progress: [bytes, total] } now and then, then { result } or { failure }.
 *
 * Either way the test points of a card (`cardPoints`) are followed here too, so a card costs no extra thread hop.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { Aircraft } from '../core/aircraft.js';
import type { CardPoint } from '../core/card.js';
import { createFlightReviewer, type FlightReview, type FlightReviewer } from '../core/flight-review.js';
import type { DataBreak } from '../core/frame-engine.js';
import type { MarginRecord } from '../core/margin-record.js';
import type { MarginOptions } from '../core/margins.js';
import { createTestPointTracker, type TestPointResult } from '../core/test-point.js';
import {
  createFrameUnpacker,
  createPackedBatchPool,
  packedAfterReconnect,
  packedNewSegment,
  unpackRejects,
  type PackedFrameBatch,
} from '../decode/frame-batch.js';
import { readFramePackedBatches } from '../decode/read-frames.js';
import { InputError } from '../errors.js';

export interface ReviewRunSetup {
  aircraft: Aircraft;
  margins: MarginOptions;
  /** The points of a card to follow (test_points), if any. */
  cardPoints?: CardPoint[];
  /** The file name the test points' holds carry (`file`). */
  fileLabel?: string;
  /** Keep the time history (the HTML report's): FlightReviewParts. */
  timeHistory?: boolean;
}

export interface ReviewWorkerData extends ReviewRunSetup {
  /** Marks the worker's own start (the module is also imported by the main thread for createReviewRun). */
  reviewWorker: true;
  /** Read this file here (one worker per file); without it the main thread sends the batches. */
  read?: { path: string; mappingPath?: string };
}

/** First and last receive time (ms since the epoch) of the accepted frames of a recording. */
export interface ReceivedSpan {
  firstMs: number;
  lastMs: number;
}

export interface ReviewRunResult {
  review: FlightReview;
  /** The card's points as this file alone flew them; null without a card. */
  testPoints: TestPointResult[] | null;
  /** Null unless the file is a recording (its lines carry receive times). */
  received: ReceivedSpan | null;
}

/** What the worker posts when the file cannot be reviewed: the input's problems, or an unexpected error. */
export type ReviewWorkerFailure = { problems: string[] } | { message: string };

const NEW_SEGMENT = Object.freeze({ newSegment: true });
const AFTER_RECONNECT = Object.freeze({ afterReconnect: true });
const SAME_SEGMENT = Object.freeze({});
/** One frame object for every packed frame: the frame engine keeps nothing of the frame it is given. */
const unpackFrame = createFrameUnpacker();

/**
 * Feed a packed batch to the reviewer: its frames with their marks, then its rejected lines. Shared by the worker
 * and the main thread.
 */
export function feedPackedBatch(
  reviewer: FlightReviewer,
  batch: PackedFrameBatch,
  onRecord?: (rec: MarginRecord) => void,
): void {
  const { frames, count, lineNos, rejects } = batch;
  for (let i = 0; i < count; i++) {
    const marks = !packedNewSegment(frames, i)
      ? SAME_SEGMENT
      : packedAfterReconnect(frames, i)
        ? AFTER_RECONNECT
        : NEW_SEGMENT;
    // The record is made only for a caller that wants it (per-frame output, a card): the sums need none.
    if (reviewer.advance(unpackFrame(frames, i), marks, lineNos[i]) && onRecord !== undefined)
      onRecord(reviewer.record());
  }
  for (const { lineNo, rejected } of unpackRejects(rejects)) reviewer.reject(lineNo, rejected);
}

/** Tracks the first and last receive time a reader reports. */
export function createReceivedSpan(): { at(ms: number): void; span(): ReceivedSpan | null } {
  let firstMs = Number.NaN;
  let lastMs = Number.NaN;
  return {
    at(ms) {
      if (firstMs !== firstMs) firstMs = ms;
      lastMs = ms;
    },
    span: () => (firstMs === firstMs ? { firstMs, lastMs } : null),
  };
}

/**
 * One file's review: the flight reviewer (the frame engine inside) and, with a card, the test-point tracker fed
 * each record and each of the engine's breaks. The same on the main thread and in the worker.
 */
export function createReviewRun(
  setup: ReviewRunSetup,
  onRecord?: (rec: MarginRecord) => void,
  onBreak?: (brk: DataBreak) => void,
): {
  feed(batch: PackedFrameBatch): void;
  finish(received: ReceivedSpan | null): ReviewRunResult;
} {
  const tracker = setup.cardPoints ? createTestPointTracker(setup.cardPoints) : null;
  tracker?.startFile(setup.fileLabel ?? null);
  const dataBreak =
    tracker && onBreak
      ? (brk: DataBreak) => {
          onBreak(brk);
          tracker.breakHere();
        }
      : tracker
        ? tracker.breakHere
        : onBreak;
  const reviewer = createFlightReviewer(
    setup.aircraft,
    setup.margins,
    dataBreak ? { dataBreak } : {},
    setup.timeHistory !== undefined ? { timeHistory: setup.timeHistory } : {},
  );
  const each = tracker
    ? (rec: MarginRecord) => {
        onRecord?.(rec);
        tracker.push(rec);
      }
    : onRecord;
  return {
    feed: (batch) => feedPackedBatch(reviewer, batch, each),
    finish: (received) => ({ review: reviewer.finish(), testPoints: tracker?.results() ?? null, received }),
  };
}

/** Whole-file mode: read and review `read.path` here. */
async function reviewFileHere(
  data: ReviewWorkerData & { read: { path: string } },
  port: NonNullable<typeof parentPort>,
) {
  try {
    const run = createReviewRun(data);
    const received = createReceivedSpan();
    const options = {
      onProgress: (bytes: number, total: number) => port.postMessage({ progress: [bytes, total] }),
      onReceivedAt: received.at,
      ...(data.read.mappingPath !== undefined ? { mappingPath: data.read.mappingPath } : {}),
    };
    const batchPool = createPackedBatchPool();
    for await (const batch of readFramePackedBatches(data.read.path, { ...options, batchPool })) {
      run.feed(batch);
      batchPool.give(batch);
    }
    port.postMessage({ result: run.finish(received.span()) });
  } catch (err) {
    const failure: ReviewWorkerFailure =
      err instanceof InputError ? { problems: err.problems } : { message: (err as Error).stack ?? String(err) };
    port.postMessage({ failure });
  }
  port.close();
}

const port = parentPort;
if (port && (workerData as { reviewWorker?: true } | null)?.reviewWorker === true) {
  const data = workerData as ReviewWorkerData;
  if (data.read !== undefined) {
    void reviewFileHere(data as ReviewWorkerData & { read: { path: string } }, port);
  } else {
    const run = createReviewRun(data);
    let received: ReceivedSpan | null = null;
    port.on('message', (message: PackedFrameBatch | { end: true; received: ReceivedSpan | null }) => {
      if ('end' in message) {
        received = message.received;
        port.postMessage({ result: run.finish(received) });
        port.close();
        return;
      }
      run.feed(message);
      // The arrays go back to the reader, which fills them again (the engine keeps no reference to them).
      const arrays = { frames: message.frames, lineNos: message.lineNos };
      port.postMessage({ ack: true, arrays }, [arrays.frames.buffer, arrays.lineNos.buffer]);
    });
  }
}
