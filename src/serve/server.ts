/**
 * The bench server behind `turnmargin serve`: a websocket server whose clients send frames and get margin records
 * back, one per frame, in order. Each connection has its own session (smoothing, hysteresis, time order) and, with
 * a record directory, its own recording file. A message over the size cap is refused with close code 1009 for that
 * client only; a slow reader is dropped before its answers fill memory.
 *
 * Fairness: messages are worked through in slices (SLICE_MS per client, round robin, yielding to the event loop
 * after TICK_MS), so one client's flood never holds up another client's answers, the recorders' flush timers or
 * the signals. While a client has a message waiting its socket is paused (its sender is held back by TCP), so
 * memory per client stays bounded: the message in hand, one more, and at most MAX_UNREAD_ANSWER_BYTES of answers.
 * Idle clients: pinged every PING_INTERVAL_MS; two pings unanswered, or no complete message for the idle timeout,
 * and the client is closed and its slot freed.
 */
import { makeDirectory } from '../recording/make-directory.js';
import { createHash, timingSafeEqual } from 'node:crypto';
import type { Socket } from 'node:net';
import { performance } from 'node:perf_hooks';
import type { IncomingMessage } from 'node:http';
import { join } from 'node:path';
import { WebSocket, WebSocketServer } from 'ws';
import type { Aircraft } from '../core/aircraft.js';
import type { MarginOptions } from '../core/margins.js';
import type { RawLine } from '../decode/line-splitter.js';
import { openRecorder, type Recorder, type RecorderIo } from '../recording/recorder.js';
import { readMessageLines, type MessageLines } from '../sources/message-lines.js';
import { formatWsUrl } from './listen-address.js';
import { createServeSession, type ServeSession } from './session.js';

/** Largest message a client may send, bytes (1 MiB). */
export const SERVE_MAX_PAYLOAD_BYTES = 1024 * 1024;
/** Default limit of simultaneous clients. */
export const DEFAULT_MAX_CLIENTS = 32;
/** A client that lets this many bytes of answers pile up unread is disconnected (close 1008). */
export const MAX_UNREAD_ANSWER_BYTES = 8 * 1024 * 1024;
/** How long shutdown waits for clients to acknowledge the close before cutting them off, ms. */
export const SHUTDOWN_GRACE_MS = 1000;
/** Work on one client's lines before turning to the next client, ms. */
export const SLICE_MS = 4;
/** Work before yielding to the event loop (timers, signals, other sockets), ms. */
export const TICK_MS = 20;
/** A message this small from a client with nothing waiting is answered at once, ahead of the round robin. */
const LIGHT_MESSAGE_BYTES = 64 * 1024;
/** Lines handed to the session at a time. */
const LINES_PER_BATCH = 64;
/** Received bytes waiting per client beyond which its socket is paused. */
export const MAX_QUEUED_BYTES = 1024 * 1024;
/** Ping period, ms. */
export const PING_INTERVAL_MS = 15_000;
/** Default idle timeout: no complete message for this long and the client is closed, ms. */
export const DEFAULT_IDLE_TIMEOUT_MS = 60_000;

export interface ServeServerOptions {
  aircraft: Aircraft;
  host: string;
  /** 0 picks a free port. */
  port: number;
  margins: Partial<MarginOptions>;
  /** When set, clients must present it: `Authorization: Bearer <token>` or `?token=<token>` in the URL. */
  token?: string;
  /** Keep each connection's received lines in a recording file in this directory (created when missing). */
  recordDir?: string;
  maxClients?: number;
  maxPayloadBytes?: number;
  /** No complete message for this long, ms: the client is closed (1001) and its slot freed. */
  idleTimeoutMs?: number;
  /** Ping period, ms (two unanswered pings and the client is cut off). */
  pingIntervalMs?: number;
  /** One line of human log per connection event (the CLI sends it to stderr). */
  log?: (line: string) => void;
  clock?: () => number;
  /** Unread answers beyond which a client is cut off (1008), bytes; default MAX_UNREAD_ANSWER_BYTES. */
  maxUnreadAnswerBytes?: number;
  /** File calls of the recorders (tests inject a full disk here). */
  recorderIo?: RecorderIo;
}

