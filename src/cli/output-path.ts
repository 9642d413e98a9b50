/**
 * Output files named on the command line (`--record`, `--out`, `--per-frame`, `--plot`, `--events`): one check that
 * every command calls before it starts, and a writer that never leaves a half-written file under the final name.
 */
import { closeSync, lstatSync, openSync, renameSync, statSync, unlinkSync, writeSync, type Stats } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { InputError, UsageError } from '../errors.js';

export interface OutputPathCheck {
  /** The option without dashes, e.g. "record". */
  option: string;
  path: string;
  /** --force was given: an existing regular file may be replaced (never an input, a directory or a FIFO). */
  force: boolean;
  /** Files the command reads; the output may be none of them, by any name (symlink, hard link). */
  inputs?: ReadonlyArray<{ label: string; path: string | undefined }>;
  /** Required file name ending, e.g. ".svg". */
  extension?: string;
}

function statOrNull(path: string): Stats | null {
  try {
    return statSync(path);
  } catch {
    return null;
  }
}

function notRegular(stats: Stats): string | null {
  if (stats.isDirectory()) return 'is a directory; give a file name';
  if (stats.isFIFO()) return 'is a FIFO (named pipe), not a file: writing there would wait for a reader';
  if (stats.isSocket()) return 'is a socket, not a file';
  if (stats.isBlockDevice()) return 'is a disk device, not a file';
  return null; // a regular file, or a character device such as /dev/null (written in place, never replaced)
}

/**
 * Refuse an output path that cannot be what the user meant, before any work starts: an empty name, a wrong
 * extension, a missing directory, a directory/FIFO/socket/disk device, an input file (also through a link), or an
 * existing regular file without --force. A character device (/dev/null) is accepted as it is. Throws UsageError (a usage slip) or InputError (a fact of the file system), both exit 2.
 */
export function checkOutputPath(check: OutputPathCheck): void {
  const { option, path } = check;
  const flag = `--${option} ${path}`;
  if (path.trim() === '') throw new UsageError(`--${option} must not be empty`);
  if (check.extension !== undefined && !path.toLowerCase().endsWith(check.extension)) {
    throw new UsageError(`${flag}: the file name must end in ${check.extension}`);
  }
  const stats = statOrNull(path);
  if (stats === null) {
    let link: Stats | null = null;
    try {
      link = lstatSync(path);
    } catch {
      // nothing there at all: the usual case
    }
    const parent = statOrNull(dirname(path));
    if (link === null && (parent === null || !parent.isDirectory())) {
      throw new InputError([`${flag}: no such directory (${dirname(path)})`]);
    }
    return; // a new file (or a dangling link, which will be created through)
  }
  const why = notRegular(stats);
  if (why !== null) throw new InputError([`${flag}: ${why}`]);
  for (const input of check.inputs ?? []) {
    if (input.path === undefined) continue;
    const other = statOrNull(input.path);
    if (other !== null && other.dev === stats.dev && other.ino === stats.ino) {
      const sameName = resolve(input.path) === resolve(path);
      throw new InputError([
        `${flag}: is ${input.label}${sameName ? '' : ` (${input.path}, by another name)`}; writing there would destroy it` +
          (check.force ? ' (--force does not allow that)' : ''),
      ]);
    }
  }
  if (stats.isCharacterDevice()) return; // /dev/null, a terminal: nothing there to overwrite
  if (!check.force) throw new InputError([`${flag}: the file exists; give --force to overwrite it`]);
}

export interface OutputFile {
  readonly path: string;
  write(text: string): void;
  /** Flush, close and move the finished file to its name. */
  commit(): void;
  /** Remove the unfinished file (no-op after commit). */
  discard(): void;
}

const unfinished = new Set<string>();
let signalsHooked = false;

function removeUnfinished(): void {
  for (const temp of unfinished) {
    try {
      unlinkSync(temp);
    } catch {
      // already gone
    }
  }
  unfinished.clear();
}

/**
 * Interrupted (Ctrl-C, kill): remove the unfinished files, then end as the signal would have. A command that handles
 * the signal itself (it has a listener of its own) keeps control; the files then go at exit.
 */
function hookSignals(): void {
  if (signalsHooked) return;
  signalsHooked = true;
  process.once('exit', removeUnfinished);
  for (const [signal, code] of [
    ['SIGINT', 130],
    ['SIGTERM', 143],
    ['SIGHUP', 129],
  ] as const) {
    process.on(signal, () => {
      if (process.listenerCount(signal) > 1) return;
      removeUnfinished();
      process.exit(code);
    });
  }
}

function describeWriteError(err: unknown): string {
  switch ((err as NodeJS.ErrnoException).code) {
    case 'ENOENT':
      return 'no such directory';
    case 'EISDIR':
      return 'is a directory';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'ENOSPC':
      return 'disk full';
    default:
      return (err as Error).message;
  }
}

/**
 * A derived output file written in large blocks (bounded memory) to a hidden temporary name in the same directory,
 * renamed to its own name by commit(): a reader, or an interrupted run, never sees half a file under that name.
 */
export function createOutputFile(path: string, blockBytes = 256 * 1024): OutputFile {
  // A device (/dev/null, /dev/stdout) is written in place: renaming onto it would replace the device itself.
  const inPlace = statOrNull(path)?.isCharacterDevice() === true;
  const temp = inPlace ? path : join(dirname(path), `.${basename(path)}.${process.pid}.part`);
  let fd: number | null = null;
  let buffer: string[] = [];
  let size = 0;
  let done = false;
  const fail = (err: unknown): never => {
    throw new InputError([`${path}: cannot write (${describeWriteError(err)})`]);
  };
  const flush = (): void => {
    try {
      if (fd === null) {
        if (!inPlace) {
          hookSignals();
          unfinished.add(temp);
        }
        fd = openSync(temp, 'w');
      }
      if (buffer.length > 0) writeSync(fd, buffer.join(''));
    } catch (err) {
      fail(err);
    }
    buffer = [];
    size = 0;
  };
  const closeFd = (): void => {
    if (fd !== null) {
      try {
        closeSync(fd);
      } catch {
        // closing failed: the file is abandoned either way
      }
    }
    fd = null;
  };
  const discard = (): void => {
    if (done) return;
    done = true;
    closeFd();
    if (inPlace) return;
    try {
      unlinkSync(temp);
    } catch {
      // never created
    }
    unfinished.delete(temp);
  };
  return {
    path,
    write(text) {
      buffer.push(text);
      size += text.length;
      if (size >= blockBytes) flush();
    },
    commit() {
      if (done) return;
      try {
        flush();
        closeSync(fd!);
        fd = null;
        if (!inPlace) renameSync(temp, path);
      } catch (err) {
        discard();
        if (err instanceof InputError) throw err;
        fail(err);
      }
      done = true;
      unfinished.delete(temp);
    },
    discard,
  };
}

/** The files a command reads, from its usual options and positional arguments, for checkOutputPath's `inputs`. */
export function inputFilesOf(args: {
  values: Record<string, string | boolean | undefined>;
  positionals: string[];
}): Array<{ label: string; path: string | undefined }> {
  const inputs: Array<{ label: string; path: string | undefined }> = args.positionals.map((p) => ({
    label: 'the input file',
    path: p,
  }));
  for (const option of ['aircraft', 'thresholds', 'mapping', 'plan', 'token-file', 'card']) {
    const value = args.values[option];
    if (typeof value === 'string') inputs.push({ label: `the --${option} file`, path: value });
  }
  return inputs;
}
