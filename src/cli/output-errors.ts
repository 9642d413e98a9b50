/** Words for a failed write to standard output, and the exit it calls for. */
import { systemErrorWords } from '../system-errors.js';

/** A closed reader (`| head`) is a normal way for output to end; anything else is a failure to report. */
export function isClosedPipe(err: NodeJS.ErrnoException): boolean {
  return err.code === 'EPIPE' || err.code === 'ERR_STREAM_DESTROYED';
}

export function describeOutputError(err: NodeJS.ErrnoException): string {
  return systemErrorWords(err);
}
