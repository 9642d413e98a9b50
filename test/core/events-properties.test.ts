import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { createEventTracker } from '../../src/core/events.js';
import { createMarginTracker } from '../../src/core/margins.js';
import type { MarginRecord } from '../../src/core/margin-record.js';
import { exampleAirframe } from '../helpers/airframes.js';

// Properties of the alert/event definitions of the issue text (hysteresis 0.02 below the threshold; a warning
// lies inside its caution), over random load-factor histories at 12 m/s, sea level (n_stall 1.855, n_limit 3.8).
const aircraft = exampleAirframe();

function run(nzs: number[]): {
  recs: MarginRecord[];
  events: ReturnType<ReturnType<typeof createEventTracker>['finish']>;
} {
  const margins = createMarginTracker(aircraft, { smoothTauS: 0 });
  const tracker = createEventTracker();
  const recs = nzs.map((nz, i) => margins.push({ tS: i * 0.1, airspeedKind: 'tas', airspeedMps: 12, altM: 0, nz }));
  for (const r of recs) tracker.push(r);
  return { recs, events: tracker.finish() };
}

const histories = fc.array(fc.double({ min: 0.5, max: 2.2, noNaN: true }), { minLength: 1, maxLength: 200 });

describe('event properties over random load-factor histories', () => {
  it('puts every warning inside a caution of the same limit', () => {
    fc.assert(
      fc.property(histories, (nzs) => {
        const { events } = run(nzs);
        for (const w of events.filter((e) => e.level === 'warning')) {
          const inside = events.some(
            (c) => c.level === 'caution' && c.limit === w.limit && c.start_s <= w.start_s && c.end_s >= w.end_s,
          );
          expect(inside).toBe(true);
        }
      }),
      { numRuns: 200 },
    );
  });

  it('never overlaps two events of one (limit, level), and a new one starts only after the value fell below threshold − 0.02', () => {
    fc.assert(
      fc.property(histories, (nzs) => {
        const { recs, events } = run(nzs);
        const stallCautions = events.filter((e) => e.limit === 'stall' && e.level === 'caution');
        for (let i = 1; i < stallCautions.length; i++) {
          const prev = stallCautions[i - 1]!;
          const next = stallCautions[i]!;
          expect(next.start_s).toBeGreaterThanOrEqual(prev.end_s);
          // between them some frame had stall utilization < 0.78 (it is what ended the previous one)
          const between = recs.filter((r) => r.t_s >= prev.end_s && r.t_s < next.start_s);
          expect(between.some((r) => (r.utilization.stall ?? 0) < 0.78)).toBe(true);
        }
      }),
      { numRuns: 200 },
    );
  });

  it('has an event cover exactly the frames whose record lists the caution outside a clear stretch', () => {
    fc.assert(
      fc.property(histories, (nzs) => {
        const { recs, events } = run(nzs);
        const cautions = events.filter((e) => e.limit === 'stall' && e.level === 'caution');
        const last = recs[recs.length - 1]!.t_s;
        for (const r of recs) {
          const alert = r.alerts.find((a) => a.limit === 'stall' && a.level === 'caution');
          if (alert?.clear_since_s !== undefined) {
            // inside a clear stretch: either the stretch ends the event (at its first frame), or a rise restarted
            // it later and the event goes on over this frame
            expect(r.t_s - alert.clear_since_s).toBeLessThan(aircraft.thresholds.clearS);
            const since = alert.clear_since_s;
            expect(cautions.some((e) => r.t_s >= e.start_s && (r.t_s < e.end_s || e.end_s === since))).toBe(true);
            continue;
          }
          if (r.t_s === last) {
            // the data end: an alert still on is closed at this frame
            if (alert) expect(cautions.some((e) => e.end_s === last)).toBe(true);
            continue;
          }
          const covered = cautions.some((e) => r.t_s >= e.start_s && r.t_s < e.end_s);
          expect(covered).toBe(alert !== undefined);
        }
      }),
      { numRuns: 200 },
    );
  });
});
