/** Serial adapter (radio modem, USB serial): reopens the same path with backoff when the port disappears. */
import { existsSync } from 'node:fs';
import { SerialPort } from 'serialport';
import { createLinkSource, type LinkSourceOptions } from './link-source.js';
import type { TelemetrySource } from './source.js';
import { DEFAULT_BAUD, NO_SUCH_PORT_YET } from './serial-path.js';

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
