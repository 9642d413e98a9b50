/** Serial adapter (radio modem, USB serial): reopens the same path with backoff when the port disappears. */
import { existsSync, stat, type Stats } from 'node:fs';
import { SerialPort } from 'serialport';
import { createLinkSource, type LinkSourceOptions } from './link-source.js';
import type { TelemetrySource } from './source.js';
import { DEFAULT_BAUD, NO_SUCH_PORT_YET } from './serial-path.js';

/**
 * How often an open port's path is checked, ms. The driver does not always report a vanished port: on Linux a
 * hung-up terminal reads as zero bytes for ever once the hang-up is complete, so a radio pulled out at the wrong
 * moment would look like a silent link. A path that is gone, or now names another device, is a lost port.
 */
export const PORT_CHECK_MS = 500;

export interface SerialSourceOptions extends LinkSourceOptions {
  path: string;
  baudRate?: number;
  /** Period of the check that the open port's path still names the same device (tests may shorten it). */
  portCheckMs?: number;
}

export function createSerialSource(options: SerialSourceOptions): TelemetrySource {
  const baudRate = options.baudRate ?? DEFAULT_BAUD;
  const label = `serial ${options.path} @ ${baudRate}`;
  const portCheckMs = options.portCheckMs ?? PORT_CHECK_MS;
  return createLinkSource(
    label,
    (events) => {
      const port = new SerialPort({ path: options.path, baudRate, autoOpen: false });
      let check: NodeJS.Timeout | undefined;
      const stopChecking = (): void => {
        if (check) clearInterval(check);
        check = undefined;
      };
      const drop = (detail: string): void => {
        stopChecking();
        events.dropped(detail);
      };
      // Always listen for 'error': without a listener an I/O error would crash the process.
      port.on('error', (err: Error) => drop(`serial error: ${err.message}`));
      port.on('close', (err: (Error & { disconnected?: boolean }) | null) =>
        drop(err?.disconnected ? 'port disappeared' : err ? `port closed (${err.message})` : 'port closed'),
      );
      port.on('data', (chunk: Buffer) => events.data(chunk));
      port.open((err) => {
        if (err && !existsSync(options.path)) events.dropped(`${options.path}: ${NO_SUCH_PORT_YET}`);
        else if (err) events.dropped(describeOpenError(options.path, err));
        else {
          events.opened(options.path);
          check = watchPath(port, options.path, portCheckMs, drop);
        }
      });
      return {
        close: () =>
          new Promise<void>((resolve) => {
            stopChecking();
            if (!port.isOpen) return resolve();
            port.close(() => resolve());
          }),
      };
    },
    options,
  );
}

/** Checks periodically that `path` still names the device that was opened; when not, drops and releases the port. */
function watchPath(port: SerialPort, path: string, periodMs: number, drop: (detail: string) => void): NodeJS.Timeout {
  let opened: Stats | undefined;
  let busy = false;
  const timer = setInterval(() => {
    if (busy) return;
    busy = true;
    stat(path, (err, now) => {
      busy = false;
      if (!port.isOpen) {
        clearInterval(timer); // closed by the driver or by stop()
        return;
      }
      if (opened === undefined && !err) {
        opened = now;
        return;
      }
      const gone = err !== null || now.ino !== opened!.ino || now.rdev !== opened!.rdev;
      if (!gone) return;
      drop('port disappeared');
      port.close(() => undefined);
    });
  }, periodMs);
  timer.unref();
  // The device as opened, read at once rather than at the first tick.
  stat(path, (err, now) => {
    if (!err && opened === undefined) opened = now;
  });
  return timer;
}

/** "cannot open PATH: why", without the driver repeating "cannot open PATH" inside its own message. */
function describeOpenError(path: string, err: Error): string {
  let why = err.message.replace(/^Error: /, '').trim();
  const echo = `cannot open ${path}`;
  if (why.endsWith(echo)) why = why.slice(0, -echo.length).replace(/[,;:\s]+$/, '');
  return `${echo}: ${why || 'unknown error'}`;
}
