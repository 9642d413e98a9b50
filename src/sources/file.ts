/**
 * File adapter: plays a recording, NDJSON or CSV log paced by its t_s (speed 1 = real time, 0 = as fast as
 * possible), with a replay transport (pause, speed, seek). Lines come out already judged (the pacing needs t_s).
 * Flight time ("position") advances by the t_s steps between accepted frames; a clock restart adds no time.
 */
import { readFrameFile, type FileLine } from '../decode/read-frames.js';
import {
  systemClock,
  type Clock,
  type ReplayState,
  type ReplayTransport,
  type SourceHandlers,
  type TelemetrySource,
} from './source.js';

export interface FileSourceOptions {
  path: string;
  mappingPath?: string;
  /** 1 = real time (default), 0 = as fast as possible. */
  speed?: number;
  /** Scan the file once first to know its length (for a transport display). */
  scanLength?: boolean;
  /** Start again at the end instead of ending (the demo). */
  loop?: boolean;
  clock?: Clock;
}

export interface FileSource extends TelemetrySource, ReplayTransport {
  /** Resolves with the flight length once scanned (null when not scanned). */
  length(): Promise<number | null>;
}

/** Lines delivered between two yields to the event loop when not waiting (speed 0), so signals and keys get through. */
const BATCH_LINES = 256;

function stepS(line: FileLine, previousTS: number | undefined): number {
  if (!line.verdict.ok || previousTS === undefined || line.newSegment || line.afterReconnect) return 0;
  return Math.max(0, line.verdict.frame.tS - previousTS);
}

export async function scanFlightLengthS(path: string, mappingPath?: string): Promise<number> {
  let lengthS = 0;
  let previous: number | undefined;
  for await (const line of readFrameFile(path, mappingPath !== undefined ? { mappingPath } : {})) {
    if (!line.verdict.ok) continue;
    lengthS += stepS(line, previous);
    previous = line.verdict.frame.tS;
  }
  return lengthS;
}

