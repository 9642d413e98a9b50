/**
 * The reconnecting shell shared by the live adapters (serial, websocket): one connection at a time, lines split
 * per connection, a partial line flushed when the link drops, "link lost" and a retry with backoff, stop() that
 * cancels everything. The adapters only say how to open one connection.
 */
import { createLineSplitter, type RawLine } from '../decode/line-splitter.js';
import { reconnectDelayMs, systemClock, type Clock, type SourceHandlers, type TelemetrySource } from './source.js';

export interface ConnectionEvents {
  /** `listening`: a connectionless link (UDP) is ready to receive; no sender is known to be there. */
  opened(detail?: string, listening?: boolean): void;
  /** Bytes received. `messageEnd`: a message-based link finished a message (see flushCompleteObject). */
  data(chunk: Buffer, messageEnd?: boolean): void;
  /** The connection ended or could not be made. Only the first call per connection counts; later ones are ignored. */
  dropped(detail: string): void;
  /** The sender ended the stream normally (e.g. websocket close 1000): 'ended', no retry. */
  ended(detail: string): void;
}

export interface Connection {
  /** Close deliberately; resolves when released. */
  close(): Promise<void>;
}

export type Connect = (events: ConnectionEvents) => Connection;

export interface LinkSourceOptions {
  clock?: Clock;
  /** Delay before retry number `attempt` (tests may shorten it). */
  retryDelayMs?: (attempt: number) => number;
}

/**
 * A message-based sender may put one JSON object per message without a newline. At the end of a message, an
 * unterminated rest that is a complete JSON object is taken as a line; anything else waits for the next message
 * (a frame split across messages). A proper prefix of a JSON object is never itself a complete object.
 */
function isCompleteObject(bytes: Buffer): boolean {
  const text = bytes.toString('utf8').trim();
  if (!text.startsWith('{') || !text.endsWith('}')) return false;
  try {
    JSON.parse(text);
    return true;
  } catch {
    return false;
  }
}

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

  const deliver = (lines: RawLine[]): void => {
    for (const l of lines) handlers?.onLine({ bytes: l.bytes, cut: l.cut, receivedAtMs: clock() });
  };

  function open(): void {
    if (stopped) return;
    if (!reportedLost) handlers?.onStatus({ kind: 'connecting', atMs: clock(), detail: label });
    const splitter = createLineSplitter();
    currentSplitter = splitter;
    let done = false;
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
        deliver(splitter.push(chunk));
        if (messageEnd && splitter.pendingBytes() > 0 && isCompleteObject(splitter.peekPending()))
          deliver(splitter.end());
      },
      ended(detail) {
        if (done || stopped) return;
        done = true;
        deliver(splitter.end());
        handlers?.onStatus({ kind: 'ended', atMs: clock(), detail });
      },
      dropped(detail) {
        if (done) return;
        done = true;
        if (stopped) return;
        deliver(splitter.end());
        if (!reportedLost) handlers?.onStatus({ kind: 'lost', atMs: clock(), detail });
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
      current = connect(events);
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
      await conn?.close().catch(() => undefined);
      // A partial line received before the stop is still data received: deliver it (it will be judged a truncated line).
      if (currentSplitter) deliver(currentSplitter.end());
      currentSplitter = undefined;
      handlers = undefined;
    },
  };
}
