import { describe, expect, it } from 'vitest';
import { createEventTracker, type LimitEvent } from '../../src/core/events.js';
import { createFrameEngine, type DataBreak } from '../../src/core/frame-engine.js';
import type { Frame } from '../../src/core/frame.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { exampleAirframe } from '../helpers/airframes.js';

// At 12 m/s TAS, sea level ISA, the example airframe's n_stall = q·S·CLmax/W = 88.2·0.55·1.2/31.381 = 1.85499
// (hand computation; Anderson ch. 6 relation). Stall utilization u ↔ nz = u·1.85499.
const N_STALL_12 = 1.85499;

const frame = (tS: number, u: number): Frame => ({
  tS,
  airspeedKind: 'tas',
  airspeedMps: 12,
  altM: 0,
  nz: u * N_STALL_12,
});

/** Frames every 0.1 s from `fromS` to `toS` (inclusive) at stall utilization u. */
function run(fromS: number, toS: number, u: number): Frame[] {
  const out: Frame[] = [];
  for (let i = 0; fromS + i * 0.1 <= toS + 1e-9; i++) out.push(frame(Math.round((fromS + i * 0.1) * 10) / 10, u));
  return out;
}

const summary = (events: readonly LimitEvent[]) =>
  events.map((e) => [e.limit, e.level, e.start_s, e.end_s, e.ended_by]);

describe('frame engine', () => {
  it('ends both events at a 1.5 s gap and starts two new ones after it (the issue example: 4 events, not 2)', () => {
    // Stall alert on from 0 to 2 s, a 1.5 s gap in the data, on again from 3.5 to 5 s, then off.
    const breaks: DataBreak[] = [];
    const engine = createFrameEngine(exampleAirframe(), { smoothTauS: 0 }, { dataBreak: (b) => breaks.push(b) });
    // (The alerts go off after 0.5 s below threshold − hysteresis, the clear stretch; the events end at its start.)
    for (const f of [...run(0, 2, 0.95), ...run(3.5, 5, 0.95), ...run(5.1, 6, 0.5)]) engine.push(f);
    const events = engine.finish();
    expect(summary(events)).toEqual([
      ['stall', 'caution', 0, 2, 'data_gap'],
      ['stall', 'warning', 0, 2, 'data_gap'],
      ['stall', 'caution', 3.5, 5.1, 'cleared'],
      ['stall', 'warning', 3.5, 5.1, 'cleared'],
    ]);
    expect(breaks).toEqual([
      { kind: 'data_gap', t_s: 2 },
      { kind: 'end_of_data', t_s: 6 },
    ]);
  });

  it('keeps one event across an interval of exactly 1 s (only a longer one is a gap)', () => {
    const engine = createFrameEngine(exampleAirframe(), { smoothTauS: 0 });
    for (const f of [...run(0, 1, 0.95), ...run(2, 3, 0.95)]) engine.push(f);
    expect(summary(engine.finish())).toEqual([
      ['stall', 'caution', 0, 3, 'end_of_data'],
      ['stall', 'warning', 0, 3, 'end_of_data'],
    ]);
  });

  it('takes frames 1 s apart as continuous whatever the rounding of their decimal times (1 Hz telemetry)', () => {
    // 8.3 − 7.3 is 1.0000000000000142 in binary floating point: still no gap.
    const breaks: DataBreak[] = [];
    const engine = createFrameEngine(exampleAirframe(), {}, { dataBreak: (b) => breaks.push(b) });
    for (let i = 0; i < 40; i++) engine.push(frame(Number((0.3 + i).toFixed(1)), 0.5));
    expect(breaks).toEqual([]);
    engine.push(frame(41.4, 0.5));
    expect(breaks).toEqual([{ kind: 'data_gap', t_s: 39.3 }]);
  });

  it('restarts smoothing and alert state at a break: hysteresis does not carry an alert across it', () => {
    // u 0.79 is inside the caution hysteresis band (0.80 − 0.02 ≤ u < 0.80): it holds an alert that is on but does
    // not raise one. After a link loss the alert state restarts, so 0.79 raises nothing.
    const engine = createFrameEngine(exampleAirframe(), { smoothTauS: 0 });
    for (const f of run(0, 0.5, 0.85)) engine.push(f);
    expect(engine.push(frame(0.6, 0.79))!.alerts).toEqual([{ limit: 'stall', level: 'caution' }]);
    engine.breakData('link_lost');
    expect(engine.push(frame(0.7, 0.79))!.alerts).toEqual([]);
    // The filter restarts at the raw value after a break (τ 0.15 s): n_measured is this frame's nz.
    const smoothed = createFrameEngine(exampleAirframe(), { smoothTauS: 0.15 });
    smoothed.push(frame(0, 0.2));
    smoothed.breakData('seek');
    expect(smoothed.push(frame(0.1, 0.9))!.n_measured).toBe(0.9 * N_STALL_12);
  });

  it('names each break in ended_by: clock restart (marked or time going back), link lost, seek', () => {
    const engine = createFrameEngine(exampleAirframe(), { smoothTauS: 0 });
    for (const f of run(10, 10.3, 0.85)) engine.push(f);
    engine.push(frame(0, 0.85), { newSegment: true }); // the decoder's 5-frame rule
    engine.push(frame(0.1, 0.85));
    engine.push(frame(0.2, 0.85), { afterReconnect: true });
    engine.push(frame(0.3, 0.85));
    engine.breakData('seek');
    engine.push(frame(5, 0.85));
    engine.push(frame(4, 0.85)); // not later than the frame before: a restart of the sender's clock
    expect(summary(engine.finish())).toEqual([
      ['stall', 'caution', 10, 10.3, 'clock_restart'],
      ['stall', 'caution', 0, 0.1, 'link_lost'],
      ['stall', 'caution', 0.2, 0.3, 'seek'],
      ['stall', 'caution', 5, 5, 'clock_restart'],
      ['stall', 'caution', 4, 4, 'end_of_data'],
    ]);
  });

  it('makes a break with no frame since the last one change nothing (link lost, then reopened)', () => {
    const breaks: DataBreak[] = [];
    const engine = createFrameEngine(exampleAirframe(), {}, { dataBreak: (b) => breaks.push(b) });
    engine.breakData('link_lost');
    engine.push(frame(0, 0.5));
    engine.breakData('link_lost');
    engine.breakData('link_lost');
    engine.finish();
    engine.finish();
    expect(breaks).toEqual([{ kind: 'link_lost', t_s: 0 }]);
  });

  it('tells its listener of events as they start and end, with ended_by set on the ended ones', () => {
    const log: string[] = [];
    const engine = createFrameEngine(
      exampleAirframe(),
      { smoothTauS: 0 },
      {
        eventStarted: (e) => log.push(`start ${e.level} ${e.start_s}`),
        eventEnded: (e) => log.push(`end ${e.level} ${e.end_s} ${e.ended_by}`),
      },
    );
    for (const f of [...run(0, 0.2, 0.5), ...run(0.3, 0.5, 0.85), ...run(0.6, 1.2, 0.5)]) engine.push(f);
    engine.finish();
    expect(log).toEqual(['start caution 0.3', 'end caution 0.6 cleared']);
  });
});

