/**
 * Which test points of a card were flown: fed margin records (in time order) and breaks, it finds for each point the
 * holds — runs of consecutive records with ||bank| − target| ≤ tolerance and |TAS − target| ≤ tolerance (either turn
 * direction; TAS is the record's smoothed TAS) — and keeps the longest one over every file fed.
 *
 * Pure (no I/O, no clock). The tracker keeps no rule about breaks of its own: the engine decides what a break is and
 * the caller passes it on with `breakHere()`; a break, like a change of file, ends every hold.
 *
 * A hold lasts from its first to its last record (t_s); a point is achieved when one hold lasts at least hold_s.
 */
import type { CardPoint } from './card.js';
import type { MarginRecord } from './margin-record.js';

/** The parts of a margin record the tracker reads. */
export type TestPointRecord = Pick<MarginRecord, 't_s' | 'tas_mps' | 'bank_deg' | 'n_measured' | 'utilization'>;

/** Slack on the hold-time comparison, s: t_s differences carry rounding (10.3 − 7.3 = 2.9999999999999996). */
export const HOLD_TIME_SLACK_S = 1e-6;

export type TestPointStatus = 'achieved' | 'partial' | 'not_flown';

export interface TestPointMeasured {
  load_factor_mean: number;
  tas_mps_mean: number;
  bank_deg_mean: number;
  /** Least-squares slope of TAS against time over the hold, m/s²; null for a hold of one record. */
  dvdt_mps2: number | null;
  utilization_peak: { stall: number | null; thrust: number | null; structure: number | null };
}

export interface TestPointResult {
  id: string;
  step: number;
  tas_mps: number;
  bank_deg: number;
  load_factor: number;
  hold_s: number;
  tolerance: CardPoint['tolerance'];
  status: TestPointStatus;
  longest_hold_s: number;
  /** The file of the longest hold (null when not flown or fed without a file name). */
  file: string | null;
  start_t_s: number | null;
  predicted: CardPoint['predicted'];
  measured: TestPointMeasured | null;
}

/** Running sums of one hold. TAS regression sums are taken about the hold's first time (well conditioned). */
interface Hold {
  file: string | null;
  startT: number;
  lastT: number;
  count: number;
  sumN: number;
  sumTas: number;
  sumBank: number;
  sumDt: number;
  sumDt2: number;
  sumDtTas: number;
  peak: { stall: number | null; thrust: number | null; structure: number | null };
}

/** How far a record is from a point's targets, and whether each is within its tolerance (the hold rule). */
export interface PointDeviation {
  /** |bank| − target bank, deg (either turn direction); null without a bank angle. */
  bankDeg: number | null;
  /** TAS − target TAS, m/s (the record's smoothed TAS); null when the TAS is not a number. */
  tasMps: number | null;
  bankWithin: boolean;
  tasWithin: boolean;
  /** Both within: the record holds the point. */
  held: boolean;
}

export function pointDeviation(
  point: Pick<CardPoint, 'bank_deg' | 'tas_mps' | 'tolerance'>,
  r: TestPointRecord,
): PointDeviation {
  const bank = r.bank_deg;
  const bankDeg = bank === null || !Number.isFinite(bank) ? null : Math.abs(bank) - point.bank_deg;
  const tasMps = Number.isFinite(r.tas_mps) ? r.tas_mps - point.tas_mps : null;
  const bankWithin = bankDeg !== null && Math.abs(bankDeg) <= point.tolerance.bank_deg;
  const tasWithin = tasMps !== null && Math.abs(tasMps) <= point.tolerance.tas_mps;
  return { bankDeg, tasMps, bankWithin, tasWithin, held: bankWithin && tasWithin };
}

const maxOrNull = (a: number | null, b: number | null): number | null =>
  b === null || !Number.isFinite(b) ? a : a === null ? b : Math.max(a, b);

function startHold(file: string | null, r: TestPointRecord, absBank: number): Hold {
  const hold: Hold = {
    file,
    startT: r.t_s,
    lastT: r.t_s,
    count: 0,
    sumN: 0,
    sumTas: 0,
    sumBank: 0,
    sumDt: 0,
    sumDt2: 0,
    sumDtTas: 0,
    peak: { stall: null, thrust: null, structure: null },
  };
  extendHold(hold, r, absBank);
  return hold;
}

