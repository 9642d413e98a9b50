/**
 * A test card followed live (watch, replay, demo with --card): the test-point tracker of src/core/test-point.ts fed
 * the session's margin records and the engine's breaks, plus which point the dashboard shows — the next one not yet
 * achieved in this session, or the one the user stepped to with n/p. Pure: no I/O, no clock. The hold rule is the
 * tracker's; this module only reads its results.
 */
import type { CardPoint } from '../core/card.js';
import {
  createTestPointTracker,
  pointDeviation,
  type PointDeviation,
  type TestPointRecord,
  type TestPointResult,
  type TestPointStatus,
} from '../core/test-point.js';

export interface LiveCardView {
  /** The card file's name, for titles. */
  label: string;
  total: number;
  achievedCount: number;
  /** Index (card order) of the point shown. */
  selected: number;
  point: CardPoint;
  status: TestPointStatus;
  /** The longest hold of the point shown in this session, s. */
  longestHoldS: number;
  /** The hold running now, s; null when the point is not held now. */
  holdNowS: number | null;
  /** The latest record's deviation from the point shown; null before the first record. */
  deviation: PointDeviation | null;
  /** Every point's status, in card order. */
  statuses: TestPointStatus[];
}

export interface LiveCard {
  push(record: TestPointRecord): void;
  /** A break the engine reported (gap, link lost, seek, clock restart, end of data): every hold ends. */
  breakHere(): void;
  /** Show the next (+1) or previous (−1) point in card order (wrapping). */
  step(delta: 1 | -1): void;
  /**
   * Points achieved since the last call, in card order. When the point shown is among them, the next point not yet
   * achieved (after it, wrapping) is shown instead.
   */
  poll(): TestPointResult[];
  /** What the dashboard shows (polls first). */
  view(): LiveCardView;
}

export function createLiveCard(points: readonly CardPoint[], label: string): LiveCard {
  if (points.length === 0) throw new Error('a card has at least one point');
  const tracker = createTestPointTracker(points);
  const achieved = points.map(() => false);
  let selected = 0;
  let last: TestPointRecord | null = null;
  let results: TestPointResult[] = tracker.results();
  let dirty = false;

  const nextNotAchieved = (from: number): number | null => {
    for (let k = 1; k <= points.length; k++) {
      const i = (from + k) % points.length;
      if (!achieved[i]) return i;
    }
    return null;
  };

  const poll = (): TestPointResult[] => {
    if (dirty) {
      results = tracker.results();
      dirty = false;
    }
    const fresh: TestPointResult[] = [];
    results.forEach((r, i) => {
      if (r.status === 'achieved' && !achieved[i]) {
        achieved[i] = true;
        fresh.push(r);
      }
    });
    if (fresh.some((r) => r.id === points[selected]!.id)) selected = nextNotAchieved(selected) ?? selected;
    return fresh;
  };

  return {
    push(record) {
      last = record;
      tracker.push(record);
      dirty = true;
    },
    breakHere() {
      tracker.breakHere();
      dirty = true;
    },
    step(delta) {
      selected = (selected + delta + points.length) % points.length;
    },
    poll,
    view() {
      poll();
      const point = points[selected]!;
      const result = results[selected]!;
      return {
        label,
        total: points.length,
        achievedCount: achieved.filter(Boolean).length,
        selected,
        point,
        status: result.status,
        longestHoldS: result.longest_hold_s,
        holdNowS: tracker.openHoldsS()[selected] ?? null,
        deviation: last === null ? null : pointDeviation(point, last),
        statuses: results.map((r) => r.status),
      };
    },
  };
}
