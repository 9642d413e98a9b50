/**
 * Worker thread of `review` and `check` for long files: the frame engine and the flight review run here
 * while the main thread reads and validates the next lines, so the two overlap on two cores.
 *
 * Messages in: { frames: Float64Array (frame-batch.ts), count, lineNos, rejects: [lineNo, reason, …] } in file order, then
 * { end: true }. Out: { ack: true } per batch (the reader's flow control), then { review: FlightReview }.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { Aircraft } from '../core/aircraft.js';
import { createFlightReviewer, type FlightReviewer } from '../core/flight-review.js';
import type { Frame } from '../core/frame.js';
import type { MarginRecord } from '../core/margin-record.js';
import type { MarginOptions } from '../core/margins.js';
import { packedAfterReconnect, packedNewSegment, unpackFrameInto } from '../decode/frame-batch.js';
import type { PackedFrameBatch } from '../decode/read-frames.js';

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

/**
 * Feed a packed batch to the reviewer: its frames (each unpacked into `frame`, reused: the engine keeps no
 * reference to a frame) with their marks, then its rejected lines. Shared by the worker and the main thread.
 */
export function feedPackedBatch(
  reviewer: FlightReviewer,
  batch: PackedFrameBatch,
  frame: Frame,
  onRecord?: (rec: MarginRecord) => void,
): void {
  const { frames, count, lineNos, rejects } = batch;
  for (let i = 0; i < count; i++) {
    const marks = !packedNewSegment(frames, i)
      ? SAME_SEGMENT
      : packedAfterReconnect(frames, i)
        ? AFTER_RECONNECT
        : NEW_SEGMENT;
    unpackFrameInto(frame, frames, i);
    const rec = reviewer.accept(frame, marks, lineNos[i]);
    if (rec !== null) onRecord?.(rec);
  }
  for (let i = 0; i < rejects.length; i += 2) reviewer.reject(rejects[i] as number, rejects[i + 1] as string);
}

const port = parentPort;
if (port && (workerData as { reviewWorker?: true } | null)?.reviewWorker === true) {
  const data = workerData as ReviewWorkerData;
  const reviewer = createFlightReviewer(data.aircraft, data.margins);
  const frame: Frame = { tS: 0, airspeedKind: 'tas', airspeedMps: 0, altM: 0 };
  port.on('message', (message: FrameBatchMessage | { end: true }) => {
    if ('end' in message) {
      port.postMessage({ review: reviewer.finish() });
      port.close();
      return;
    }
    feedPackedBatch(reviewer, message, frame);
    port.postMessage({ ack: true });
  });
}
