/**
 * The soak run of the live path: hours of synthetic telemetry as bytes through the memory source (the same line
 * splitter as a serial or websocket link) → pipeline (decode, margins, events, link health) → what the dashboard
 * keeps (latest record, 10 s trail, bounded event log) → screen model and n–V plot model, as fast as possible.
 * Receive times come from a simulated clock that follows the data, so link health sees a real 50 Hz link.
 * Memory is sampled after a forced gc at each checkpoint, with the throughput of the chunk since the last one.
 */
import type { Aircraft } from '../src/core/aircraft.js';
import type { LimitEvent } from '../src/core/events.js';
import type { MarginRecord } from '../src/core/margin-record.js';
import { createPipeline } from '../src/engine/pipeline.js';
import { computeLayout, innerSize } from '../src/dashboard/layout.js';
import { buildPlotModel } from '../src/dashboard/plot-model.js';
import { rasterizePolyline } from '../src/dashboard/raster.js';
import { buildScreenModel, type ScreenInput } from '../src/dashboard/screen-model.js';
import { createTrail } from '../src/dashboard/trail.js';
import { openRecorder } from '../src/recording/recorder.js';
import { createMemorySource } from '../src/sources/memory.js';
import { headlessScreenInput } from './live-path.js';
import { syntheticFrameLine } from './synthetic-flight.js';

export interface SoakOptions {
  aircraft: Aircraft;
  frames: number;
  rateHz: number;
  /** Sample memory and throughput every this many frames. */
  checkpointEvery: number;
  /** Build the screen and plot models every this many frames (default: once per second of data). */
  redrawEvery?: number;
  /** Also record every received line to this file, as `watch --record` does. */
  recordPath?: string;
  onCheckpoint?(c: SoakCheckpoint): void;
}

export interface SoakCheckpoint {
  frames: number;
  /** Flight time covered so far, h. */
  flightH: number;
  rssMb: number;
  heapUsedMb: number;
  /** Frames per second of wall time over the chunk since the previous checkpoint. */
  chunkFramesPerS: number;
  wallS: number;
}

export interface SoakResult {
  checkpoints: SoakCheckpoint[];
  accepted: number;
  rejected: number;
  events: number;
  redraws: number;
  wallS: number;
  /** Bytes written to the recording (when recording). */
  recordedBytes?: number;
  recordingError?: string | null;
}

/** The dashboard keeps at most this many events (src/dashboard/index.ts: MAX_EVENTS). */
const EVENT_LOG_CAP = 500;
/** Lines per emitted chunk: a radio read carries a few frames; chunks here are split mid-line like real reads. */
const LINES_PER_READ = 8;

function sampleMemory(): { rssMb: number; heapUsedMb: number } {
  (globalThis as { gc?: () => void }).gc?.();
  const m = process.memoryUsage();
  return { rssMb: m.rss / 2 ** 20, heapUsedMb: m.heapUsed / 2 ** 20 };
}

const yieldToLoop = (): Promise<void> => new Promise((resolve) => setImmediate(resolve));

export async function runLiveSoak(options: SoakOptions): Promise<SoakResult> {
  const { aircraft, rateHz } = options;
  const redrawEvery = options.redrawEvery ?? Math.round(rateHz);
  const startMs = Date.UTC(2026, 0, 1);
  let nowMs = startMs;
  const clock = (): number => nowMs;
  const source = createMemorySource('synthetic telemetry', clock);
  const layout = computeLayout(120, 40);
  const plotInner = innerSize(layout.plot);
  const trail = createTrail();
  const eventLog = new Map<string, LimitEvent>();
  let latest: MarginRecord | null = null;
  let accepted = 0;
  let rejected = 0;
  let eventCount = 0;
  let redraws = 0;
  const logEvent = (ev: LimitEvent): void => {
    eventLog.set(`${ev.limit}:${ev.level}:${ev.start_s}`, ev);
    if (eventLog.size > EVENT_LOG_CAP) eventLog.delete(eventLog.keys().next().value!);
  };
  const recorder =
    options.recordPath === undefined
      ? undefined
      : openRecorder({ path: options.recordPath, force: true, sourceLabel: source.label, clock });
  const pipeline = createPipeline({
    source,
    aircraft,
    clock,
    ...(recorder ? { recorder } : {}),
    margins: { thresholds: aircraft.thresholds },
    sinks: {
      record(rec) {
        latest = rec;
        accepted += 1;
        trail.push({ tS: rec.t_s, tasMps: rec.tas_mps, n: rec.n_measured });
      },
      rejected: () => void (rejected += 1),
      eventStarted(ev) {
        eventCount += 1;
        logEvent(ev);
      },
      eventEnded: logEvent,
    },
  });

  function redraw(): void {
    const rec = latest;
    if (!rec) return;
    const input: ScreenInput = headlessScreenInput(
      aircraft,
      source.label,
      rec,
      [...eventLog.values()],
      pipeline.health(),
    );
    buildScreenModel(input, layout);
    const plot = buildPlotModel({
      aircraft,
      thresholds: aircraft.thresholds,
      conditions: { densityKgM3: rec.density_kg_m3, massKg: rec.mass_kg },
      trail: trail.points(),
      nowTS: rec.t_s,
      current: { tasMps: rec.tas_mps, n: rec.n_measured, level: rec.flying ? rec.level : 'normal' },
      stale: false,
      units: 'mps',
      cols: plotInner.width,
      rows: plotInner.height,
    });
    for (const line of plot.polylines) rasterizePolyline(line.points, line.dotEvery);
    redraws += 1;
  }

  pipeline.start();
  const checkpoints: SoakCheckpoint[] = [];
  const wallStart = performance.now();
  let chunkStart = wallStart;
  let chunkFrom = 0;
  let pending = '';
  let split = 0;
  for (let i = 0; i < options.frames; i++) {
    pending += syntheticFrameLine(i, rateHz) + '\n';
    if ((i + 1) % LINES_PER_READ === 0 || i === options.frames - 1) {
      nowMs = startMs + ((i + 1) * 1000) / rateHz;
      // Cut each read somewhere inside a line, as a serial driver does; the rest goes with the next read.
      split = (split + 37) % 61;
      const cut = Math.max(0, pending.length - 20 - split);
      source.emitData(pending.slice(0, cut));
      pending = pending.slice(cut);
    }
    if ((i + 1) % redrawEvery === 0) redraw();
    if ((i + 1) % 20_000 === 0) await yieldToLoop(); // let timers and gc run, as on a live event loop
    if ((i + 1) % options.checkpointEvery === 0 || i === options.frames - 1) {
      const now = performance.now();
      const frames = i + 1;
      const chunkFramesPerS = ((frames - chunkFrom) / (now - chunkStart)) * 1000;
      // Memory held, not memory in flight: the recorder's unflushed half-second goes to disk first.
      recorder?.flush();
      const mem = sampleMemory();
      const c: SoakCheckpoint = {
        frames,
        flightH: frames / rateHz / 3600,
        ...mem,
        chunkFramesPerS,
        wallS: (now - wallStart) / 1000,
      };
      checkpoints.push(c);
      options.onCheckpoint?.(c);
      chunkFrom = frames;
      chunkStart = performance.now(); // the gc is not charged to the next chunk
    }
  }
  source.emitData(pending);
  source.end();
  await pipeline.stop();
  const result: SoakResult = {
    checkpoints,
    accepted,
    rejected,
    events: eventCount,
    redraws,
    wallS: (performance.now() - wallStart) / 1000,
  };
  if (recorder) {
    result.recordedBytes = recorder.bytesWritten();
    result.recordingError = recorder.error();
  }
  return result;
}
