import { describe, expect, it } from 'vitest';
import type { CardPoint } from '../../src/core/card.js';
import fc from 'fast-check';
import { createTestPointTracker, mergeTestPointResults, type TestPointRecord } from '../../src/core/test-point.js';

const point = (over: Partial<CardPoint> = {}): CardPoint => ({
  id: 'P01',
  step: 0.5,
  tas_mps: 20,
  bank_deg: 45,
  load_factor: Math.SQRT2,
  hold_s: 3,
  tolerance: { bank_deg: 3, tas_mps: 1 },
  predicted: { utilization: { stall: 0.3, thrust: 0.7, structure: 0.4 }, sustained: true, dvdt_mps2: 0.2 },
  ...over,
});

const rec = (t: number, over: Partial<TestPointRecord> = {}): TestPointRecord => ({
  t_s: t,
  tas_mps: 20,
  bank_deg: 45,
  n_measured: Math.SQRT2,
  utilization: { stall: 0.3, thrust: 0.7, structure: 0.4, speed: 0.6 },
  ...over,
});

/** Records at 10 Hz: t = start, start + 0.1, … (count of them), times from the index so they stay on the grid. */
const run = (start: number, count: number, over: (t: number) => Partial<TestPointRecord> = () => ({})) =>
  Array.from({ length: count }, (_, i) => {
    const t = Number((start + i * 0.1).toFixed(6));
    return rec(t, over(t));
  });

function feed(records: TestPointRecord[], points: CardPoint[] = [point()]) {
  const tracker = createTestPointTracker(points);
  tracker.startFile('a.ndjson');
  for (const r of records) tracker.push(r);
  return tracker.results();
}

describe('test-point tracker', () => {
  it('achieves a point held exactly hold_s (first to last record), and not one frame less', () => {
    // Off-grid start times: 7.3 + 3.0 carries float rounding, the slack keeps exactly hold_s achieved.
    const exact = feed([rec(7.2, { bank_deg: 10 }), ...run(7.3, 31), rec(10.4, { bank_deg: 10 })])[0]!;
    expect(exact.status).toBe('achieved');
    expect(exact.longest_hold_s).toBeCloseTo(3, 9);
    expect(exact.start_t_s).toBe(7.3);
    expect(exact.file).toBe('a.ndjson');
    const short = feed(run(7.3, 30))[0]!;
    expect(short.status).toBe('partial');
    expect(short.longest_hold_s).toBeCloseTo(2.9, 9);
    expect(feed(run(7.3, 32))[0]!.status).toBe('achieved');
  });

  it('counts either turn direction and the tolerance edges as held', () => {
    const left = feed(run(0, 31, () => ({ bank_deg: -45 })))[0]!;
    expect(left.status).toBe('achieved');
    expect(left.measured!.bank_deg_mean).toBeCloseTo(45, 12);
    // |bank| − target = ±3 and TAS − target = ±1 are inside (≤); a hair beyond is out.
    const edges = feed(run(0, 31, (t) => ({ bank_deg: t < 1.5 ? -48 : 42, tas_mps: t < 1 ? 21 : 19 })))[0]!;
    expect(edges.status).toBe('achieved');
    const out = feed(run(0, 31, () => ({ bank_deg: 48.001 })))[0]!;
    expect(out).toMatchObject({ status: 'not_flown', longest_hold_s: 0, file: null, start_t_s: null, measured: null });
  });

  it('cuts a hold at a break (a data gap the engine reported)', () => {
    const tracker = createTestPointTracker([point()]);
    tracker.startFile('a.ndjson');
    for (const r of run(0, 20)) tracker.push(r);
    tracker.breakHere();
    for (const r of run(3.5, 20)) tracker.push(r);
    const result = tracker.results()[0]!;
    expect(result.status).toBe('partial');
    expect(result.longest_hold_s).toBeCloseTo(1.9, 9);
    expect(result.start_t_s).toBe(0); // two equal holds: the first is kept
  });

  it('over several files keeps the longest hold, here in the second file', () => {
    const tracker = createTestPointTracker([point(), point({ id: 'P02', bank_deg: 60, load_factor: 2 })]);
    tracker.startFile('first.ndjson');
    for (const r of run(0, 25)) tracker.push(r);
    tracker.startFile('second.ndjson');
    // A new file continues the same clock here, but the hold must still restart.
    for (const r of run(2.5, 40, (t) => ({ tas_mps: 20.5 - 0.25 * (t - 2.5) }))) tracker.push(r);
    const [p1, p2] = tracker.results();
    expect(p1).toMatchObject({ status: 'achieved', file: 'second.ndjson', start_t_s: 2.5 });
    expect(p1!.longest_hold_s).toBeCloseTo(3.9, 9);
    // TAS falls on a straight line at 0.25 m/s²: the least-squares slope of a straight line is its slope.
    expect(p1!.measured!.dvdt_mps2).toBeCloseTo(-0.25, 9);
    expect(p1!.measured!.tas_mps_mean).toBeCloseTo(20.5 - 0.25 * 1.95, 9);
    expect(p2).toMatchObject({ status: 'not_flown', measured: null });
  });

  it('reports the means and the peak utilizations of the longest hold next to the prediction', () => {
    const result = feed(
      run(0, 31, (t) => ({
        n_measured: 1.4 + (t < 1.5 ? -0.02 : 0.02),
        utilization: { stall: 0.3 + t / 100, thrust: t < 1 ? null : 0.7, structure: 0.4, speed: 0.6 },
      })),
    )[0]!;
    const m = result.measured!;
    // 15 records at 1.38 and 16 at 1.42: the mean is (15·1.38 + 16·1.42)/31.
    expect(m.load_factor_mean).toBeCloseTo((15 * 1.38 + 16 * 1.42) / 31, 12);
    expect(m.utilization_peak.stall).toBeCloseTo(0.33, 12);
    expect(m.utilization_peak.thrust).toBe(0.7);
    expect(m.utilization_peak.structure).toBe(0.4);
    expect(m.dvdt_mps2).toBeCloseTo(0, 12);
    expect(result.predicted.dvdt_mps2).toBe(0.2);
  });

  it('ignores records without a bank angle and gives no slope for a one-record touch', () => {
    const result = feed([...run(0, 5), rec(0.5, { bank_deg: null }), ...run(0.6, 3)])[0]!;
    expect(result.longest_hold_s).toBeCloseTo(0.4, 9);
    const touch = feed([rec(0, { bank_deg: 0 }), rec(0.1), rec(0.2, { bank_deg: 0 })])[0]!;
    expect(touch.status).toBe('not_flown');
  });
});

