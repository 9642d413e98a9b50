/**
 * The reconnecting shell shared by the live adapters (serial, websocket): one connection at a time, lines split
 * per connection, a partial line flushed when the link drops, "link lost" and a retry with backoff, stop() that
 * cancels everything. The adapters only say how to open one connection.
 *
 * Lines are handed on in slices of at most SLICE_MS of the consumer's work, yielding to the event loop between
 * slices, so that a flood (a 1 MiB message of junk lines, a fast serial port) never keeps timers (the recorder's
 * flush, the dashboard), signals or other sockets waiting. While a backlog is waiting the connection is paused
 * (the sender is held back by the transport), so memory stays bounded.
 */
import { performance } from 'node:perf_hooks';
import { createLineSplitter, type RawLine } from '../decode/line-splitter.js';
import { readLineList, readMessageLines, type MessageLines } from './message-lines.js';
import {
  reconnectDelayMs,
  systemClock,
  type Clock,
  type SourceHandlers,
  type SourceStatus,
  type TelemetrySource,
} from './source.js';

/** Most consumer time spent on lines before yielding to the event loop, ms. */
export const SLICE_MS = 20;
/** Received bytes waiting to be handed on beyond which the connection is paused. */
export const MAX_BACKLOG_BYTES = 256 * 1024;

export interface ConnectionEvents {
  /** `listening`: a connectionless link (UDP) is ready to receive; no sender is known to be there. */
  opened(detail?: string, listening?: boolean): void;
  /**
   * Bytes received. `messageEnd`: the bytes are one complete message of a message-based link (websocket,
   * datagram): its last line needs no newline, and a partial line never carries over to the next message.
   */
  data(chunk: Buffer, messageEnd?: boolean): void;
  /** The connection ended or could not be made. Only the first call per connection counts; later ones are ignored. */
  dropped(detail: string): void;
  /** The sender ended the stream normally (e.g. websocket close 1000): 'ended', no retry. */
  ended(detail: string): void;
}

export interface Connection {
  /** Close deliberately; resolves when released. */
  close(): Promise<void>;
  /** Stop reading while a backlog is handed on (optional: a link without flow control just keeps delivering). */
  pause?(): void;
  resume?(): void;
}

export type Connect = (events: ConnectionEvents) => Connection;

export interface LinkSourceOptions {
  clock?: Clock;
  /** Delay before retry number `attempt` (tests may shorten it). */
  retryDelayMs?: (attempt: number) => number;
}

type Pending =
  | { kind: 'lines'; lines: MessageLines; receivedAtMs: number; bytes: number }
  | { kind: 'status'; status: SourceStatus };

