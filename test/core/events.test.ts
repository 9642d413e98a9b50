import { describe, expect, it } from 'vitest';
import { createEventTracker } from '../../src/core/events.js';
import type { Frame } from '../../src/core/frame.js';
import { createMarginTracker } from '../../src/core/margins.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { exampleAirframe } from '../helpers/airframes.js';

// At 12 m/s TAS, sea level ISA, the example airframe's n_stall = q·S·CLmax/W = 88.2·0.55·1.2/31.381 = 1.85499
// (hand computation; Anderson ch. 6 relation). Stall utilization u ↔ nz = u·1.85499.
const N_STALL_12 = 1.85499;

function records(nzs: number[], dtS = 0.1, tas = 12): MarginRecord[] {
  const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
  return nzs.map((nz, i) => tracker.push({ tS: i * dtS, airspeedKind: 'tas', airspeedMps: tas, altM: 0, nz } as Frame));
}

function runEvents(recs: MarginRecord[]) {
  const tracker = createEventTracker();
  for (const r of recs) tracker.push(r);
  return tracker.finish();
}

describe('limit events', () => {
  it('starts at the first frame on and ends at the first frame off', () => {
    // frames every 0.1 s; stall utilization 0.5, 0.5, 0.85, 0.86, 0.6, 0.5
    const recs = records([0.5, 0.5, 0.85, 0.86, 0.6, 0.5].map((u) => u * N_STALL_12));
    const events = runEvents(recs);
    expect(events).toHaveLength(1);
    const e = events[0]!;
    expect(e.limit).toBe('stall');
    expect(e.level).toBe('caution');
    expect(e.start_s).toBeCloseTo(0.2, 9);
    expect(e.end_s).toBeCloseTo(0.4, 9);
    expect(e.duration_s).toBeCloseTo(0.2, 9);
    expect(e.peak_utilization).toBeCloseTo(0.86, 4);
    expect(e.peak_t_s).toBeCloseTo(0.3, 9);
    expect(e.speed_at_peak_mps).toBe(12);
    expect(e.n_at_peak).toBeCloseTo(0.86 * N_STALL_12, 9);
    expect(e.open).toBe(false);
  });

  it('makes one event, not many, from a value dithering ±0.01 around the threshold', () => {
    const us = [0.5, ...Array.from({ length: 40 }, (_, i) => (i % 2 === 0 ? 0.81 : 0.79)), 0.5];
    const events = runEvents(records(us.map((u) => u * N_STALL_12)));
    expect(events).toHaveLength(1);
    expect(events[0]!.start_s).toBeCloseTo(0.1, 9);
    expect(events[0]!.end_s).toBeCloseTo(4.1, 9);
  });

  it('reports a warning interval and the caution interval around it, both', () => {
    // u: 0.5 0.82 0.92 0.95 0.89 0.87 0.79 0.77 0.5 at t = 0 … 0.8
    // caution on at 0.1 (0.82), stays to 0.6 (0.79 ≥ 0.78), off at 0.7 (0.77)
    // warning on at 0.2 (0.92), stays at 0.4 (0.89 ≥ 0.88), off at 0.5 (0.87)
    const events = runEvents(records([0.5, 0.82, 0.92, 0.95, 0.89, 0.87, 0.79, 0.77, 0.5].map((u) => u * N_STALL_12)));
    expect(events.map((e) => [e.limit, e.level])).toEqual([
      ['stall', 'caution'],
      ['stall', 'warning'],
    ]);
    const [caution, warning] = events as [(typeof events)[0], (typeof events)[0]];
    expect(caution.start_s).toBeCloseTo(0.1, 9);
    expect(caution.end_s).toBeCloseTo(0.7, 9);
    expect(warning.start_s).toBeCloseTo(0.2, 9);
    expect(warning.end_s).toBeCloseTo(0.5, 9);
    expect(warning.start_s).toBeGreaterThanOrEqual(caution.start_s);
    expect(warning.end_s).toBeLessThanOrEqual(caution.end_s);
    expect(caution.peak_utilization).toBeCloseTo(0.95, 4);
    expect(warning.peak_t_s).toBeCloseTo(0.3, 9);
  });

  it('lists a caution before its warning when both start at the same frame', () => {
    const tracker = createEventTracker();
    const [a, b] = records([0.5, 0.95].map((u) => u * N_STALL_12));
    tracker.push(a!);
    const { started } = tracker.push(b!);
    expect(started.map((e) => e.level)).toEqual(['caution', 'warning']);
  });

  it('reports what started and ended at each frame, and open events with the latest end', () => {
    const tracker = createEventTracker();
    const recs = records([0.5, 0.85, 0.86, 0.5, 0.5, 0.5, 0.5, 0.5, 0.5].map((u) => u * N_STALL_12));
    expect(tracker.push(recs[0]!)).toEqual({ started: [], ended: [] });
    const second = tracker.push(recs[1]!);
    expect(second.started).toHaveLength(1);
    tracker.push(recs[2]!);
    expect(tracker.events()[0]!.open).toBe(true);
    expect(tracker.events()[0]!.end_s).toBeCloseTo(0.2, 9);
    // The clear stretch starts at 0.3 s; the alert goes off at the first frame 0.5 s (clear_s) later.
    for (let i = 3; i < 8; i++) expect(tracker.push(recs[i]!).ended).toHaveLength(0);
    const off = tracker.push(recs[8]!);
    expect(off.ended).toHaveLength(1);
    expect(off.ended[0]!.end_s).toBeCloseTo(0.3, 9);
    expect(tracker.events()[0]!.open).toBe(false);
  });

  it('ends an event at the first frame of its clear stretch, and at the break when none has begun', () => {
    const tracker = createEventTracker();
    const recs = records([0.5, 0.85, 0.5, 0.5].map((u) => u * N_STALL_12));
    for (const r of recs) tracker.push(r);
    // A break (gap, reconnect) before the stretch lasted clear_s: the event ends where the stretch began.
    expect(tracker.closeOpen('data_gap')[0]!.end_s).toBeCloseTo(0.2, 9);
    const again = createEventTracker();
    for (const r of records([0.5, 0.85, 0.86].map((u) => u * N_STALL_12))) again.push(r);
    expect(again.closeOpen('data_gap')[0]!.end_s).toBeCloseTo(0.2, 9);
  });

  it('closes an event still on at the end of the data at the last frame', () => {
    const events = runEvents(records([0.5, 0.85, 0.88, 0.91].map((u) => u * N_STALL_12)));
    const caution = events.find((e) => e.level === 'caution')!;
    expect(caution.start_s).toBeCloseTo(0.1, 9);
    expect(caution.end_s).toBeCloseTo(0.3, 9);
    expect(caution.open).toBe(false);
    const warning = events.find((e) => e.level === 'warning')!;
    expect(warning.start_s).toBeCloseTo(0.3, 9);
    expect(warning.duration_s).toBe(0);
  });

  it('tracks limits separately (structure and stall in the same pull)', () => {
    // At 25 m/s n_stall = 0.5·1.225·625·0.55·1.2/31.381 = 8.051, so nz 3.1 is stall 0.385 but structure
    // 3.1/3.8 = 0.816 (caution); thrust at 25 m/s: T = 4.96 N, q·S = 210.55, n_thrust = 1.4 → thrust caution too
    const events = runEvents(records([1, 3.1, 3.1, 1], 0.1, 25));
    expect(events.map((e) => `${e.limit}:${e.level}`).sort()).toEqual(['structure:caution', 'thrust:caution']);
    const structure = events.find((e) => e.limit === 'structure')!;
    expect(structure.peak_utilization).toBeCloseTo(3.1 / 3.8, 6);
  });

  it('counts a thrust caution from n_thrust = 0 as an unbounded peak', () => {
    const tracker = createMarginTracker(exampleAirframe({ thrust: { model: 'constant', thrust_n: 2 } }), {
      smoothTauS: 0,
    });
    const events = createEventTracker();
    events.push(tracker.push({ tS: 0, airspeedKind: 'tas', airspeedMps: 20, altM: 0, bankDeg: 0 }));
    events.push(tracker.push({ tS: 0.1, airspeedKind: 'tas', airspeedMps: 20, altM: 0, bankDeg: 0 }));
    const [e] = events.finish();
    expect(e!.limit).toBe('thrust');
    expect(e!.peak_utilization).toBe(Infinity);
    expect(JSON.parse(JSON.stringify(e)).peak_utilization).toBeNull();
  });

  it('peaks at the highest real utilization when the event also holds frames with n_thrust = 0', () => {
    // Example airframe, sea level: at 22.5 m/s n_thrust = (qS/W)·√((T − qS·CD0)/(qS·k)) > 0 with T = η·P/V;
    // at 24 m/s η·P/V = 5.17 N < qS·CD0 = 5.82 N, so n_thrust = 0 (Anderson ch. 6 relation, hand computation).
    const tracker = createMarginTracker(exampleAirframe(), { smoothTauS: 0 });
    const events = createEventTracker();
    const first = tracker.push({ tS: 0, airspeedKind: 'tas', airspeedMps: 22.5, altM: 0, nz: 2.5 });
    events.push(first);
    const second = tracker.push({ tS: 0.1, airspeedKind: 'tas', airspeedMps: 24, altM: 0, nz: 1 });
    expect(second.n_thrust).toBe(0);
    events.push(second);
    const [e] = events.finish();
    expect(e!.limit).toBe('thrust');
    expect(e!.peak_utilization).toBeCloseTo(first.utilization.thrust!, 9);
    expect(e!.peak_t_s).toBe(0);
  });
});