export function createFileSource(options: FileSourceOptions): FileSource {
  const clock = options.clock ?? systemClock;
  const readOptions = options.mappingPath !== undefined ? { mappingPath: options.mappingPath } : {};
  let handlers: SourceHandlers | undefined;
  let speed = options.speed ?? 1;
  let paused = false;
  let stopped = false;
  let positionS = 0;
  let lengthS: number | null = null;
  let seekTargetS: number | undefined;
  let wake: (() => void) | undefined;
  let loopDone: Promise<void> = Promise.resolve();
  /** The play loop is running (false once the file has ended without --loop, until a seek restarts it). */
  let playing = false;
  const startPlaying = (): void => {
    playing = true;
    loopDone = play().finally(() => {
      playing = false;
    });
  };
  // Pacing anchor: flight time `anchorS` was due at wall time `anchorMs`.
  let anchorS = 0;
  let anchorMs = 0;

  const lengthPromise: Promise<number | null> = options.scanLength
    ? scanFlightLengthS(options.path, options.mappingPath).then(
        (s) => (lengthS = s),
        () => null,
      )
    : Promise.resolve(null);

  const reanchor = (): void => {
    anchorS = positionS;
    anchorMs = clock();
  };
  const poke = (): void => {
    const w = wake;
    wake = undefined;
    w?.();
  };
  const sleep = (ms: number): Promise<void> =>
    new Promise((resolve) => {
      const timer = setTimeout(() => {
        wake = undefined;
        resolve();
      }, ms);
      wake = () => {
        clearTimeout(timer);
        resolve();
      };
    });

  async function waitUntilDue(targetS: number): Promise<void> {
    for (;;) {
      if (stopped || seekTargetS !== undefined) return;
      if (paused) {
        await sleep(3_600_000);
        continue;
      }
      if (speed <= 0) return;
      const dueMs = anchorMs + ((targetS - anchorS) / speed) * 1000;
      const waitMs = dueMs - clock();
      if (waitMs <= 1) return;
      await sleep(Math.min(waitMs, 1000));
    }
  }

  async function play(): Promise<void> {
    let skipUntilS: number | undefined;
    for (;;) {
      let previous: number | undefined;
      let flightS = 0;
      let sinceYield = 0;
      let restart = false;
      reanchor();
      try {
        for await (const line of readFrameFile(options.path, readOptions)) {
          if (stopped) return;
          const step = stepS(line, previous);
          if (line.verdict.ok) previous = line.verdict.frame.tS;
          flightS += step;
          if (seekTargetS !== undefined) {
            const target = seekTargetS;
            seekTargetS = undefined;
            handlers?.onStatus({ kind: 'seek', atMs: clock(), detail: `to ${target.toFixed(1)} s` });
            if (target < flightS) {
              skipUntilS = target;
              restart = true;
              break;
            }
            skipUntilS = target;
          }
          if (skipUntilS !== undefined) {
            if (flightS < skipUntilS) {
              if (++sinceYield >= BATCH_LINES * 16) {
                sinceYield = 0;
                await new Promise((r) => setImmediate(r));
              }
              continue;
            }
            skipUntilS = undefined;
            positionS = flightS;
            reanchor();
          }
          if (line.verdict.ok) await waitUntilDue(flightS);
          if (stopped) return;
          const pending = seekTargetS as number | undefined; // may have been set by a key while waiting
          if (pending !== undefined && pending < flightS) {
            // A backward seek while waiting: this line is not played.
            const target = pending;
            seekTargetS = undefined;
            handlers?.onStatus({ kind: 'seek', atMs: clock(), detail: `to ${target.toFixed(1)} s` });
            skipUntilS = target;
            restart = true;
            break;
          }
          positionS = Math.max(positionS, flightS);
          handlers?.onLine({ bytes: Buffer.from(line.text, 'utf8'), receivedAtMs: clock(), cut: false, decoded: line });
          if (++sinceYield >= BATCH_LINES) {
            sinceYield = 0;
            await new Promise((r) => setImmediate(r));
          }
        }
      } catch (err) {
        if (!stopped)
          handlers?.onStatus({ kind: 'ended', atMs: clock(), detail: `read error: ${(err as Error).message}` });
        return;
      }
      if (stopped) return;
      if (restart) {
        positionS = skipUntilS ?? 0;
        continue;
      }
      if (lengthS === null) lengthS = flightS;
      if (options.loop) {
        positionS = 0;
        skipUntilS = undefined;
        handlers?.onStatus({ kind: 'seek', atMs: clock(), detail: 'loop to the start' });
        continue;
      }
      handlers?.onStatus({ kind: 'ended', atMs: clock() });
      return;
    }
  }

  const source: FileSource = {
    label: `file ${options.path}`,
    start(h) {
      handlers = h;
      h.onStatus({ kind: 'open', atMs: clock(), detail: options.path });
      startPlaying();
    },
    async stop() {
      stopped = true;
      poke();
      await loopDone.catch(() => undefined);
      handlers = undefined;
    },
    pause() {
      paused = true;
    },
    resume() {
      if (!paused) return;
      paused = false;
      reanchor();
      poke();
    },
    togglePause() {
      if (paused) source.resume();
      else source.pause();
    },
    setSpeed(s) {
      speed = Math.max(0, s);
      reanchor();
      poke();
    },
    seekBy(deltaS) {
      const from = seekTargetS ?? positionS;
      let target = Math.max(0, from + deltaS);
      if (lengthS !== null) target = Math.min(target, lengthS);
      seekTargetS = target;
      positionS = target;
      reanchor();
      poke();
      // After the end of the file a seek plays again from the target.
      if (!playing && !stopped && handlers) startPlaying();
    },
    state(): ReplayState {
      return { positionS, lengthS, speed, paused };
    },
    length: () => lengthPromise,
  };
  return source;
}
