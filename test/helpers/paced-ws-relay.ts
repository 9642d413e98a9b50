/**
 * A telemetry relay for the fault tests, in the test process: a ws server on 127.0.0.1 that streams numbered frames
 * to its clients at a steady rate, can crash (every client dropped without a close frame, the port released) and
 * listen again on the same port. It keeps what it sent: each frame's seq, send time, and whether ws confirmed that
 * the bytes were handed to the operating system (the send callback) — those frames must arrive.
 */
import { once } from 'node:events';
import { WebSocketServer, type WebSocket } from 'ws';

export interface RelayOptions {
  rateHz: number;
  /** A noise line (control bytes) after every this many frames; 0 = none. */
  noiseEvery?: number;
  /** Tick of the sending timer, ms (frames due are sent together, one message per tick). */
  tickMs?: number;
}

export interface SentFrame {
  seq: number;
  sentAtMs: number;
  /** Index of the connection (0, 1, …) it was sent on. */
  connection: number;
  confirmed: boolean;
}

export interface PacedRelay {
  /** Listen on 127.0.0.1 (port 0 = a free port); resolves with the port. */
  listen(port: number): Promise<number>;
  /** Drop every client abruptly (the peer sees 1006) and stop listening. */
  crash(): Promise<void>;
  /** Stop sending (clients stay connected). */
  pause(): void;
  resume(): void;
  /** Every frame passed to ws.send, in order. */
  readonly sent: readonly SentFrame[];
  /** Connections accepted so far. */
  connections(): number;
  close(): Promise<void>;
}

/** The frame line for a seq: a steady 30° turn at 20 m/s, t_s advancing by 1/rate. */
export function relayFrameLine(seq: number, rateHz: number): string {
  return JSON.stringify({ t_s: Number((seq / rateHz).toFixed(6)), tas_mps: 20, alt_m: 100, bank_deg: 30, seq });
}

export const RELAY_NOISE_LINE = '\u0000\u0001NOISE';

export function createPacedRelay(options: RelayOptions): PacedRelay {
  const tickMs = options.tickMs ?? 10;
  const sent: SentFrame[] = [];
  let wss: WebSocketServer | undefined;
  let timer: NodeJS.Timeout | undefined;
  let connectionCount = 0;
  let nextSeq = 0;
  let paused = false;
  // Frames due: rate × time streamed while a client was connected and not paused.
  let streamedMs = 0;
  let lastTickMs = 0;

  function tick(): void {
    const now = Date.now();
    const elapsed = now - lastTickMs;
    lastTickMs = now;
    const clients = wss ? [...wss.clients].filter((c) => c.readyState === c.OPEN) : [];
    if (paused || clients.length === 0) return;
    streamedMs += elapsed;
    const due = Math.floor((streamedMs / 1000) * options.rateHz) - nextSeq;
    if (due <= 0) return;
    const frames: SentFrame[] = [];
    let text = '';
    for (let i = 0; i < due; i++) {
      const seq = nextSeq++;
      text += relayFrameLine(seq, options.rateHz) + '\n';
      if (options.noiseEvery && (seq + 1) % options.noiseEvery === 0) text += RELAY_NOISE_LINE + '\n';
      frames.push({ seq, sentAtMs: now, connection: connectionCount - 1, confirmed: false });
    }
    sent.push(...frames);
    for (const ws of clients) {
      ws.send(text, (err) => {
        if (!err) for (const f of frames) f.confirmed = true;
      });
    }
  }

  return {
    async listen(port) {
      const server = new WebSocketServer({ host: '127.0.0.1', port });
      server.on('connection', (ws: WebSocket) => {
        ws.on('error', () => undefined);
        connectionCount += 1;
      });
      await once(server, 'listening');
      wss = server;
      lastTickMs = Date.now();
      timer ??= setInterval(tick, tickMs);
      return (server.address() as { port: number }).port;
    },
    async crash() {
      const server = wss;
      wss = undefined;
      if (!server) return;
      for (const ws of server.clients) ws.terminate();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
    pause: () => (paused = true),
    resume: () => (paused = false),
    sent,
    connections: () => connectionCount,
    async close() {
      if (timer) clearInterval(timer);
      timer = undefined;
      await this.crash();
    },
  };
}
