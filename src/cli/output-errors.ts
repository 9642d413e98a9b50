/** Words for a failed write to standard output, and the exit it calls for. */

/** A closed reader (`| head`) is a normal way for output to end; anything else is a failure to report. */
export function isClosedPipe(err: NodeJS.ErrnoException): boolean {
  return err.code === 'EPIPE' || err.code === 'ERR_STREAM_DESTROYED';
}

export function describeOutputError(err: NodeJS.ErrnoException): string {
  switch (err.code) {
    case 'ENOSPC':
      return 'disk full';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EIO':
      return 'input/output error';
    default:
      return err.message;
  }
}
