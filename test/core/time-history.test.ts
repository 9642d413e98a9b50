import { describe, expect, it } from 'vitest';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { createTimeHistory, MAX_BUCKETS, seriesPoints, type TimeHistory } from '../../src/core/time-history.js';

/** A margin record with the keys the accumulator reads; the rest are not used by it. */
function record(tS: number, n: number, extra: Partial<MarginRecord> = {}): MarginRecord {
  const rec = {
    t_s: tS,
    tas_mps: 20,
    eas_mps: 20,
    density_kg_m3: 1.225,
    n_measured: n,
    n_stall: 3,
    n_thrust: 2,
    n_structural: 4,
    utilization: { stall: n / 3, thrust: n / 2, structure: n / 4, speed: null },
    bank_limit_deg: 60,
    bank_sustained_deg: 50,
    level: 'normal',
    alerts: [],
    alt_m: 100,
    mass_kg: 3,
    temperature_k: 288.15,
    bank_deg: 30,
    nz: n,
    n_from_bank: 1.1547,
    stall_speed_mps: 10,
    stall_speed_margin_pct: 50,
    cl: 0.5,
    turn_rate_dps: 10,
    radius_m: 100,
    uncoordinated: false,
    flying: true,
    n_raw: n,
    n_stall_neg: null,
    n_structural_neg: -1.5,
  };
  return { ...rec, ...extra } as MarginRecord;
}

/** Brute force: min and max of the values whose time falls in bucket i of the result's final width. */
function bruteBuckets(times: number[], values: number[], h: TimeHistory): Array<[number, number] | null> {
  const out: Array<[number, number] | null> = Array.from({ length: h.buckets }, () => null);
  times.forEach((t, k) => {
    const i = Math.floor((t - h.t0S) / h.bucketS);
    const cur = out[i];
    out[i] = cur ? [Math.min(cur[0], values[k]!), Math.max(cur[1], values[k]!)] : [values[k]!, values[k]!];
  });
  return out;
}

