/**
 * Writes every received line, verbatim and before it is parsed, to a recording file (format: ./format.ts).
 * Buffered and flushed at least every FLUSH_INTERVAL_MS and on close (the CLI closes on SIGINT, SIGTERM and normal
 * exit), so a hard kill loses at most the last second. A write error (disk full) is kept as `error()` and retried
 * at the next flush; the monitor keeps running. Writes are synchronous and small so that a flush in a signal
 * handler completes before the process exits.
 */
import { closeSync, fsyncSync, openSync, writeSync } from 'node:fs';
import { InputError } from '../errors.js';
import type { ReceivedLine, SourceStatus } from '../sources/source.js';
import { encodeHeader, encodeLine, encodeLinkEvent } from './format.js';
import { systemErrorWords } from '../system-errors.js';

export const FLUSH_INTERVAL_MS = 500;
/** Data held while the disk refuses writes; beyond it the oldest lines are dropped (and counted). */
export const MAX_UNWRITTEN_BYTES = 16 * 1024 * 1024;

export interface RecorderOptions {
  path: string;
  /** Overwrite an existing file. */
  force?: boolean;
  sourceLabel: string;
  clock?: () => number;
  /** Flush timer period (tests). */
  flushIntervalMs?: number;
}

export interface Recorder {
  readonly path: string;
  writeLine(line: ReceivedLine): void;
  writeStatus(status: SourceStatus): void;
  flush(): void;
  /** Flush and close; idempotent. */
  close(): void;
  /** Bytes written to the file so far. */
  bytesWritten(): number;
  /** The last write error, or null. */
  error(): string | null;
}

export function openRecorder(options: RecorderOptions): Recorder {
  const clock = options.clock ?? Date.now;
  let fd: number;
  try {
    // 'wx' refuses an existing file: a flight recording is never overwritten by accident.
    fd = openSync(options.path, options.force ? 'w' : 'wx');
  } catch (err) {
    const code = (err as NodeJS.ErrnoException).code;
    if (code === 'EEXIST')
      throw new InputError([
        `${options.path}: the recording file exists; choose another name or add --force to overwrite it`,
      ]);
    const why = systemErrorWords(err, { ENOENT: 'no such directory' });
    throw new InputError([`${options.path}: cannot create the recording file (${why})`]);
  }
  let pending: Buffer[] = [encodeHeader(options.sourceLabel, clock())];
  let pendingBytes = pending[0]!.length;
  let written = 0;
  let lastError: string | null = null;
  let droppedLines = 0;
  let closed = false;

  const push = (buf: Buffer): void => {
    if (closed) return;
    pending.push(buf);
    pendingBytes += buf.length;
    while (pendingBytes > MAX_UNWRITTEN_BYTES && pending.length > 1) {
      pendingBytes -= pending.shift()!.length;
      droppedLines += 1;
    }
  };

  const flush = (): void => {
    if (pendingBytes === 0 || fd < 0) return;
    const data = Buffer.concat(pending, pendingBytes);
    let offset = 0;
    try {
      while (offset < data.length) offset += writeSync(fd, data, offset, data.length - offset);
      pending = [];
      pendingBytes = 0;
      lastError = null;
    } catch (err) {
      // Keep what was not written for the next attempt.
      pending = [data.subarray(offset)];
      pendingBytes = data.length - offset;
      const why = systemErrorWords(err);
      lastError = `recording write failed: ${why}${droppedLines ? ` (${droppedLines} lines dropped)` : ''}`;
    }
    written += offset;
  };

  const timer = setInterval(flush, options.flushIntervalMs ?? FLUSH_INTERVAL_MS);
  timer.unref();

  return {
    path: options.path,
    writeLine: (line) => push(encodeLine(line.receivedAtMs, line.bytes, line.cut)),
    writeStatus(status) {
      if (status.kind === 'open' || status.kind === 'lost' || status.kind === 'ended')
        push(encodeLinkEvent(status.atMs, status.kind, status.detail));
    },
    flush,
    close() {
      if (closed) return;
      flush();
      closed = true;
      clearInterval(timer);
      try {
        fsyncSync(fd);
      } catch {
        // Not every file supports fsync (pipes, devices); the data is written anyway.
      }
      try {
        closeSync(fd);
      } catch {
        // Already closed by the system: nothing more to do.
      }
      fd = -1;
    },
    bytesWritten: () => written,
    error: () => lastError,
  };
}
