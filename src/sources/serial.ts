/** Serial adapter (radio modem, USB serial): reopens the same path with backoff when the port disappears. */
import { closeSync, constants, existsSync, openSync, statSync, type Stats } from 'node:fs';
import { isatty } from 'node:tty';
import { SerialPort } from 'serialport';
import { createLinkSource, type LinkSourceOptions } from './link-source.js';
import type { TelemetrySource } from './source.js';

/** The serial speed when none is given (a common telemetry radio setting), for watch and simulate alike. */
export const DEFAULT_BAUD = 57600;
/** Why a serial link waits: its path does not exist (a radio not plugged in yet, or a typo). */
export const NO_SUCH_PORT_YET = 'no such port yet; waiting for it to appear';

export interface SerialSourceOptions extends LinkSourceOptions {
  path: string;
  baudRate?: number;
}

export function createSerialSource(options: SerialSourceOptions): TelemetrySource {
  const baudRate = options.baudRate ?? DEFAULT_BAUD;
  const label = `serial ${options.path} @ ${baudRate}`;
  return createLinkSource(
    label,
    (events) => {
      const port = new SerialPort({ path: options.path, baudRate, autoOpen: false });
      // Always listen for 'error': without a listener an I/O error would crash the process.
      port.on('error', (err: Error) => events.dropped(`serial error: ${err.message}`));
      port.on('close', (err: (Error & { disconnected?: boolean }) | null) =>
        events.dropped(err?.disconnected ? 'port disappeared' : err ? `port closed (${err.message})` : 'port closed'),
      );
      port.on('data', (chunk: Buffer) => events.data(chunk));
      port.open((err) => {
        if (err && !existsSync(options.path)) events.dropped(`${options.path}: ${NO_SUCH_PORT_YET}`);
        else if (err) events.dropped(describeOpenError(options.path, err));
        else events.opened(options.path);
      });
      return {
        close: () =>
          new Promise<void>((resolve) => {
            if (!port.isOpen) return resolve();
            port.close(() => resolve());
          }),
      };
    },
    options,
  );
}

/** "cannot open PATH: why", without the driver repeating "cannot open PATH" inside its own message. */
function describeOpenError(path: string, err: Error): string {
  let why = err.message.replace(/^Error: /, '').trim();
  const echo = `cannot open ${path}`;
  if (why.endsWith(echo)) why = why.slice(0, -echo.length).replace(/[,;:\s]+$/, '');
  return `${echo}: ${why || 'unknown error'}`;
}

/**
 * Why an existing path can never be a serial port (a directory, a regular file, a device that is not a terminal),
 * or null when it is a terminal device or does not exist yet (a radio not plugged in is waited for).
 */
export function whyNotASerialPort(path: string): string | null {
  let stats: Stats;
  try {
    stats = statSync(path);
  } catch {
    return null;
  }
  if (stats.isDirectory()) return 'is a directory';
  if (!stats.isCharacterDevice()) return 'is not a device (a regular file? replay reads files)';
  let fd: number | undefined;
  try {
    fd = openSync(path, constants.O_RDWR | constants.O_NOCTTY | constants.O_NONBLOCK);
    return isatty(fd) ? null : 'is a device but not a serial port or terminal';
  } catch {
    return null; // busy or not permitted now: the source reports the open error and retries
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}
