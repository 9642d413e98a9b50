/**
 * Websocket client adapter (telemetry relay): a text message holds one or more complete lines (a message ends any
 * partial line); reconnects with backoff. A token goes in the `Authorization: Bearer` header; neither it nor a
 * secret in the URL is ever shown (label, link details, recording).
 */
import { WebSocket } from 'ws';
import { createLinkSource, type LinkSourceOptions } from './link-source.js';
import type { TelemetrySource } from './source.js';
import { redactUrl } from './redact-url.js';

/** Largest message accepted; a bigger one is refused by ws (the link is dropped and reconnected). */
export const WS_MAX_PAYLOAD_BYTES = 1024 * 1024;

export interface WebSocketSourceOptions extends LinkSourceOptions {
  url: string;
  maxPayloadBytes?: number;
  /** Sent as `Authorization: Bearer <token>`. */
  token?: string;
}

function describeWsError(err: Error & { code?: string }): string {
  if (err.code === 'WS_ERR_UNSUPPORTED_MESSAGE_LENGTH') return 'message larger than 1 MiB refused';
  if (err.code === 'ECONNREFUSED') return 'connection refused';
  if (err.code === 'ENOTFOUND') return 'host not found';
  if (/Unexpected server response: 401/.test(err.message)) return 'refused by the server: token missing or wrong (401)';
  return redactUrl(err.message);
}

export function createWebSocketSource(options: WebSocketSourceOptions): TelemetrySource {
  const shownUrl = redactUrl(options.url);
  return createLinkSource(
    `websocket ${shownUrl}`,
    (events) => {
      let lastError: string | undefined;
      const ws = new WebSocket(options.url, {
        maxPayload: options.maxPayloadBytes ?? WS_MAX_PAYLOAD_BYTES,
        handshakeTimeout: 5000,
        ...(options.token !== undefined ? { headers: { Authorization: `Bearer ${options.token}` } } : {}),
      });
      // Always listen for 'error' (ECONNREFUSED, oversized message…): it is followed by 'close'.
      ws.on('error', (err: Error) => {
        lastError = describeWsError(err);
      });
      ws.on('open', () => events.opened(shownUrl));
      ws.on('message', (data: Buffer | ArrayBuffer | Buffer[]) => {
        const chunk = Array.isArray(data) ? Buffer.concat(data) : Buffer.isBuffer(data) ? data : Buffer.from(data);
        events.data(chunk, true);
      });
      ws.on('close', (code: number, reason: Buffer) => {
        const why = reason.length ? ` ${reason.toString('utf8')}` : '';
        // 1000 is the sender's normal end (a simulated flight is over): the link has ended, nothing to retry.
        if (code === 1000 && lastError === undefined)
          return events.ended(why.trim() || 'closed normally by the sender');
        events.dropped(lastError ?? `connection closed (${code}${why})`);
      });
      return {
        close: () =>
          new Promise<void>((resolve) => {
            if (ws.readyState === WebSocket.CLOSED) return resolve();
            ws.once('close', () => resolve());
            ws.terminate();
          }),
        pause: () => {
          if (ws.readyState === WebSocket.OPEN) ws.pause();
        },
        resume: () => {
          if (ws.readyState === WebSocket.OPEN) ws.resume();
        },
      };
    },
    options,
  );
}
