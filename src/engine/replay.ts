/**
 * The replay stage: file source (raw lines) → decoder (the file line judge) → pacing by t_s (speed 1 = real time,
 * 0 = as fast as possible) → the pipeline, with a transport (pause, speed, seek). To the pipeline it is a source of
 * already judged lines (ReceivedLine.decoded), so the file is decoded once.
 *
 * Flight time ("position") advances by the t_s steps between accepted frames; a clock restart or a reconnect adds
 * no time. Seeks are breaks in the data (status 'seek'). Going back (a backward seek, a loop) replays the lines before
 * the target flagged `replayCatchUp` after a 'seek' with `rewind`, so that the frame engine holds the events of the
 * data up to the target, as `review` lists them for that span, and none twice.
 */
import { createLineReader, readFrameFile, type FileLine } from '../decode/read-frames.js';
import { createFileLineSource } from '../sources/file.js';
import {
  systemClock,
  type Clock,
  type ReplayState,
  type ReplayTransport,
  type SourceHandlers,
  type TelemetrySource,
} from '../sources/source.js';

export interface ReplayOptions {
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

export interface Replay extends TelemetrySource, ReplayTransport {
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

const yieldToLoop = (): Promise<void> => new Promise((r) => setImmediate(r));

export function createReplay(options: ReplayOptions): Replay {
  const clock = options.clock ?? systemClock;
  const file = createFileLineSource(options.path);
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
  const startPlaying = (rewindTo?: number): void => {
    playing = true;
    loopDone = play(rewindTo).finally(() => {
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
  const seekStatus = (detail: string, rewind: boolean): void =>
    handlers?.onStatus(
      rewind ? { kind: 'seek', atMs: clock(), detail, rewind } : { kind: 'seek', atMs: clock(), detail },
    );

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

  /** Play the file; `rewindTo`: start by rebuilding the state up to that flight time (lines flagged catch-up). */
  async function play(rewindTo?: number): Promise<void> {
    let skipUntilS: number | undefined;
    /** Lines before skipUntilS are replayed as catch-up (going back), not dropped (going forward). */
    let rewinding = false;
    if (rewindTo !== undefined) {
      seekStatus(`to ${rewindTo.toFixed(1)} s`, true);
      skipUntilS = rewindTo;
      rewinding = true;
    }
    const reachedTarget = (): void => {
      if (rewinding) seekStatus(`to ${(skipUntilS ?? 0).toFixed(1)} s`, false);
      rewinding = false;
      skipUntilS = undefined;
    };
    for (;;) {
      const decoder = createLineReader(options.path, options.mappingPath, true);
      let previous: number | undefined;
      let flightS = 0;
      let sinceYield = 0;
      let restart = false;
      reanchor();
      try {
        reading: for await (const batch of file.batches()) {
          for (const physical of batch) {
            if (stopped) return;
            const line = decoder.judge(physical) as FileLine | null;
            if (line === null) continue;
            const step = stepS(line, previous);
            if (line.verdict.ok) previous = line.verdict.frame.tS;
            flightS += step;
            if (seekTargetS !== undefined) {
              const target = seekTargetS;
              seekTargetS = undefined;
              if (target < flightS) {
                seekStatus(`to ${target.toFixed(1)} s`, true);
                skipUntilS = target;
                rewinding = true;
                restart = true;
                break reading;
              }
              if (!rewinding) seekStatus(`to ${target.toFixed(1)} s`, false);
              skipUntilS = target;
            }
            if (skipUntilS !== undefined) {
              if (flightS < skipUntilS) {
                if (rewinding) handlers?.onLine(deliverable(line, true));
                if (++sinceYield >= BATCH_LINES * 16) {
                  sinceYield = 0;
                  await yieldToLoop();
                }
                continue;
              }
              reachedTarget();
              positionS = flightS;
              reanchor();
            }
            if (line.verdict.ok) await waitUntilDue(flightS);
            if (stopped) return;
            const pending = seekTargetS as number | undefined; // may have been set by a key while waiting
            if (pending !== undefined && pending < flightS) {
              // A backward seek while waiting: this line is not played.
              seekTargetS = undefined;
              seekStatus(`to ${pending.toFixed(1)} s`, true);
              skipUntilS = pending;
              rewinding = true;
              restart = true;
              break reading;
            }
            positionS = Math.max(positionS, flightS);
            handlers?.onLine(deliverable(line, false));
            if (++sinceYield >= BATCH_LINES) {
              sinceYield = 0;
              await yieldToLoop();
            }
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
      if (skipUntilS !== undefined) reachedTarget(); // the target lay beyond the last frame
      if (lengthS === null) lengthS = flightS;
      if (options.loop) {
        positionS = 0;
        seekStatus('loop to the start', true);
        skipUntilS = 0;
        rewinding = true;
        continue;
      }
      handlers?.onStatus({ kind: 'ended', atMs: clock() });
      return;
    }
  }

  const deliverable = (line: FileLine, catchUp: boolean) => {
    const out = { bytes: Buffer.from(line.text, 'utf8'), receivedAtMs: clock(), cut: false, decoded: line };
    return catchUp ? { ...out, replayCatchUp: true } : out;
  };

  const replay: Replay = {
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
      if (paused) replay.resume();
      else replay.pause();
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
      positionS = target;
      reanchor();
      poke();
      if (!playing && !stopped && handlers) {
        // After the end of the file a seek plays again from the target, the state rebuilt up to it.
        startPlaying(target);
        return;
      }
      seekTargetS = target;
    },
    state(): ReplayState {
      return { positionS, lengthS, speed, paused };
    },
    length: () => lengthPromise,
  };
  return replay;
}