export interface ServeSummary {
  connections: number;
  lines: number;
  answered: number;
  errors: number;
  refused: number;
  /** Received lines the recordings could not keep (disk full…). */
  linesNotRecorded: number;
  recordings: string[];
}

export interface ServeServer {
  readonly host: string;
  readonly port: number;
  readonly url: string;
  clientCount(): number;
  /** Stop accepting, close every client (1001), flush and close the recordings. Idempotent. */
  close(): Promise<ServeSummary>;
}

function digest(text: string): Buffer {
  return createHash('sha256').update(text, 'utf8').digest();
}

/** The token a client presented: the Authorization bearer, else the `token` query parameter. */
export function presentedToken(req: IncomingMessage): string | undefined {
  const auth = req.headers['authorization'];
  if (typeof auth === 'string') {
    const match = /^Bearer\s+(.+)$/i.exec(auth.trim());
    if (match) return match[1]!.trim();
  }
  try {
    const url = new URL(req.url ?? '/', 'ws://localhost');
    return url.searchParams.get('token') ?? undefined;
  } catch {
    return undefined;
  }
}

function stampForFile(ms: number): string {
  return new Date(ms).toISOString().replace(/[:.]/g, '-');
}

interface Client {
  id: number;
  ws: WebSocket;
  remote: string;
  session: ServeSession;
  recorder?: Recorder;
  /** Messages received and not started yet. */
  queue: Buffer[];
  queuedBytes: number;
  /** The message being worked through. */
  current: { lines: MessageLines; size: number; receivedAtMs: number; answers: number; allBlank: boolean } | null;
  /** Closing or closed: input is dropped, nothing more is answered. */
  closing: boolean;
  paused: boolean;
  scheduled: boolean;
  closeDetail: string;
  /** Last complete message (or the connection), performance.now() ms. */
  lastMessageMs: number;
  lastPingMs: number;
  awaitingPong: boolean;
  missedPings: number;
  recordingFailureLogged: boolean;
  closed: Promise<void>;
}

/**
 * Unmasked, unfragmented text frames, one per answer, in one buffer (RFC 6455 §5.2: a server never masks). Written
 * straight to the socket between ws's own whole frames (pings, close), so frames never interleave.
 */
export function encodeTextFrames(texts: readonly string[]): Buffer {
  let total = 0;
  const lengths = texts.map((t) => {
    const n = Buffer.byteLength(t, 'utf8');
    total += n + (n < 126 ? 2 : n < 65536 ? 4 : 10);
    return n;
  });
  const out = Buffer.allocUnsafe(total);
  let at = 0;
  texts.forEach((text, i) => {
    const n = lengths[i]!;
    out[at++] = 0x81; // FIN + text
    if (n < 126) out[at++] = n;
    else if (n < 65536) {
      out[at++] = 126;
      out.writeUInt16BE(n, at);
      at += 2;
    } else {
      out[at++] = 127;
      out.writeBigUInt64BE(BigInt(n), at);
      at += 8;
    }
    at += out.write(text, at, 'utf8');
  });
  return out;
}

const isBlank = (line: RawLine): boolean => line.bytes.toString('utf8').trim() === '';

