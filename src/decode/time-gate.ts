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

/** The two answers for a frame in order, shared (callers only read them): no object per frame. */
const IN_ORDER: { ok: true; newSegment: boolean } = Object.freeze({ ok: true, newSegment: false });
const NEW_SEGMENT: { ok: true; newSegment: boolean } = Object.freeze({ ok: true, newSegment: true });

export function createTimeGate(): TimeGate {
  // The last accepted time (NaN: none yet) and the last time of the run behind it, in a typed array: a double stored
  // in a closure variable is boxed at every store, and lastS is stored at every frame.
  const times = new Float64Array([Number.NaN, Number.NEGATIVE_INFINITY]);
  const LAST_S = 0;
  const RUN_LAST_S = 1;
  // Times of the consecutive frames behind lastS that increase among themselves.
  let runLength = 0;
  return {
    check(tS) {
      const lastS = times[LAST_S]!;
      if (lastS !== lastS || tS > lastS) {
        times[LAST_S] = tS;
        runLength = 0;
        return IN_ORDER;
      }
      if (runLength > 0 && tS > times[RUN_LAST_S]!) runLength += 1;
      else runLength = 1;
      times[RUN_LAST_S] = tS;
      if (runLength >= RESTART_RUN) {
        times[LAST_S] = tS;
        runLength = 0;
        return NEW_SEGMENT;
      }
      return TIME_NOT_INCREASING;
    },
    reset() {
      times[LAST_S] = Number.NaN;
      runLength = 0;
      times[RUN_LAST_S] = Number.NEGATIVE_INFINITY;
    },
  };
}
