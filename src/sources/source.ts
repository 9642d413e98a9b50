/**
 * The one interface every telemetry source implements (serial, websocket, file, memory).
 *
 * Contract:
 * - start(handlers) is called once. From then on the source delivers, in order and synchronously through the
 *   handlers: raw lines (onLine) and status changes (onStatus). Handlers must not throw; the source does not catch.
 * - Lines are the bytes between LF (the LF removed, a CR kept: exactly what was received), never longer than the
 *   64 KiB cap (a runaway line comes out cut and flagged). Empty lines are not delivered. When a link drops with a
 *   partial line in progress, that partial line is delivered before the 'lost' status, so nothing received is lost.
 * - Status: 'connecting' (trying to open), 'open' (connected; after a reconnect the consumer restarts its time
 *   check), 'lost' (the link dropped or could not be opened; a live source retries by itself with backoff — first
 *   retry within 0.5 s, then doubling, capped at 2 s), 'ended' (a finite source has delivered everything; nothing
 *   follows), 'seek' (a replay jumped: a break in the data; see `rewind`).
 *   Errors never escape as exceptions or unhandled 'error' events: they arrive as 'lost' with a detail.
 * - stop() closes the link and cancels any retry; it resolves once the resources are released. No handler is called
 *   after stop() resolves. A live source (serial, websocket) never ends by itself.
 */
import type { DecodedLine } from '../decode/frame-decoder.js';

export interface ReceivedLine {
  /** The line's bytes as received (without LF). */
  bytes: Buffer;
  /** Receive time, ms since the epoch (from the source's injected clock). */
  receivedAtMs: number;
  /** The line was longer than the cap and was cut. */
  cut: boolean;
  /**
   * Set by the replay stage (src/engine/replay.ts), which decodes a file's lines to pace them: the already judged
   * line, with its number in the file. The pipeline uses it instead of decoding again. Sources never set it.
   */
  decoded?: DecodedLine;
  /**
   * Set by the replay stage after a backward seek: a line before the target, replayed without pause so the frame
   * engine rebuilds the state there. Not shown, recorded or counted.
   */
  replayCatchUp?: boolean;
}

export type SourceStatusKind = 'connecting' | 'open' | 'lost' | 'ended' | 'seek';

export interface SourceStatus {
  kind: SourceStatusKind;
  atMs: number;
  /** Human detail: why the link was lost, where it connected to. */
  detail?: string;
  /**
   * With 'seek': the replay goes back (a backward seek, or a loop to the start). Lines flagged `replayCatchUp` then
   * rebuild the state up to the target, and a plain 'seek' marks the target.
   */
  rewind?: boolean;
}

export interface SourceHandlers {
  onLine(line: ReceivedLine): void;
  onStatus(status: SourceStatus): void;
}

export interface TelemetrySource {
  /** Human description, e.g. "serial /dev/ttyUSB0 @ 57600". */
  readonly label: string;
  start(handlers: SourceHandlers): void;
  stop(): Promise<void>;
}

/** Replay transport, offered by the file source (the dashboard's pause, speed and seek keys). */
export interface ReplayTransport {
  pause(): void;
  resume(): void;
  togglePause(): void;
  /** Playback speed: 1 = real time, 0 = as fast as possible. */
  setSpeed(speed: number): void;
  /** Jump by deltaS seconds of flight time (negative = back). Clamped to the flight. */
  seekBy(deltaS: number): void;
  state(): ReplayState;
}

export interface ReplayState {
  /** Flight time played so far, s. */
  positionS: number;
  /** Flight length, s (null until the file has been scanned). */
  lengthS: number | null;
  speed: number;
  paused: boolean;
}

/** Clock used by sources and the pipeline; injected so tests and pure parts never read the wall clock directly. */
export type Clock = () => number;

export const systemClock: Clock = () => Date.now();

/**
 * Reconnect delays: first retry within 0.5 s, doubling, capped at 2 s. `attempt` counts failures since the last
 * successful open (0 = first retry).
 */
export function reconnectDelayMs(attempt: number): number {
  return Math.min(2000, 250 * 2 ** Math.min(attempt, 4));
}
