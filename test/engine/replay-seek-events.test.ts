import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { LimitEvent } from '../../src/core/events.js';
import { createPipeline } from '../../src/engine/pipeline.js';
import { createReplay } from '../../src/engine/replay.js';
import type { SourceStatus } from '../../src/sources/source.js';
import { exampleAirframe } from '../helpers/airframes.js';

const dir = mkdtempSync(join(tmpdir(), 'tm-seek-events-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

// At 12 m/s TAS, sea level ISA, the example airframe's n_stall = q·S·CLmax/W = 88.2·0.55·1.2/31.381 = 1.85499
// (hand computation; Anderson ch. 6 relation). Stall utilization u ↔ nz = u·1.85499; caution at 0.80 (default).
const N_STALL_12 = 1.85499;

/** Frames every 0.25 s (exact in binary, so flight positions add up exactly) at stall utilization u. */
function stretch(fromS: number, toS: number, u: number): string[] {
  const out: string[] = [];
  for (let t = fromS; t <= toS; t += 0.25)
    out.push(JSON.stringify({ t_s: t, tas_mps: 12, alt_m: 0, nz: u * N_STALL_12 }));
  return out;
}

describe('replay seeks and the exceedance list', () => {
  it('holds each event once after seeking back into an event: the events of the data up to the target', async () => {
    const path = join(dir, 'two-turns.ndjson');
    const lines = [
      ...stretch(0, 0.75, 0.5),
      ...stretch(1, 2.75, 0.85), // stall caution 1 … 3
      ...stretch(3, 5.75, 0.5),
      ...stretch(6, 7.75, 0.85), // stall caution 6 … 8
      ...stretch(8, 9.75, 0.5),
    ];
    writeFileSync(path, lines.join('\n') + '\n');
    // The dashboard's list: events by (limit, level, start), replaced wholesale on a reset.
    const list = new Map<string, LimitEvent>();
    const show = (ev: LimitEvent): void => void list.set(`${ev.limit}:${ev.level}:${ev.start_s}`, ev);
    const statuses: SourceStatus[] = [];
    const replay = createReplay({ path, speed: 0 });
    const pipeline = createPipeline({
      source: replay,
      aircraft: exampleAirframe(),
      margins: { smoothTauS: 0 },
      sinks: {
        record: () => undefined,
        rejected: () => undefined,
        eventStarted: show,
        eventEnded: show,
        eventsReset(events) {
          list.clear();
          for (const ev of events) show(ev);
        },
        status: (s) => statuses.push(s),
      },
    });
    const endings = (): number => statuses.filter((s) => s.kind === 'ended').length;
    pipeline.start();
    await expect.poll(endings, { timeout: 5000 }).toBe(1);
    const rows = () => [...list.values()].map((e) => [e.level, e.start_s, e.end_s, e.ended_by]);
    expect(rows()).toEqual([
      ['caution', 1, 3, 'cleared'],
      ['caution', 6, 8, 'cleared'],
    ]);

    // From the end (9.75 s of flight) back to 7.0 s, inside the second event, then on to the end again.
    replay.seekBy(-2.75);
    await expect.poll(endings, { timeout: 5000 }).toBe(2);
    // The seek is a break: the event of the data up to the target ends at its last frame (6.75), and the alert,
    // still on at 7.0, starts a new event there. The first pass's 6 … 8 is gone, not kept beside them.
    expect(rows()).toEqual([
      ['caution', 1, 3, 'cleared'],
      ['caution', 6, 6.75, 'seek'],
      ['caution', 7, 8, 'cleared'],
    ]);
    const all = await pipeline.stop();
    expect(all.map((e) => [e.level, e.start_s, e.end_s, e.ended_by])).toEqual(rows());
  });
});
