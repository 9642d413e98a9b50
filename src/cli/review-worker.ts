/**
 * Worker thread of `review` and `check` for long files: the frame engine and the flight review run here
 * while the main thread reads and validates the next lines, so the two overlap on two cores.
 *
 * Messages in: { frames: Float64Array (frame-batch.ts), count, rejects: [lineNo, reason, …] } in file order, then
 * { end: true }. Out: { ack: true } per batch (the reader's flow control), then { review: FlightReview }.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { Aircraft } from '../core/aircraft.js';
import { createFlightReviewer } from '../core/flight-review.js';
import type { MarginOptions } from '../core/margins.js';
import { packedAfterReconnect, packedNewSegment, unpackFrame } from '../decode/frame-batch.js';

export interface ReviewWorkerData {
  aircraft: Aircraft;
  margins: MarginOptions;
}

export interface FrameBatchMessage {
  frames: Float64Array<ArrayBuffer>;
  count: number;
  /** Rejected lines of the batch, in order: line number, reason, line number, reason, … */
  rejects: Array<number | string>;
}

const NEW_SEGMENT = Object.freeze({ newSegment: true });
const AFTER_RECONNECT = Object.freeze({ afterReconnect: true });
const SAME_SEGMENT = Object.freeze({});

const port = parentPort;
if (port) {
  const data = workerData as ReviewWorkerData;
  const reviewer = createFlightReviewer(data.aircraft, data.margins);
  port.on('message', (message: FrameBatchMessage | { end: true }) => {
    if ('end' in message) {
      port.postMessage({ review: reviewer.finish() });
      port.close();
      return;
    }
    const { frames, count, rejects } = message;
    for (let i = 0; i < count; i++) {
      const marks = !packedNewSegment(frames, i)
        ? SAME_SEGMENT
        : packedAfterReconnect(frames, i)
          ? AFTER_RECONNECT
          : NEW_SEGMENT;
      // MERGE NOTE: the packed batch has no line numbers for accepted frames; a frame the engine refuses (Mach 1
      // check) is reported as line 0 until the batch carries them.
      reviewer.accept(unpackFrame(frames, i), marks);
    }
    for (let i = 0; i < rejects.length; i += 2) reviewer.reject(rejects[i] as number, rejects[i + 1] as string);
    port.postMessage({ ack: true });
  });
}
