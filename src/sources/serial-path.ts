/**
 * What is known of a serial link before any port is opened: the default speed and whether a path can be a serial
 * port. Apart from the adapter (serial.ts) so that the commands that only name these do not load the serial driver.
 */
import { closeSync, constants, openSync, statSync, type Stats } from 'node:fs';
import { isatty } from 'node:tty';

/** The serial speed when none is given (a common telemetry radio setting), for watch and simulate alike. */
export const DEFAULT_BAUD = 57600;
/** Why a serial link waits: its path does not exist (a radio not plugged in yet, or a typo). */
export const NO_SUCH_PORT_YET = 'no such port yet; waiting for it to appear';

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
