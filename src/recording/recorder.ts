/**
 * Writes every received line, verbatim and before it is parsed, to a recording file (format: ./format.ts).
 * Buffered and flushed at least every FLUSH_INTERVAL_MS — by a timer, and by the writes themselves when the event
 * loop is busy (a flood of lines) — and on close (the CLI closes on SIGINT, SIGTERM, SIGHUP and normal exit), so a
 * hard kill loses at most the last second. Writes are synchronous and small so that a flush in a signal handler
 * completes before the process exits.
 *
 * A write error (disk full) never stops the caller: the records not written are kept and retried at the next flush,
 * up to MAX_UNWRITTEN_BYTES; beyond it the oldest whole records are dropped and counted. Only whole records ever
 * reach the file: a record the disk took only part of is cut back off (regular files) or finished before anything
 * else is written (pipes, devices), so two records are never merged. Where records were dropped, a
 * `#not-recorded` line says how many lines are missing there, and error() keeps saying how many in all.
 */
import { closeSync, fstatSync, fsyncSync, ftruncateSync, openSync, writeSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import { InputError } from '../errors.js';
import type { ReceivedLine, SourceStatus } from '../sources/source.js';
import { encodeHeader, encodeLine, encodeLinkEvent, encodeNotRecorded } from './format.js';
import { systemErrorWords } from '../system-errors.js';

export const FLUSH_INTERVAL_MS = 500;
/** Data held while the disk refuses writes; beyond it the oldest records are dropped (and counted). */
export const MAX_UNWRITTEN_BYTES = 16 * 1024 * 1024;
/** Most bytes handed to one write call. */
const WRITE_BATCH_BYTES = 1024 * 1024;

/** The file calls the recorder makes (replaced in tests to inject faults). */
export interface RecorderIo {
  /** Like fs.writeSync: returns the bytes written (may be fewer than asked) or throws the system error. */
  write(fd: number, buffer: Buffer, offset: number, length: number, position: number | null): number;
  truncate(fd: number, length: number): void;
  /** Whether the file is a regular file (written at known offsets); default: fstat. */
  isRegularFile?(fd: number): boolean;
}

const systemIo: RecorderIo = {
  write: (fd, buffer, offset, length, position) => writeSync(fd, buffer, offset, length, position),
  truncate: (fd, length) => ftruncateSync(fd, length),
};

export interface RecorderOptions {
  path: string;
  /** Overwrite an existing file. */
  force?: boolean;
  sourceLabel: string;
  clock?: () => number;
  /** Flush timer period (tests). */
  flushIntervalMs?: number;
  /** Cap of the unwritten backlog, bytes (tests). */
  maxUnwrittenBytes?: number;
  /** File calls (tests inject faults here). */
  io?: RecorderIo;
}

export interface Recorder {
  readonly path: string;
  writeLine(line: ReceivedLine): void;
  writeStatus(status: SourceStatus): void;
  flush(): void;
  /** Flush and close; idempotent. Lines that still cannot be written are counted as not written. */
  close(): void;
  /** Bytes written to the file so far. */
  bytesWritten(): number;
  /**
   * What went wrong with the writes, or null when all is well: the last write error while writes fail, and the
   * count of lines not written once any were dropped (even after writing works again).
   */
  error(): string | null;
  /** Received lines that could not be written (dropped from the backlog, or still unwritten at close). */
  linesNotWritten(): number;
}

interface PendingRecord {
  bytes: Buffer;
  /** A received line (counted when dropped); false for the header, link events and marks. */
  line: boolean;
  /** Stands for dropped lines: a #not-recorded record (its bytes are made when it is first written). Never dropped. */
  mark?: { lines: number; why: string };
}

function describeWriteError(err: unknown): string {
  const code = (err as NodeJS.ErrnoException).code;
  if (code === 'ENOSPC') return 'disk full';
  if (code === 'EDQUOT') return 'disk quota exceeded';
  if (code === 'EIO') return 'input/output error';
  if (code === 'EBADF') return 'file closed';
  return (err as Error).message;
}

export function openRecorder(options: RecorderOptions): Recorder {
  const clock = options.clock ?? Date.now;
  const io = options.io ?? systemIo;
  const maxUnwritten = options.maxUnwrittenBytes ?? MAX_UNWRITTEN_BYTES;
  const flushIntervalMs = options.flushIntervalMs ?? FLUSH_INTERVAL_MS;
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
  // A regular file is written at known offsets so that a record cut by a full disk can be cut back off.
  let seekable = false;
  try {
    seekable = io.isRegularFile ? io.isRegularFile(fd) : fstatSync(fd).isFile();
  } catch {
    // Unknown kind of file: write in sequence.
  }
  let position = 0;

  let pending: PendingRecord[] = [{ bytes: encodeHeader(options.sourceLabel, clock()), line: false }];
  let pendingBytes = pending[0]!.bytes.length;
  // Not seekable: bytes of pending[0] already in the file (it must be finished before anything else is written).
  let headWritten = 0;
  let written = 0;
  let failure: string | null = null;
  let lastWhy = '';
  let linesNotWritten = 0;
  let closed = false;
  let lastFlushMs = performance.now();

  const dropOldest = (): void => {
    // pending[0] is never dropped when part of it is already in the file; marks are never dropped.
    let at = headWritten > 0 ? 1 : 0;
    while (pendingBytes > maxUnwritten && at < pending.length - 1) {
      const record = pending[at]!;
      if (record.mark) {
        at += 1;
        continue;
      }
      pendingBytes -= record.bytes.length;
      if (!record.line) {
        pending.splice(at, 1);
        continue;
      }
      linesNotWritten += 1;
      // Dropped lines next to each other share one mark, standing where they were.
      const before = at > 0 ? pending[at - 1] : undefined;
      if (before?.mark && before.bytes.length === 0) {
        before.mark.lines += 1;
        pending.splice(at, 1);
      } else {
        pending[at] = { bytes: Buffer.alloc(0), line: false, mark: { lines: 1, why: lastWhy } };
        at += 1;
      }
    }
  };

  const push = (record: PendingRecord): void => {
    if (closed) return;
    pending.push(record);
    pendingBytes += record.bytes.length;
    if (failure !== null && pendingBytes > maxUnwritten) dropOldest();
    // The timer cannot run while the event loop is busy (a flood): flush on time from here too.
    if (performance.now() - lastFlushMs >= flushIntervalMs) flush();
  };

  /** Write pending records from the front; returns false on a write error. */
  const writeSome = (): boolean => {
    let count = 0;
    let size = 0;
    while (count < pending.length && (count === 0 || size + pending[count]!.bytes.length <= WRITE_BATCH_BYTES)) {
      const record = pending[count]!;
      if (record.mark && record.bytes.length === 0) {
        // Its count is final once its bytes are made (it may be written in part).
        record.bytes = encodeNotRecorded(clock(), record.mark.lines, record.mark.why);
        pendingBytes += record.bytes.length;
      }
      size += record.bytes.length;
      count += 1;
    }
    const batch =
      count === 1
        ? pending[0]!.bytes
        : Buffer.concat(
            pending.slice(0, count).map((r) => r.bytes),
            size,
          );
    let offset = headWritten;
    let error: unknown = null;
    try {
      while (offset < batch.length) {
        const n = io.write(fd, batch, offset, batch.length - offset, seekable ? position + offset - headWritten : null);
        if (n <= 0) throw Object.assign(new Error('no progress writing'), { code: 'EIO' });
        offset += n;
      }
    } catch (err) {
      error = err;
    }
    // Whole records written: remove them; a record written in part is cut back off, or finished later.
    let done = 0;
    let boundary = 0;
    while (done < count && boundary + pending[done]!.bytes.length <= offset) {
      boundary += pending[done]!.bytes.length;
      done += 1;
    }
    const removed = pending.splice(0, done);
    for (const r of removed) pendingBytes -= r.bytes.length;
    const newBytes = boundary - headWritten;
    if (seekable) {
      position += Math.max(0, newBytes);
      written += Math.max(0, newBytes);
      headWritten = 0;
      if (offset > boundary) {
        try {
          io.truncate(fd, position);
        } catch {
          // The cut record stays; the next write at `position` overwrites it.
        }
      }
    } else {
      written += offset - headWritten;
      headWritten = offset - boundary;
    }
    if (error !== null) {
      lastWhy = describeWriteError(error);
      failure = `recording write failed: ${lastWhy}`;
      return false;
    }
    return true;
  };

  const flush = (): void => {
    lastFlushMs = performance.now();
    if (fd < 0) return;
    while (pending.length > 0) {
      if (!writeSome()) {
        dropOldest();
        return;
      }
    }
    failure = null;
  };

  const timer = setInterval(flush, flushIntervalMs);
  timer.unref();

  return {
    path: options.path,
    writeLine: (line) => push({ bytes: encodeLine(line.receivedAtMs, line.bytes, line.cut), line: true }),
    writeStatus(status) {
      if (status.kind === 'open' || status.kind === 'lost' || status.kind === 'ended')
        push({ bytes: encodeLinkEvent(status.atMs, status.kind, status.detail), line: false });
    },
    flush,
    close() {
      if (closed) return;
      flush();
      closed = true;
      clearInterval(timer);
      // Whatever the disk still refuses is lost now: count it.
      for (const r of pending) if (r.line) linesNotWritten += 1;
      pending = [];
      pendingBytes = 0;
      if (seekable) {
        // Leave no cut record at the end of the file.
        try {
          io.truncate(fd, position);
        } catch {
          // Nothing more can be done.
        }
      }
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
    error() {
      const lost = linesNotWritten > 0 ? `${linesNotWritten} lines not written` : '';
      if (failure !== null) return lost ? `${failure}; ${lost}` : failure;
      return lost ? `recording incomplete: ${lost} (${lastWhy})` : null;
    },
    linesNotWritten: () => linesNotWritten,
  };
}