export async function startServeServer(options: ServeServerOptions): Promise<ServeServer> {
  const log = options.log ?? (() => undefined);
  const clock = options.clock ?? Date.now;
  const maxClients = options.maxClients ?? DEFAULT_MAX_CLIENTS;
  const idleTimeoutMs = options.idleTimeoutMs ?? DEFAULT_IDLE_TIMEOUT_MS;
  const pingIntervalMs = options.pingIntervalMs ?? PING_INTERVAL_MS;
  const maxUnread = options.maxUnreadAnswerBytes ?? MAX_UNREAD_ANSWER_BYTES;
  const expected = options.token !== undefined ? digest(options.token) : null;
  if (options.recordDir !== undefined) makeDirectory(options.recordDir);

  const summary: ServeSummary = {
    connections: 0,
    lines: 0,
    answered: 0,
    errors: 0,
    refused: 0,
    linesNotRecorded: 0,
    recordings: [],
  };
  const open = new Map<WebSocket, Client>();

  const wss = new WebSocketServer({
    host: options.host,
    port: options.port,
    maxPayload: options.maxPayloadBytes ?? SERVE_MAX_PAYLOAD_BYTES,
    // Answers are framed by encodeTextFrames: no compression extension.
    perMessageDeflate: false,
    verifyClient: (info, done) => {
      if (expected) {
        const given = presentedToken(info.req);
        // Compare digests so that the comparison takes the same time whatever the token's length.
        if (given === undefined || !timingSafeEqual(digest(given), expected)) {
          summary.refused++;
          log(`refused ${info.req.socket.remoteAddress ?? '?'}: ${given === undefined ? 'no token' : 'wrong token'}`);
          return done(
            false,
            401,
            'Unauthorized: present the token as "Authorization: Bearer <token>" or ?token=<token>',
          );
        }
      }
      if (open.size >= maxClients) {
        summary.refused++;
        log(`refused ${info.req.socket.remoteAddress ?? '?'}: already ${maxClients} clients`);
        return done(false, 503, `Too many clients (at most ${maxClients})`);
      }
      done(true);
    },
  });
  await new Promise<void>((resolve, reject) => {
    wss.once('listening', () => resolve());
    wss.once('error', reject);
  });
  wss.on('error', (err) => log(`server error: ${err.message}`));
  const address = wss.address() as { port: number };

  // ---- the fair scheduler: clients with work, served round robin in slices ----
  const ready: Client[] = [];
  let tickScheduled = false;

  /** Stop working on a client's input. Lines received but not answered still go to its recording (cheap). */
  const dropInput = (c: Client): void => {
    if (c.recorder && (c.current !== null || c.queue.length > 0)) {
      const atMs = c.current?.receivedAtMs ?? clock();
      const rest = [c.current?.lines, ...c.queue.map((m) => readMessageLines(m))];
      for (const lines of rest) {
        for (let line = lines?.next() ?? null; line !== null; line = lines!.next())
          c.recorder.writeLine({ bytes: line.bytes, receivedAtMs: atMs, cut: line.cut });
      }
    }
    c.queue = [];
    c.queuedBytes = 0;
    c.current = null;
  };

  const closeClient = (c: Client, code: number, reason: string, detail: string): void => {
    if (c.closing) return;
    c.closing = true;
    c.closeDetail = detail;
    dropInput(c);
    c.ws.close(code, reason);
    // A peer that does not finish the closing handshake is cut off (ws would wait 30 s).
    setTimeout(() => {
      if (c.ws.readyState !== WebSocket.CLOSED) c.ws.terminate();
    }, SHUTDOWN_GRACE_MS).unref();
  };

  const checkRecording = (c: Client): void => {
    const error = c.recorder?.error() ?? null;
    const failing = error !== null && error.startsWith('recording write failed');
    if (failing && !c.recordingFailureLogged) {
      log(`client ${c.id}: ${error}; still answering, lines not recorded are counted`);
      c.recordingFailureLogged = true;
    } else if (!failing && c.recordingFailureLogged) {
      log(`client ${c.id}: recording writes again; ${c.recorder!.linesNotWritten()} lines not written`);
      c.recordingFailureLogged = false;
    }
  };

  /** Work on one client for up to budgetMs; true when it has more to do. */
  const work = (c: Client, budgetMs: number): boolean => {
    const until = performance.now() + budgetMs;
    const socket = (c.ws as unknown as { _socket?: Socket })._socket;
    {
      const batch: RawLine[] = [];
      while (!c.closing) {
        if (c.current === null) {
          const message = c.queue.shift();
          if (message === undefined) break;
          c.current = {
            lines: readMessageLines(message),
            size: message.length,
            receivedAtMs: clock(),
            answers: 0,
            allBlank: true,
          };
        }
        const m = c.current;
        batch.length = 0;
        for (let line = m.lines.next(); line !== null; line = batch.length < LINES_PER_BATCH ? m.lines.next() : null) {
          batch.push(line);
          if (batch.length >= LINES_PER_BATCH) break;
        }
        const answers = batch.length ? c.session.handleLines(batch, m.receivedAtMs) : [];
        m.answers += answers.length;
        if (answers.length === 0 && m.allBlank) m.allBlank = batch.every(isBlank);
        else m.allBlank = false;
        if (batch.length === 0) {
          // The message is done; an empty one is answered as such.
          if (m.answers === 0 && m.allBlank) answers.push(...c.session.handleMessage(Buffer.alloc(0)));
          c.queuedBytes -= m.size;
          c.current = null;
        }
        if (answers.length > 0 && c.ws.readyState === WebSocket.OPEN) {
          // One write per batch: a socket holding thousands of tiny pending writes costs far more (GC, writev).
          if (socket) socket.write(encodeTextFrames(answers.map((a) => JSON.stringify(a))));
          else for (const a of answers) c.ws.send(JSON.stringify(a));
        }
        // Checked while answering: a client that does not read is cut off before its answers fill memory.
        if (c.ws.bufferedAmount > maxUnread) {
          closeClient(c, 1008, 'answers are not being read', 'answers not read');
          break;
        }
        if (c.ws.readyState !== WebSocket.OPEN) {
          c.closing = true;
          dropInput(c);
          break;
        }
        if (performance.now() >= until) break;
      }
    }
    checkRecording(c);
    if (c.paused && !c.closing && c.queue.length === 0) {
      c.paused = false;
      c.ws.resume();
    }
    return !c.closing && (c.current !== null || c.queue.length > 0);
  };

  const tick = (): void => {
    tickScheduled = false;
    const start = performance.now();
    while (ready.length > 0 && performance.now() - start < TICK_MS) {
      const c = ready.shift()!;
      if (work(c, SLICE_MS)) ready.push(c);
      else c.scheduled = false;
    }
    if (ready.length > 0) {
      tickScheduled = true;
      setImmediate(tick);
    }
  };

  const schedule = (c: Client): void => {
    if (c.scheduled) return;
    c.scheduled = true;
    ready.push(c);
    if (!tickScheduled) {
      tickScheduled = true;
      setImmediate(tick);
    }
  };

  // ---- pings and idle clients ----
  const housekeepingMs = Math.max(10, Math.min(1000, pingIntervalMs / 4, idleTimeoutMs / 4));
  const housekeeping = setInterval(() => {
    const now = performance.now();
    for (const c of open.values()) {
      if (c.closing) continue;
      // The recorder's own timer may find the disk full after the last message was answered: say so now.
      checkRecording(c);
      // A client whose input is still being worked through (or held back by us) is not idle.
      if (c.current !== null || c.queue.length > 0) {
        c.lastMessageMs = now;
        c.lastPingMs = now;
        c.awaitingPong = false;
        c.missedPings = 0;
        continue;
      }
      if (now - c.lastMessageMs >= idleTimeoutMs) {
        const s = idleTimeoutMs / 1000;
        log(`client ${c.id}: no complete message for ${s} s; closing it`);
        closeClient(c, 1001, `idle for ${s} s`, `idle for ${s} s`);
        continue;
      }
      if (now - c.lastPingMs >= pingIntervalMs) {
        if (c.awaitingPong) c.missedPings += 1;
        if (c.missedPings >= 2) {
          log(`client ${c.id}: two pings not answered; cutting it off`);
          c.closing = true;
          c.closeDetail = 'two pings not answered';
          dropInput(c);
          c.ws.terminate();
          continue;
        }
        c.lastPingMs = now;
        c.awaitingPong = true;
        c.ws.ping();
      }
    }
  }, housekeepingMs);
  housekeeping.unref();

  let nextId = 1;
  wss.on('connection', (ws, req) => {
    const id = nextId++;
    const remote = `${req.socket.remoteAddress ?? '?'}:${req.socket.remotePort ?? '?'}`;
    summary.connections++;
    let recorder: Recorder | undefined;
    if (options.recordDir !== undefined) {
      const path = join(options.recordDir, `serve-${stampForFile(clock())}-client-${id}.tmrec`);
      try {
        recorder = openRecorder({
          path,
          sourceLabel: `websocket client ${remote} (serve)`,
          clock,
          ...(options.recorderIo ? { io: options.recorderIo } : {}),
        });
        recorder.writeStatus({ kind: 'open', atMs: clock(), detail: remote });
        summary.recordings.push(path);
      } catch (err) {
        log(`client ${id} (${remote}) refused: cannot record (${(err as Error).message})`);
        ws.close(1011, 'cannot record this connection');
        return;
      }
    }
    const session = createServeSession(
      options.aircraft,
      recorder ? { margins: options.margins, recorder, clock } : { margins: options.margins, clock },
    );
    let resolveClosed!: () => void;
    const closed = new Promise<void>((resolve) => (resolveClosed = resolve));
    const now = performance.now();
    const c: Client = {
      id,
      ws,
      remote,
      session,
      queue: [],
      queuedBytes: 0,
      current: null,
      closing: false,
      paused: false,
      scheduled: false,
      closeDetail: '',
      lastMessageMs: now,
      lastPingMs: now,
      awaitingPong: false,
      missedPings: 0,
      recordingFailureLogged: false,
      closed,
      ...(recorder ? { recorder } : {}),
    };
    open.set(ws, c);
    log(`client ${id} connected from ${remote}`);

    ws.on('pong', () => {
      c.awaitingPong = false;
      c.missedPings = 0;
    });
    ws.on('message', (data) => {
      if (c.closing) return; // a closed client's input is dropped at once
      const bytes = Array.isArray(data)
        ? Buffer.concat(data)
        : Buffer.isBuffer(data)
          ? data
          : Buffer.from(data as ArrayBuffer);
      // Text and binary messages are read the same way: lines of UTF-8.
      c.lastMessageMs = performance.now();
      c.queue.push(bytes);
      c.queuedBytes += bytes.length;
      if (c.queuedBytes > MAX_QUEUED_BYTES && !c.paused) {
        c.paused = true;
        ws.pause();
      }
      // A light client (nothing waiting, a small message) is answered now, ahead of any flood; a client with a
      // backlog takes its turn in the round robin.
      const light = !c.scheduled && c.current === null && c.queue.length === 1 && bytes.length <= LIGHT_MESSAGE_BYTES;
      if (light || (!tickScheduled && ready.length === 0 && !c.scheduled)) {
        if (work(c, SLICE_MS)) schedule(c);
      } else schedule(c);
    });
    ws.on('error', (err: Error & { code?: string }) => {
      // ws closes the connection itself (1009 for an oversized message); the other clients are not touched.
      c.closeDetail =
        err.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH'
          ? 'message over the size cap refused (close code 1009 sent)'
          : err.message;
      c.closing = true;
      dropInput(c);
      log(`client ${id}: ${c.closeDetail}`);
    });
    ws.on('close', (code, reason) => {
      c.closing = true;
      dropInput(c);
      const stats = session.stats();
      summary.lines += stats.lines;
      summary.answered += stats.answered;
      summary.errors += stats.errors;
      const why = c.closeDetail || reason.toString() || 'closed';
      recorder?.writeStatus({
        kind: c.closeDetail ? 'lost' : 'ended',
        atMs: clock(),
        detail: `close ${code} ${why}`,
      });
      recorder?.close();
      const notRecorded = recorder?.linesNotWritten() ?? 0;
      summary.linesNotRecorded += notRecorded;
      open.delete(ws);
      const recording = recorder?.error() ? `; recording: ${recorder.error()}` : '';
      log(
        `client ${id} closed (${code}${why ? ` ${why}` : ''}): ${stats.answered} frames answered, ${stats.errors} errors${recording}`,
      );
      resolveClosed();
    });
  });

  let closing: Promise<ServeSummary> | null = null;
  return {
    host: options.host,
    port: address.port,
    url: formatWsUrl(options.host, address.port),
    clientCount: () => open.size,
    close() {
      closing ??= (async () => {
        clearInterval(housekeeping);
        const serverClosed = new Promise<void>((resolve) => wss.close(() => resolve()));
        const waits = [...open.values()].map((c) => {
          c.closing = true;
          dropInput(c);
          if (c.ws.readyState === WebSocket.OPEN || c.ws.readyState === WebSocket.CONNECTING)
            c.ws.close(1001, 'server shutting down');
          return c.closed;
        });
        let timer: NodeJS.Timeout | undefined;
        await Promise.race([
          Promise.all(waits),
          new Promise<void>((resolve) => (timer = setTimeout(resolve, SHUTDOWN_GRACE_MS))),
        ]);
        clearTimeout(timer);
        for (const [ws, c] of open) {
          ws.terminate();
          c.recorder?.close();
        }
        await Promise.race([Promise.all(waits), new Promise<void>((resolve) => setTimeout(resolve, 200))]);
        await serverClosed;
        return { ...summary, recordings: [...summary.recordings] };
      })();
      return closing;
    },
  };
}
