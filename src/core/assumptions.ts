/**
 * Inputs a margin record had to assume (taken from a default rather than measured or given): the list, the words
 * the dashboard shows, and a counter of the share of frames each held for the flight review. Pure.
 */
import type { Assumption } from './margin-record.js';

/** Every assumption, in the order a record lists them. */
export const ASSUMPTIONS: readonly Assumption[] = Object.freeze([
  'n_from_bank',
  'temperature_isa',
  'n_limit_default',
] as const);

/** Each assumption in words (short enough for a dashboard line). */
export const ASSUMPTION_WORDS: Readonly<Record<Assumption, string>> = Object.freeze({
  n_from_bank: 'n from bank (no nz)',
  temperature_isa: 'ISA temperature (no oat_c)',
  n_limit_default: 'default n limit (14 CFR 23.337)',
});

export interface AssumptionCounter {
  /** Count one record. */
  push(rec: { readonly assumed: readonly Assumption[] }): void;
  /** Records counted. */
  frames(): number;
  /** Frames in which each assumption held. */
  counts(): Record<Assumption, number>;
  /** Share of the frames (0…1) in which each assumption held; null before any frame. */
  shares(): Record<Assumption, number | null>;
}

export function createAssumptionCounter(): AssumptionCounter {
  let frames = 0;
  const counts: Record<Assumption, number> = { n_from_bank: 0, temperature_isa: 0, n_limit_default: 0 };
  // Records share one frozen list per combination and it changes seldom: frames are counted per run of the same
  // list and added to each of its flags when the list changes.
  let runList: readonly Assumption[] = [];
  let runFrames = 0;
  const settle = (): void => {
    for (let i = 0; i < runList.length; i++) counts[runList[i]!] += runFrames;
    runFrames = 0;
  };
  return {
    push(rec) {
      frames += 1;
      if (rec.assumed !== runList) {
        settle();
        runList = rec.assumed;
      }
      runFrames += 1;
    },
    frames: () => frames,
    counts: () => {
      settle();
      return { ...counts };
    },
    shares() {
      settle();
      const share = (n: number) => (frames > 0 ? n / frames : null);
      return {
        n_from_bank: share(counts.n_from_bank),
        temperature_isa: share(counts.temperature_isa),
        n_limit_default: share(counts.n_limit_default),
      };
    },
  };
}
