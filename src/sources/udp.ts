/**
 * UDP receiver (a radio or relay forwarding telemetry as datagrams): each datagram holds one or more complete lines,
 * so a line never spans two datagrams and a lost datagram costs only its own lines. No connection: the link is
 * "listening" once bound and "live" from the first datagram; rebinds with backoff if the socket fails.
 */
import { createSocket, type Socket } from 'node:dgram';
import { isIPv6 } from 'node:net';
import { createLinkSource, type LinkSourceOptions } from './link-source.js';
import type { TelemetrySource } from './source.js';

/** A datagram never carries more than this (IPv4's own limit is 65 507 bytes of payload). */
export const UDP_MAX_DATAGRAM_BYTES = 64 * 1024;
/** Kernel receive buffer asked for: a burst of datagrams waits there while a chunk is being decoded. */
const RECEIVE_BUFFER_BYTES = 4 * 1024 * 1024;

export interface UdpSourceOptions extends LinkSourceOptions {
  host: string;
  port: number;
  /** Called once bound, with the port actually used (port 0 asks the system for a free one). */
  onBound?: (port: number) => void;
}

const LF = Buffer.from('\n');

/** The datagram as complete lines: an unterminated last line ends with the datagram. */
export function datagramLines(datagram: Buffer): Buffer {
  if (datagram.length === 0 || datagram[datagram.length - 1] === 0x0a) return datagram;
  return Buffer.concat([datagram, LF]);
}

function describeSocketError(err: NodeJS.ErrnoException, where: string): string {
  switch (err.code) {
    case 'EADDRINUSE':
      return `cannot listen on ${where} (address already in use)`;
    case 'EADDRNOTAVAIL':
      return `cannot listen on ${where} (not an address of this machine)`;
    case 'EACCES':
      return `cannot listen on ${where} (permission denied)`;
    case 'ENOTFOUND':
      return `cannot listen on ${where} (host not found)`;
    default:
      return `udp ${where}: ${err.message}`;
  }
}

export function formatUdpAddress(host: string, port: number): string {
  return `${isIPv6(host) ? `[${host}]` : host}:${port}`;
}

/**
 * A free port of `host`, as the system gives one for port 0 (`--udp 0`): asked before the link starts, so that the
 * link's name, a recording's source line and the link summary carry the port to send to, not 0. null when the host
 * cannot be bound now (the link then says why, and retries as for any port).
 */
export function freeUdpPort(host: string): Promise<number | null> {
  return new Promise((resolve) => {
    const probe = createSocket(isIPv6(host) ? 'udp6' : 'udp4');
    probe.once('error', () => {
      try {
        probe.close();
      } catch {
        // never bound: nothing to close
      }
      resolve(null);
    });
    probe.bind(0, host, () => {
      const port = probe.address().port;
      probe.close(() => resolve(port));
    });
  });
}

export function createUdpSource(options: UdpSourceOptions): TelemetrySource {
  const where = formatUdpAddress(options.host, options.port);
  return createLinkSource(
    `udp ${where}`,
    (events) => {
      const socket: Socket = createSocket({
        type: isIPv6(options.host) ? 'udp6' : 'udp4',
        recvBufferSize: RECEIVE_BUFFER_BYTES,
      });
      let closed = false;
      // Always listen for 'error' (a port in use, a vanished address): without it the process would crash.
      socket.on('error', (err: NodeJS.ErrnoException) => {
        events.dropped(describeSocketError(err, where));
        if (!closed) {
          closed = true;
          socket.close();
        }
      });
      socket.on('message', (datagram: Buffer) => {
        if (datagram.length > UDP_MAX_DATAGRAM_BYTES) return; // cannot happen over IPv4/IPv6 without jumbograms
        events.data(datagramLines(datagram), true);
      });
      socket.bind(options.port, options.host, () => {
        const port = socket.address().port;
        options.onBound?.(port);
        events.opened(`listening on ${formatUdpAddress(options.host, port)}`, true);
      });
      return {
        close: () =>
          new Promise<void>((resolve) => {
            if (closed) return resolve();
            closed = true;
            socket.close(() => resolve());
          }),
      };
    },
    options,
  );
}