function extendHold(h: Hold, r: TestPointRecord, absBank: number): void {
  const dt = r.t_s - h.startT;
  h.lastT = r.t_s;
  h.count++;
  h.sumN += r.n_measured;
  h.sumTas += r.tas_mps;
  h.sumBank += absBank;
  h.sumDt += dt;
  h.sumDt2 += dt * dt;
  h.sumDtTas += dt * r.tas_mps;
  h.peak = {
    stall: maxOrNull(h.peak.stall, r.utilization.stall),
    thrust: maxOrNull(h.peak.thrust, r.utilization.thrust),
    structure: maxOrNull(h.peak.structure, r.utilization.structure),
  };
}

const holdLength = (h: Hold) => h.lastT - h.startT;
const longer = (a: Hold, b: Hold) => holdLength(a) > holdLength(b) + HOLD_TIME_SLACK_S;

function measuredOf(h: Hold): TestPointMeasured {
  const n = h.count;
  const sxx = h.sumDt2 - (h.sumDt * h.sumDt) / n;
  const sxy = h.sumDtTas - (h.sumDt * h.sumTas) / n;
  return {
    load_factor_mean: h.sumN / n,
    tas_mps_mean: h.sumTas / n,
    bank_deg_mean: h.sumBank / n,
    dvdt_mps2: n >= 2 && sxx > 0 ? sxy / sxx : null,
    utilization_peak: { ...h.peak },
  };
}

export interface TestPointTracker {
  /** Records that follow come from this file (ends every hold). */
  startFile(file: string | null): void;
  push(record: TestPointRecord): void;
  /** A break (gap, link loss, seek, clock restart, end of data): ends every hold. */
  breakHere(): void;
  /** The result of every point so far, in card order (holds still open count as they stand). */
  results(): TestPointResult[];
  /** Per point in card order: how long the hold running now has lasted, s, or null when the point is not held now. */
  openHoldsS(): Array<number | null>;
}

export function createTestPointTracker(points: readonly CardPoint[]): TestPointTracker {
  let file: string | null = null;
  const open: Array<Hold | null> = points.map(() => null);
  const best: Array<Hold | null> = points.map(() => null);

  const keep = (i: number, h: Hold) => {
    const b = best[i];
    // The longest hold wins; of two equally long (within the rounding slack) the first is kept.
    if (b === null || b === undefined || longer(h, b)) best[i] = h;
  };
  const closeAll = () => {
    open.forEach((h, i) => {
      if (h) keep(i, h);
      open[i] = null;
    });
  };

  return {
    startFile(name) {
      closeAll();
      file = name;
    },
    push(r) {
      const absBank = r.bank_deg === null ? 0 : Math.abs(r.bank_deg);
      points.forEach((p, i) => {
        const held = pointDeviation(p, r).held;
        const h = open[i];
        if (held) {
          if (h) extendHold(h, r, absBank);
          else open[i] = startHold(file, r, absBank);
        } else if (h) {
          keep(i, h);
          open[i] = null;
        }
      });
    },
    breakHere: closeAll,
    openHoldsS: () => open.map((h) => (h ? holdLength(h) : null)),
    results() {
      return points.map((p, i) => {
        let h = best[i] ?? null;
        const o = open[i];
        if (o && (h === null || longer(o, h))) h = o;
        const longest = h ? holdLength(h) : 0;
        const status: TestPointStatus =
          longest >= p.hold_s - HOLD_TIME_SLACK_S ? 'achieved' : longest > 0 ? 'partial' : 'not_flown';
        const flownHold = status !== 'not_flown' ? h : null;
        return {
          id: p.id,
          step: p.step,
          tas_mps: p.tas_mps,
          bank_deg: p.bank_deg,
          load_factor: p.load_factor,
          hold_s: p.hold_s,
          tolerance: { ...p.tolerance },
          status,
          longest_hold_s: longest,
          file: flownHold ? flownHold.file : null,
          start_t_s: flownHold ? flownHold.startT : null,
          predicted: p.predicted,
          measured: flownHold ? measuredOf(flownHold) : null,
        };
      });
    },
  };
}

/**
 * The points' results over several files, from each file's own results (files in order, each list in card order):
 * per point the longest hold wins; of two equally long (within the rounding slack) the earlier file's is kept, as a
 * single tracker fed the files one after the other would keep it. Lets files be reviewed in parallel.
 */
export function mergeTestPointResults(perFile: ReadonlyArray<readonly TestPointResult[]>): TestPointResult[] {
  const first = perFile[0];
  if (first === undefined) return [];
  return first.map((point, i) => {
    let best = point;
    for (const results of perFile.slice(1)) {
      const r = results[i];
      if (r === undefined || r.id !== point.id) throw new Error(`test point ${point.id}: results of another card`);
      if (r.longest_hold_s > best.longest_hold_s + HOLD_TIME_SLACK_S) best = r;
    }
    return best;
  });
}
