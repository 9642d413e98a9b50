/** `HOST:PORT` for a listening socket, and whether a host is loopback-only. Pure. */

export interface ListenAddress {
  host: string;
  port: number;
}

export type ListenAddressResult = { ok: true; value: ListenAddress } | { ok: false; reason: string };

/**
 * Parse `HOST:PORT`, `[IPv6]:PORT` or `:PORT` (host defaults to `defaultHost`). Port 0 asks the system for a free
 * port.
 */
export function parseListenAddress(text: string, defaultHost = '127.0.0.1'): ListenAddressResult {
  const trimmed = text.trim();
  const match = /^(?:\[([^\]]+)\]|([^:[\]]*)):(\d{1,5})$/.exec(trimmed);
  if (!match) return { ok: false, reason: `must be HOST:PORT, e.g. 127.0.0.1:8765 (got "${text}")` };
  const host = match[1] ?? (match[2] || defaultHost);
  const port = Number(match[3]);
  if (port > 65535) return { ok: false, reason: `port must be from 0 to 65535 (got ${port})` };
  return { ok: true, value: { host, port } };
}

/** True for addresses that only this machine can reach (127.0.0.0/8, ::1, localhost). */
export function isLoopbackHost(host: string): boolean {
  const h = host.toLowerCase();
  return h === 'localhost' || h === '::1' || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(h) || h === '::ffff:127.0.0.1';
}

/** How a listening address is shown: IPv6 in brackets. */
export function formatWsUrl(host: string, port: number): string {
  return `ws://${host.includes(':') ? `[${host}]` : host}:${port}`;
}
