/**
 * The live path, headless, for benchmarks and soak runs: bytes → memory source → pipeline (recorder-less decode,
 * margins, events, link health) → dashboard screen model. `push` handles one chunk of bytes and returns when the
 * screen model for the newest record has been built, as the dashboard would on its next redraw.
 */
import type { Aircraft } from '../src/core/aircraft.js';
import type { LimitEvent } from '../src/core/events.js';
import type { MarginRecord } from '../src/core/margin-record.js';
import { createPipeline } from '../src/engine/pipeline.js';
import { computeLayout } from '../src/dashboard/layout.js';
import { buildPlotModel } from '../src/dashboard/plot-model.js';
import { buildScreenModel, type ScreenInput } from '../src/dashboard/screen-model.js';
import { createMemorySource } from '../src/sources/memory.js';
import type { LinkHealth } from '../src/sources/link-health.js';

/** The dashboard's input for a live (not replayed) source seen right now, as the benchmarks build it. */
export function headlessScreenInput(
  aircraft: Aircraft,
  sourceLabel: string,
  record: MarginRecord | null,
  events: readonly LimitEvent[],
  link: LinkHealth,
): ScreenInput {
  return {
    aircraftName: aircraft.name,
    thresholds: aircraft.thresholds,
    sourceLabel,
    record,
    events,
    link,
    replay: null,
    isReplay: false,
    ageS: 0,
    units: 'mps',
    muted: true,
    error: null,
  };
}

export interface LivePath {
  push(chunk: string): void;
  /** Build the n–V plot model as a redraw would (at most 20 per second on screen). */
  renderPlot(): void;
  accepted(): number;
  eventCount(): number;
  stop(): Promise<void>;
}

export function createLivePath(aircraft: Aircraft, options: { buildScreenPerFrame?: boolean } = {}): LivePath {
  const perFrame = options.buildScreenPerFrame ?? true;
  const source = createMemorySource('bench');
  const layout = computeLayout(120, 40);
  let latest: MarginRecord | null = null;
  let accepted = 0;
  const events: LimitEvent[] = [];
  const pipeline = createPipeline({
    source,
    aircraft,
    sinks: {
      record(rec) {
        latest = rec;
        accepted++;
      },
      rejected() {},
      eventStarted(ev) {
        events.push(ev);
        if (events.length > 200) events.shift(); // the dashboard's log is bounded too
      },
    },
  });
  pipeline.start();
  const screenInput = (): ScreenInput => headlessScreenInput(aircraft, 'bench', latest, events, pipeline.health());
  return {
    push(chunk) {
      source.emitData(chunk);
      if (perFrame) buildScreenModel(screenInput(), layout);
    },
    renderPlot() {
      const rec = latest;
      if (!rec) return;
      buildPlotModel({
        aircraft,
        thresholds: aircraft.thresholds,
        conditions: { densityKgM3: rec.density_kg_m3, massKg: rec.mass_kg },
        trail: [],
        nowTS: rec.t_s,
        current: { tasMps: rec.tas_mps, n: rec.n_measured, level: rec.level },
        stale: false,
        units: 'mps',
        cols: layout.plot.width - 2,
        rows: layout.plot.height - 2,
      });
    },
    accepted: () => accepted,
    eventCount: () => events.length,
    async stop() {
      await pipeline.stop();
    },
  };
}
