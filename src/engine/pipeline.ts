/**
 * The live pipeline behind `watch`, `replay` and `demo`: source → recorder → decoder → frame engine → sinks.
 *
 * A source delivers raw lines and status. A live link's lines are decoded here; a replay's lines arrive already
 * judged by the replay stage (src/engine/replay.ts), which decodes them to pace them. Every rule about state
 * (smoothing, alerts, events, breaks) is the frame engine's: this module only tells it of the breaks the source
 * reports (link lost, reopened, a seek) and hands its records and events to the sinks.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { LimitEvent } from '../core/events.js';
import { createFrameEngine, type DataBreak, type FrameEngine } from '../core/frame-engine.js';
import type { MarginRecord } from '../core/margin-record.js';
import type { MarginOptions } from '../core/margins.js';
import { createFrameDecoder, type DecodedLine } from '../decode/frame-decoder.js';
import type { FileLine } from '../decode/read-frames.js';
import type { Recorder } from '../recording/recorder.js';
import type { LinkHealth } from '../sources/link-health.js';
import { createLinkHealthTracker } from '../sources/link-health-tracker.js';
import {
  systemClock,
  type Clock,
  type ReceivedLine,
  type SourceStatus,
  type TelemetrySource,
} from '../sources/source.js';

export interface PipelineSinks {
  record(rec: MarginRecord, line: DecodedLine): void;
  /** `where`: "line N" for a file, "line N (received <time>)" for a recording, "line N at <receive time>" live. */
  rejected(line: DecodedLine, where: string, reason: string, code?: string): void;
  eventStarted?(ev: LimitEvent): void;
  /** An event ended; `ended_by` says how. */
  eventEnded?(ev: LimitEvent): void;
  /**
   * After a replay sought back: the events of the data from the start of the file to the seek target, as `review`
   * lists them for that span (the list shown so far is replaced by this one).
   */
  eventsReset?(events: readonly LimitEvent[]): void;
  dataBreak?(brk: DataBreak): void;
  status?(s: SourceStatus): void;
}

export interface PipelineOptions {
  source: TelemetrySource;
  aircraft: Aircraft;
  margins?: Partial<MarginOptions>;
  recorder?: Recorder;
  sinks: PipelineSinks;
  clock?: Clock;
}

export interface Pipeline {
  start(): void;
  /** Resolves when a finite source has ended. */
  readonly ended: Promise<void>;
  /**
   * Stop the source, flush and close the recording, end the open events ("end_of_data", reported to
   * sinks.eventEnded); returns every limit event.
   */
  stop(): Promise<LimitEvent[]>;
  health(): LinkHealth;
}

function isoTime(ms: number): string {
  return new Date(ms).toISOString();
}

/** The stable code of a rejection, when the decoder gives one. */
function codeOf(verdict: { reason: string }): string | undefined {
  const code = (verdict as { code?: unknown }).code;
  return typeof code === 'string' ? code : undefined;
}

export function createPipeline(options: PipelineOptions): Pipeline {
  const clock = options.clock ?? systemClock;
  const { source, recorder, sinks } = options;
  const decoder = createFrameDecoder();
  const health = createLinkHealthTracker(source.label, clock());
  let opens = 0;
  let resolveEnded!: () => void;
  const ended = new Promise<void>((resolve) => (resolveEnded = resolve));
  let stopped = false;
  /** A replay is rebuilding the state up to a backward seek's target: the engine runs, the sinks hear nothing. */
  let catchingUp = false;

  const newEngine = (): FrameEngine =>
    createFrameEngine(options.aircraft, options.margins, {
      eventStarted: (ev) => {
        if (!catchingUp) sinks.eventStarted?.(ev);
      },
      eventEnded: (ev) => {
        if (!catchingUp) sinks.eventEnded?.(ev);
      },
      dataBreak: (brk) => {
        if (!catchingUp) sinks.dataBreak?.(brk);
      },
    });
  let engine = newEngine();

  function onLine(line: ReceivedLine): void {
    const decoded: (DecodedLine & Partial<Pick<FileLine, 'afterReconnect' | 'receivedAtMs'>>) | null =
      line.decoded ?? decoder.judgeLine(line);
    if (line.replayCatchUp === true) {
      if (decoded?.verdict.ok) engine.push(decoded.verdict.frame, decoded);
      return;
    }
    recorder?.writeLine(line); // before parsing: the recording holds every line received
    health.line(line.bytes.length, line.receivedAtMs);
    if (!decoded) return;
    const verdict = decoded.verdict;
    const where = (): string =>
      !line.decoded
        ? `line ${decoded.lineNo} at ${isoTime(line.receivedAtMs)}`
        : decoded.receivedAtMs !== undefined // a line replayed from a recording keeps its receive time
          ? `line ${decoded.lineNo} (received ${isoTime(decoded.receivedAtMs)})`
          : `line ${decoded.lineNo}`;
    if (!verdict.ok) {
      health.rejected(verdict.reason);
      sinks.rejected(decoded, where(), verdict.reason, codeOf(verdict));
      return;
    }
    const rec = engine.push(verdict.frame, decoded);
    if (rec === null) {
      const why = engine.rejection()!;
      health.rejected(why.reason);
      sinks.rejected(decoded, where(), why.reason, why.code);
      return;
    }
    health.accepted(verdict.frame.tS, line.receivedAtMs, decoded.newSegment === true);
    sinks.record(rec, decoded);
  }

  function onStatus(status: SourceStatus): void {
    if (status.kind === 'seek' && status.rewind === true) {
      // A replay goes back: what was shown ends here, and the state is rebuilt from the start of the file.
      engine.breakData('seek');
      engine = newEngine();
      catchingUp = true;
      return;
    }
    recorder?.writeStatus(status);
    health.status(status);
    if (status.kind === 'open') {
      opens += 1;
      if (opens > 1) {
        decoder.resetTime(); // the time check starts afresh after a reconnect
        engine.breakData('link_lost');
      }
    } else if (status.kind === 'seek') {
      engine.breakData('seek');
      if (catchingUp) {
        catchingUp = false;
        sinks.eventsReset?.(engine.events());
      }
    } else if (status.kind === 'lost') {
      engine.breakData('link_lost');
    }
    sinks.status?.(status);
    if (status.kind === 'ended') {
      engine.breakData('end_of_data'); // a replay's file ended: the open events end at its last frame
      resolveEnded();
    }
  }

  return {
    start() {
      source.start({ onLine, onStatus });
    },
    ended,
    async stop() {
      if (!stopped) {
        stopped = true;
        await source.stop();
        catchingUp = false;
        engine.finish();
        recorder?.writeStatus({ kind: 'ended', atMs: clock(), detail: 'monitor stopped' });
        recorder?.close();
      }
      return engine.events() as LimitEvent[];
    },
    health() {
      return health.snapshot(
        clock(),
        recorder ? { file: recorder.path, bytes: recorder.bytesWritten(), error: recorder.error() } : undefined,
      );
    },
  };
}
