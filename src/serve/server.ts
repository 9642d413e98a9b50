/**
 * The bench server behind `turnmargin serve`: a websocket server whose clients send frames and get margin records
 * back, one per frame, in order. Each connection has its own session (smoothing, hysteresis, time order) and, with
 * a record directory, its own recording file. A message over the size cap is refused with close code 1009 for that
 * client only; a slow reader is dropped before its answers fill memory.
 */
import { makeDirectory } from '../recording/make-directory.js';
import { createHash, timingSafeEqual } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import { join } from 'node:path';
import { WebSocket, WebSocketServer } from 'ws';
import type { Aircraft } from '../core/aircraft.js';
import type { MarginOptions } from '../core/margins.js';
import { openRecorder, type Recorder } from '../recording/recorder.js';
import { formatWsUrl } from './listen-address.js';
import { createServeSession, type ServeSessionStats } from './session.js';

/** Largest message a client may send, bytes (1 MiB). */
export const SERVE_MAX_PAYLOAD_BYTES = 1024 * 1024;
/** Default limit of simultaneous clients. */
export const DEFAULT_MAX_CLIENTS = 32;
/** A client that lets this many bytes of answers pile up unread is disconnected (close 1008). */
export const MAX_UNREAD_ANSWER_BYTES = 8 * 1024 * 1024;
/** How long shutdown waits for clients to acknowledge the close before cutting them off, ms. */
export const SHUTDOWN_GRACE_MS = 1000;

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
  /** One line of human log per connection event (the CLI sends it to stderr). */
  log?: (line: string) => void;
  clock?: () => number;
}

export interface ServeSummary {
  connections: number;
  lines: number;
  answered: number;
  errors: number;
  refused: number;
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

export async function startServeServer(options: ServeServerOptions): Promise<ServeServer> {
  const log = options.log ?? (() => undefined);
  const clock = options.clock ?? Date.now;
  const maxClients = options.maxClients ?? DEFAULT_MAX_CLIENTS;
  const expected = options.token !== undefined ? digest(options.token) : null;
  if (options.recordDir !== undefined) makeDirectory(options.recordDir);

  const summary: ServeSummary = { connections: 0, lines: 0, answered: 0, errors: 0, refused: 0, recordings: [] };
  const open = new Map<
    WebSocket,
    { id: number; recorder?: Recorder; stats: () => ServeSessionStats; closed: Promise<void> }
  >();

  const wss = new WebSocketServer({
    host: options.host,
    port: options.port,
    maxPayload: options.maxPayloadBytes ?? SERVE_MAX_PAYLOAD_BYTES,
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

  let nextId = 1;
  wss.on('connection', (ws, req) => {
    const id = nextId++;
    const remote = `${req.socket.remoteAddress ?? '?'}:${req.socket.remotePort ?? '?'}`;
    summary.connections++;
    let recorder: Recorder | undefined;
    if (options.recordDir !== undefined) {
      const path = join(options.recordDir, `serve-${stampForFile(clock())}-client-${id}.tmrec`);
      try {
        recorder = openRecorder({ path, sourceLabel: `websocket client ${remote} (serve)`, clock });
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
    let closeDetail = '';
    let resolveClosed!: () => void;
    const closed = new Promise<void>((resolve) => (resolveClosed = resolve));
    open.set(ws, recorder ? { id, recorder, stats: session.stats, closed } : { id, stats: session.stats, closed });
    log(`client ${id} connected from ${remote}`);

    ws.on('message', (data, isBinary) => {
      const bytes = Array.isArray(data)
        ? Buffer.concat(data)
        : Buffer.isBuffer(data)
          ? data
          : Buffer.from(data as ArrayBuffer);
      void isBinary; // text and binary messages are read the same way: lines of UTF-8
      for (const answer of session.handleMessage(bytes)) {
        if (ws.readyState !== WebSocket.OPEN) break;
        ws.send(JSON.stringify(answer));
      }
      if (ws.bufferedAmount > MAX_UNREAD_ANSWER_BYTES) {
        closeDetail = 'answers not read';
        ws.close(1008, 'answers are not being read');
      }
    });
    ws.on('error', (err: Error & { code?: string }) => {
      // ws closes the connection itself (1009 for an oversized message); the other clients are not touched.
      closeDetail =
        err.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH'
          ? 'message over the size cap refused (close code 1009 sent)'
          : err.message;
      log(`client ${id}: ${closeDetail}`);
    });
    ws.on('close', (code, reason) => {
      const stats = session.stats();
      summary.lines += stats.lines;
      summary.answered += stats.answered;
      summary.errors += stats.errors;
      const why = closeDetail || reason.toString() || 'closed';
      recorder?.writeStatus({ kind: closeDetail ? 'lost' : 'ended', atMs: clock(), detail: `close ${code} ${why}` });
      recorder?.close();
      open.delete(ws);
      log(
        `client ${id} closed (${code}${why ? ` ${why}` : ''}): ${stats.answered} frames answered, ${stats.errors} errors`,
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
        const serverClosed = new Promise<void>((resolve) => wss.close(() => resolve()));
        const waits = [...open.entries()].map(([ws, c]) => {
          ws.close(1001, 'server shutting down');
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