describe('test points over several files', () => {
  const points = [point(), point({ id: 'P02', bank_deg: 60, tas_mps: 18 })];
  /** A file's records at 10 Hz from its start: each record near one point or the other, or off both. */
  const file = fc
    .array(fc.constantFrom(0, 1, 2), { maxLength: 60 })
    .map((picks) =>
      picks.map((p, i) =>
        rec(Number((i * 0.1).toFixed(6)), p === 0 ? {} : p === 1 ? { bank_deg: 60, tas_mps: 18 } : { bank_deg: 5 }),
      ),
    );

  it('merged per-file results equal one tracker fed the files one after the other (longest hold wins)', () => {
    fc.assert(
      fc.property(fc.array(file, { minLength: 1, maxLength: 4 }), (files) => {
        const one = createTestPointTracker(points);
        const perFile = files.map((records, i) => {
          one.startFile(`f${i}.ndjson`);
          const own = createTestPointTracker(points);
          own.startFile(`f${i}.ndjson`);
          for (const r of records) {
            one.push(r);
            own.push(r);
          }
          return own.results();
        });
        expect(mergeTestPointResults(perFile)).toEqual(one.results());
      }),
    );
  });

  it('keeps the earlier file of two equally long holds, and takes a longer one from a later file', () => {
    const results = (records: TestPointRecord[], name: string) => {
      const t = createTestPointTracker([point()]);
      t.startFile(name);
      for (const r of records) t.push(r);
      return t.results();
    };
    const a = results(run(0, 11), 'a.ndjson'); // 1.0 s
    const b = results(run(5, 11), 'b.ndjson'); // 1.0 s, same length
    const c = results(run(9, 35), 'c.ndjson'); // 3.4 s
    expect(mergeTestPointResults([a, b])[0]!.file).toBe('a.ndjson');
    const all = mergeTestPointResults([a, b, c])[0]!;
    expect(all.file).toBe('c.ndjson');
    expect(all.status).toBe('achieved');
    expect(all.start_t_s).toBe(9);
  });
});