describe('event ends with a clear stretch (clear_since_s on the alert)', () => {
  const rec = (tS: number, alerts: MarginRecord['alerts']): MarginRecord =>
    ({
      t_s: tS,
      alerts,
      utilization: { stall: 0.85, thrust: null, structure: 0.3 },
      tas_mps: 12,
      n_measured: 1.6,
      n_thrust: 2,
      flying: true,
    }) as unknown as MarginRecord;

  it('ends a cleared event at the first frame of the clear stretch that turned it off', () => {
    const tracker = createEventTracker();
    tracker.push(rec(1, [{ limit: 'stall', level: 'caution' }]));
    tracker.push(rec(1.1, [{ limit: 'stall', level: 'caution', clear_since_s: 1.1 } as never]));
    tracker.push(rec(1.6, [{ limit: 'stall', level: 'caution', clear_since_s: 1.1 } as never]));
    tracker.push(rec(1.7, []));
    expect(summary(tracker.finish())).toEqual([['stall', 'caution', 1, 1.1, 'cleared']]);
  });

  it('ends an event at a break at the start of a running clear stretch, else at the last frame', () => {
    const tracker = createEventTracker();
    tracker.push(
      rec(1, [
        { limit: 'stall', level: 'caution' },
        { limit: 'structure', level: 'caution' },
      ]),
    );
    tracker.push(
      rec(1.2, [
        { limit: 'stall', level: 'caution', clear_since_s: 1.2 } as never,
        { limit: 'structure', level: 'caution' },
      ]),
    );
    tracker.push(
      rec(1.3, [
        { limit: 'stall', level: 'caution', clear_since_s: 1.2 } as never,
        { limit: 'structure', level: 'caution' },
      ]),
    );
    expect(summary(tracker.closeOpen('data_gap'))).toEqual([
      ['stall', 'caution', 1, 1.2, 'data_gap'],
      ['structure', 'caution', 1, 1.3, 'data_gap'],
    ]);
  });
});