describe('time-history accumulator', () => {
  it('keeps a single-frame peak among 1 000 000 frames and draws at most 2 000 points per series', () => {
    const acc = createTimeHistory();
    const frames = 1_000_000;
    const peakAt = 612_345;
    for (let i = 0; i < frames; i++) {
      const n = i === peakAt ? 3.9 : 1 + 0.5 * Math.sin(i / 5000);
      acc.push(record(i / 100, n));
    }
    const h = acc.finish();
    expect(h.frames).toBe(frames);
    expect(h.reduced).toBe(true);
    expect(h.buckets).toBeLessThanOrEqual(MAX_BUCKETS);
    const pts = seriesPoints(h, 'n_measured');
    expect(pts.length).toBeLessThanOrEqual(2 * MAX_BUCKETS);
    const top = pts.reduce((a, b) => (b.v > a.v ? b : a));
    expect(top.v).toBe(3.9);
    expect(top.tS).toBeCloseTo(peakAt / 100, 9);
    // The structure utilization carries the same peak (3.9 / 4).
    expect(Math.max(...seriesPoints(h, 'u_structure').map((p) => p.v))).toBeCloseTo(0.975, 12);
  });

  it('holds in each bucket exactly the minimum and maximum of the frames in it (brute force)', () => {
    const acc = createTimeHistory();
    const times: number[] = [];
    const values: number[] = [];
    let seed = 7;
    const rand = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
    let t = 0;
    for (let i = 0; i < 20_000; i++) {
      t += 0.005 + rand() * 0.03;
      const v = rand() * 4 - 1;
      times.push(t);
      values.push(v);
      acc.push(record(t, v));
    }
    const h = acc.finish();
    const s = h.series.n_measured!;
    const brute = bruteBuckets(times, values, h);
    for (let i = 0; i < h.buckets; i++) {
      const b = brute[i] ?? null;
      if (b === null) {
        expect(Number.isNaN(s.min[i]!)).toBe(true);
      } else {
        expect(s.min[i]).toBe(b[0]);
        expect(s.max[i]).toBe(b[1]);
      }
    }
  });

  it('keeps every frame of a short flight (nothing reduced)', () => {
    const acc = createTimeHistory();
    for (let i = 0; i < 300; i++) acc.push(record(i / 10, 1 + i / 1000));
    const h = acc.finish();
    expect(h.reduced).toBe(false);
    expect(seriesPoints(h, 'n_measured')).toHaveLength(300);
  });

  it('marks breaks, lifts the pen there, and keeps the axis running forward after a clock restart', () => {
    const acc = createTimeHistory();
    for (let i = 0; i < 50; i++) acc.push(record(i / 10, 1));
    for (let i = 0; i < 50; i++) acc.push(record(10 + i / 10, 1), i === 0 ? 'data_gap' : undefined);
    for (let i = 0; i < 50; i++) acc.push(record(i / 10, 1.2)); // the sender's clock restarted at 0
    const h = acc.finish();
    expect(h.breakCounts.data_gap).toBe(1);
    expect(h.breakCounts.clock_restart).toBe(1);
    expect(h.axisShiftS).toBeGreaterThan(14.8);
    const pts = seriesPoints(h, 'n_measured');
    expect(pts.filter((p) => p.penUp)).toHaveLength(3); // the start and one after each break
    for (let i = 1; i < pts.length; i++) expect(pts[i]!.tS).toBeGreaterThan(pts[i - 1]!.tS);
  });

  it('records which alerts were on per bucket, and the share of frames with each assumption', () => {
    const acc = createTimeHistory();
    acc.push(record(0, 1));
    acc.push(
      record(0.1, 2.8, {
        level: 'warning',
        alerts: [{ limit: 'stall', level: 'warning' }],
        ...({ assumed: ['n_from_bank'] } as object),
      }),
    );
    const h = acc.finish();
    expect(h.alerts[0]).toBe(0);
    expect(h.alerts[Math.floor(0.1 / h.bucketS)]).toBe(0b11); // stall caution and warning bits
    expect(h.assumedFrames).toEqual({ n_from_bank: 1 });
  });

  it('draws the optional series (CAS, Ps) only when records carry them', () => {
    const acc = createTimeHistory();
    acc.push(record(0, 1));
    acc.push(record(0.1, 1, { ...({ cas_mps: 19.5, ps_mps: 0.3 } as object) }));
    const h = acc.finish();
    expect(h.series.cas_mps?.count).toBe(1);
    expect(h.series.ps_mps?.count).toBe(1);
    expect(h.series.ps_model_mps).toBeUndefined();
  });

  it('lifts the pen over a stretch whose frames lack a series, but not over buckets no frame fell in', () => {
    // The modelled Ps exists at full throttle only: 0–5 s and 10–15 s, none from 5 to 10 s (part throttle).
    const acc = createTimeHistory();
    for (let i = 0; i < 150; i++) {
      const modelled = i < 50 || i >= 100;
      acc.push(record(i / 10, 1, { ps_model_mps: modelled ? 0.5 : null } as Partial<MarginRecord>));
    }
    const ps = seriesPoints(acc.finish(), 'ps_model_mps');
    const after = ps.find((p) => p.tS >= 10)!;
    expect(after.tS).toBeCloseTo(10, 9);
    expect(after.penUp).toBe(true);
    expect(ps.filter((p) => p.penUp)).toHaveLength(2); // the first point and the one after the hole
    // Two frames a second in buckets of 0.25 s: every other bucket holds no frame, yet the line runs through.
    const slow = createTimeHistory();
    for (let i = 0; i < 300; i++) slow.push(record(i * 0.5, 1));
    expect(seriesPoints(slow.finish(), 'n_measured').filter((p) => p.penUp)).toHaveLength(1);
  });
});
