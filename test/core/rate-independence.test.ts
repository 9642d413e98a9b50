import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { createEventTracker, type LimitEvent } from '../../src/core/events.js';
import type { Frame } from '../../src/core/frame.js';
import { createMarginTracker } from '../../src/core/margins.js';
import { createFrameWriter } from '../../src/sim/frames.js';
import { parseFlightPlan, type FlightPlan } from '../../src/sim/plan.js';
import { simulateFlight } from '../../src/sim/point-mass.js';
import { airframe, DEMO_AIRFRAME_PATH } from '../helpers/airframes.js';

// The invented demo airframe (replays/demo-airframe.json, vne 32 m/s CAS) flies an invented card with
// measurement noise on nz and airspeed: a slow approach near the stall (stall caution), an unsustainable steep turn
// (thrust and structure cautions) and a fast descent past vne (speed caution and warning). The same plan at
// 10, 50, 200 and 1000 frames/s must give the same events: smoothing n and TAS with one time constant and
// switching an alert off only after a clear stretch in frame time make the count independent of the rate. (With
// this noise, TAS taken raw gives 8–9 events depending on the rate, and raw TAS without the clear stretch 13 at
// 10 frames/s and 850 at 1000.)
const aircraft = airframe(JSON.parse(readFileSync(DEMO_AIRFRAME_PATH, 'utf8')));

function plan(): FlightPlan {
  const result = parseFlightPlan(
    {
      name: 'rate-independence card (invented)',
      start: { alt_m: 300, tas_mps: 18 },
      noise: { nz_sd: 0.04, airspeed_sd_mps: 0.2 },
      segments: [
        { type: 'straight', duration_s: 4 },
        { type: 'speed_change', duration_s: 10, to_tas_mps: 10.3 },
        { type: 'straight', duration_s: 6, tas_mps: 10.3 },
        { type: 'speed_change', duration_s: 10, to_tas_mps: 21 },
        { type: 'turn', duration_s: 6, bank_deg: -70 },
        { type: 'straight', duration_s: 8, tas_mps: 20 },
        { type: 'straight', duration_s: 12, tas_mps: 33.5, vertical_speed_mps: -9 },
        { type: 'straight', duration_s: 10, tas_mps: 20 },
      ],
    },
    'card.json',
  );
  if (!result.ok) throw new Error(result.problems.join('\n'));
  return result.value;
}

function eventsAt(rateHz: number): LimitEvent[] {
  const p = plan();
  const write = createFrameWriter(aircraft, p, { seed: 7 });
  const margins = createMarginTracker(aircraft);
  const events = createEventTracker();
  for (const sample of simulateFlight(aircraft, p, { rateHz })) {
    const w = write(sample);
    const frame: Frame = {
      tS: w['t_s'] as number,
      airspeedKind: 'tas',
      airspeedMps: w['tas_mps'] as number,
      altM: w['alt_m'] as number,
      bankDeg: w['bank_deg'] as number,
      nz: w['nz'] as number,
    };
    events.push(margins.push(frame));
  }
  return events.finish();
}

describe('events do not depend on the sample rate', () => {
  it('gives the same events for the same noisy flight at 10, 50, 200 and 1000 frames/s', () => {
    const byRate = [10, 50, 200, 1000].map((rateHz) => ({ rateHz, events: eventsAt(rateHz) }));
    const reference = byRate[0]!.events;
    // The card raises each kind it was written for.
    const kinds = new Set(reference.map((e) => `${e.limit}:${e.level}`));
    for (const k of ['stall:caution', 'thrust:caution', 'structure:caution', 'speed:caution', 'speed:warning'])
      expect(kinds).toContain(k);
    for (const { events } of byRate) {
      expect(events.map((e) => `${e.limit}:${e.level}`)).toEqual(reference.map((e) => `${e.limit}:${e.level}`));
      // Start and end agree to within the coarsest frame interval plus the noise's effect on the crossing.
      events.forEach((e, i) => {
        expect(Math.abs(e.start_s - reference[i]!.start_s)).toBeLessThan(0.5);
        expect(Math.abs(e.end_s - reference[i]!.end_s)).toBeLessThan(0.5);
      });
    }
  });
});
