/**
 * Worker thread of `review` and `check` for long files: the frame engine and the flight review run here
 * while the main thread reads and validates the next lines, so the two overlap on two cores.
 *
 * Messages in: PackedFrameBatch (frame-batch.ts: packed frames, their line numbers, rejected lines with their codes) in
 * file order, then
 * { end: true }. Out: { ack: true } per batch (the reader's flow control), then { review: FlightReview }.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { Aircraft } from '../core/aircraft.js';
import { createFlightReviewer, type FlightReviewer } from '../core/flight-review.js';
import type { MarginRecord } from '../core/margin-record.js';
import type { MarginOptions } from '../core/margins.js';
import {
  createFrameUnpacker,
  packedAfterReconnect,
  packedNewSegment,
  unpackRejects,
  type PackedFrameBatch,
} from '../decode/frame-batch.js';

export interface ReviewWorkerData {
  /** Marks the worker's own start (the module is also imported by the main thread for feedPackedBatch). */
  reviewWorker: true;
  aircraft: Aircraft;
  margins: MarginOptions;
}

/** A batch as read (read-frames.ts): frames packed, their line numbers, the rejected lines. */
export type FrameBatchMessage = PackedFrameBatch;

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
    const rec = reviewer.accept(unpackFrame(frames, i), marks, lineNos[i]);
    if (rec !== null) onRecord?.(rec);
  }
  for (const { lineNo, rejected } of unpackRejects(rejects)) reviewer.reject(lineNo, rejected);
}

const port = parentPort;
if (port && (workerData as { reviewWorker?: true } | null)?.reviewWorker === true) {
  const data = workerData as ReviewWorkerData;
  const reviewer = createFlightReviewer(data.aircraft, data.margins);
  port.on('message', (message: FrameBatchMessage | { end: true }) => {
    if ('end' in message) {
      port.postMessage({ review: reviewer.finish() });
      port.close();
      return;
    }
    feedPackedBatch(reviewer, message);
    port.postMessage({ ack: true });
  });
}
