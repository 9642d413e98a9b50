/**
 * Words for the system error codes Node reports (ENOENT, EACCES, ENOSPC, …): the one place that turns them into
 * what a user reads after "cannot read the file (…)". Neutral: any layer may use it.
 */

const WORDS: Readonly<Record<string, string>> = {
  ENOENT: 'no such file',
  EISDIR: 'is a directory',
  ENOTDIR: 'not a directory',
  EEXIST: 'already exists',
  EACCES: 'permission denied',
  EPERM: 'permission denied',
  EROFS: 'read-only file system',
  ENOSPC: 'disk full',
  EDQUOT: 'disk quota exceeded',
  EIO: 'input/output error',
  EMFILE: 'too many open files',
  ENFILE: 'too many open files',
  EBUSY: 'busy',
  EPIPE: 'the reader closed the pipe',
  EADDRINUSE: 'the port is in use',
  EADDRNOTAVAIL: 'no such address on this machine',
  ECONNREFUSED: 'connection refused',
  ENOTFOUND: 'host not found',
};

/** The system error code of an error, if it has one. */
function systemErrorCode(err: unknown): string | undefined {
  const code = (err as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? code : undefined;
}

/**
 * Words for a system error: `context` words first (where a code means something more precise, e.g. ENOENT
 * "no such directory" when creating a file), then the common words, else the error's own message.
 */
export function systemErrorWords(err: unknown, context: Readonly<Record<string, string>> = {}): string {
  const code = systemErrorCode(err);
  if (code !== undefined) {
    const words = context[code] ?? WORDS[code];
    if (words !== undefined) return words;
  }
  return err instanceof Error ? err.message : String(err);
}