export function createLinkSource(label: string, connect: Connect, options: LinkSourceOptions = {}): TelemetrySource {
  const clock = options.clock ?? systemClock;
  const retryDelay = options.retryDelayMs ?? reconnectDelayMs;
  let handlers: SourceHandlers | undefined;
  let stopped = false;
  let attempt = 0;
  let retryTimer: NodeJS.Timeout | undefined;
  let current: Connection | undefined;
  let currentSplitter: ReturnType<typeof createLineSplitter> | undefined;
  // Retries after a loss are silent: one 'lost' per outage, not one per failed attempt.
  let reportedLost = false;

  // Everything for the consumer goes through one queue, so lines and status changes keep their order.
  const queue: Pending[] = [];
  let backlogBytes = 0;
  let drainScheduled = false;
  let paused: Connection | undefined;
  let draining = false;

  const drain = (budgetMs: number): void => {
    if (draining) return; // a handler that makes the link deliver more: the running drain takes it
    draining = true;
    const until = performance.now() + budgetMs;
    let count = 0;
    try {
      while (queue.length > 0) {
        const item = queue[0]!;
        if (item.kind === 'status') {
          queue.shift();
          handlers?.onStatus(item.status);
          continue;
        }
        const line = item.lines.next();
        if (line === null) {
          queue.shift();
          backlogBytes -= item.bytes;
          continue;
        }
        handlers?.onLine({ bytes: line.bytes, cut: line.cut, receivedAtMs: item.receivedAtMs });
        if ((++count & 31) === 0 && performance.now() >= until) break;
      }
    } finally {
      draining = false;
    }
    if (queue.length > 0) {
      if (!drainScheduled) {
        drainScheduled = true;
        setImmediate(() => {
          drainScheduled = false;
          if (!stopped) drain(SLICE_MS);
        });
      }
    } else if (paused) {
      const conn = paused;
      paused = undefined;
      conn.resume?.();
    }
  };

  const enqueue = (item: Pending, conn?: Connection): void => {
    queue.push(item);
    if (item.kind === 'lines') {
      backlogBytes += item.bytes;
      if (conn && backlogBytes > MAX_BACKLOG_BYTES && !paused && conn.pause) {
        paused = conn;
        conn.pause();
      }
    }
    // Nothing waiting before it: hand it on now (no added latency), within one slice.
    if (!drainScheduled && !draining) drain(SLICE_MS);
  };

  const enqueueLines = (lines: RawLine[], receivedAtMs: number): void => {
    if (lines.length > 0) enqueue({ kind: 'lines', lines: readLineList(lines), receivedAtMs, bytes: 0 });
  };

  const status = (s: SourceStatus): void => enqueue({ kind: 'status', status: s });

  function open(): void {
    if (stopped) return;
    if (!reportedLost) status({ kind: 'connecting', atMs: clock(), detail: label });
    const splitter = createLineSplitter();
    currentSplitter = splitter;
    let done = false;
    let conn: Connection | undefined;
    const events: ConnectionEvents = {
      opened(detail, listening) {
        if (done || stopped) return;
        attempt = 0;
        reportedLost = false;
        handlers?.onStatus({
          kind: 'open',
          atMs: clock(),
          ...(detail === undefined ? {} : { detail }),
          ...(listening ? { listening } : {}),
        });
      },
      data(chunk, messageEnd) {
        if (done || stopped) return;
        const receivedAtMs = clock();
        if (messageEnd) {
          // A message ends any partial line: whatever a stream part left unterminated is a line of its own.
          enqueueLines(splitter.end(), receivedAtMs);
          enqueue({ kind: 'lines', lines: readMessageLines(chunk), receivedAtMs, bytes: chunk.length }, conn);
        } else {
          const lines = splitter.push(chunk);
          if (lines.length > 0)
            enqueue({ kind: 'lines', lines: readLineList(lines), receivedAtMs, bytes: chunk.length }, conn);
        }
      },
      ended(detail) {
        if (done || stopped) return;
        done = true;
        if (paused === conn) paused = undefined;
        enqueueLines(splitter.end(), clock());
        status({ kind: 'ended', atMs: clock(), ...(detail === undefined ? {} : { detail }) });
      },
      dropped(detail) {
        if (done) return;
        done = true;
        if (paused === conn) paused = undefined;
        if (stopped) return;
        enqueueLines(splitter.end(), clock());
        if (!reportedLost) status({ kind: 'lost', atMs: clock(), detail });
        reportedLost = true;
        const delay = retryDelay(attempt);
        attempt += 1;
        retryTimer = setTimeout(() => {
          retryTimer = undefined;
          open();
        }, delay);
      },
    };
    try {
      conn = connect(events);
      current = conn;
    } catch (err) {
      events.dropped((err as Error).message);
    }
  }

  return {
    label,
    start(h) {
      handlers = h;
      open();
    },
    async stop() {
      stopped = true;
      if (retryTimer) clearTimeout(retryTimer);
      retryTimer = undefined;
      const conn = current;
      current = undefined;
      paused = undefined;
      await conn?.close().catch(() => undefined);
      // Lines received before the stop are data received: hand them all on, then any partial line (it will be
      // judged a truncated line).
      drain(Number.POSITIVE_INFINITY);
      if (currentSplitter) for (const l of currentSplitter.end()) handlers?.onLine({ ...l, receivedAtMs: clock() });
      currentSplitter = undefined;
      handlers = undefined;
    },
  };
}
