/**
 * The t_s ordering rule. A frame must be later than the last accepted one ("time not increasing" otherwise).
 * A run of RESTART_RUN consecutive frames that increase among themselves but lie behind the last accepted time is a
 * restart of the sender's clock: a new segment, accepted from the RESTART_RUN-th frame on. A lone stray frame is
 * still rejected. reset() (after a reconnect or a seek) starts the check afresh.
 */
export const RESTART_RUN = 5;

import { TIME_NOT_INCREASING, type Rejected } from './rejections.js';

export interface TimeGate {
  check(tS: number): { ok: true; newSegment: boolean } | Rejected;
  reset(): void;
}

export function createTimeGate(): TimeGate {
  let lastS: number | undefined;
  // Times of the consecutive frames behind lastS that increase among themselves.
  let runLength = 0;
  let runLastS = -Infinity;
  return {
    check(tS) {
      if (lastS === undefined || tS > lastS) {
        lastS = tS;
        runLength = 0;
        return { ok: true, newSegment: false };
      }
      if (runLength > 0 && tS > runLastS) runLength += 1;
      else runLength = 1;
      runLastS = tS;
      if (runLength >= RESTART_RUN) {
        lastS = tS;
        runLength = 0;
        return { ok: true, newSegment: true };
      }
      return TIME_NOT_INCREASING;
    },
    reset() {
      lastS = undefined;
      runLength = 0;
      runLastS = -Infinity;
    },
  };
}
