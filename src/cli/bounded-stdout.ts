/**
 * The `--no-ui` output of margin records with a bound: a reader slower than the telemetry (a pipe into a slow
 * program, a stalled terminal) never makes the monitor's memory grow without end. While more than
 * maxPendingBytes wait to be taken by the reader, records are not printed but counted ("stdout too slow: N records
 * not printed" on stderr); the recording, upstream, keeps every line. At the end, settle() waits a bounded time
 * for the reader, so that SIGTERM exits promptly even when the reader has stopped reading.
 */

/** Output waiting for the reader beyond which records are dropped from stdout, bytes. */
export const MAX_PENDING_STDOUT_BYTES = 16 * 1024 * 1024;
/** How often the count of records not printed is repeated on stderr while it grows, ms. */
const REPORT_EVERY_MS = 5000;

export interface BoundedOutput {
  /** Print one record (a whole line), or count it as not printed when the reader is too far behind. */
  write(line: string): void;
  /** Records not printed so far. */
  dropped(): number;
  /**
   * Wait until the reader has taken everything, at most timeoutMs. Records still waiting then count as not printed.
   * Resolves true when everything was taken.
   */
  settle(timeoutMs: number): Promise<boolean>;
  /** Stop the periodic report. */
  close(): void;
}

export interface BoundedOutputOptions {
  maxPendingBytes?: number;
  /** Where the count goes while it grows (a line without the newline). */
  report?: (text: string) => void;
}

/** The bound for this run: TURNMARGIN_MAX_PENDING_STDOUT_BYTES (tests) or the default. */
export function maxPendingStdoutBytes(env: NodeJS.ProcessEnv = process.env): number {
  const given = Number(env['TURNMARGIN_MAX_PENDING_STDOUT_BYTES']);
  return Number.isInteger(given) && given > 0 ? given : MAX_PENDING_STDOUT_BYTES;
}

export function createBoundedOutput(
  stream: NodeJS.WritableStream & { writableLength?: number },
  options: BoundedOutputOptions = {},
): BoundedOutput {
  const maxPending = options.maxPendingBytes ?? MAX_PENDING_STDOUT_BYTES;
  let dropped = 0;
  let reported = 0;
  // Records handed to the stream whose write has not completed yet.
  let inFlight = 0;
  const done = (): void => {
    inFlight -= 1;
  };
  const timer = options.report
    ? setInterval(() => {
        if (dropped > reported) {
          reported = dropped;
          options.report!(`stdout too slow: ${dropped} records not printed so far (the recording keeps everything)`);
        }
      }, REPORT_EVERY_MS)
    : undefined;
  timer?.unref();

  return {
    write(line) {
      if ((stream.writableLength ?? 0) > maxPending) {
        if (dropped === 0 && options.report) {
          options.report('stdout too slow: margin records are not printed while the reader catches up');
        }
        dropped += 1;
        return;
      }
      inFlight += 1;
      stream.write(line, done);
    },
    dropped: () => dropped,
    async settle(timeoutMs) {
      const deadline = Date.now() + timeoutMs;
      while (inFlight > 0 && (stream.writableLength ?? 0) > 0 && Date.now() < deadline) {
        await new Promise((resolve) => setTimeout(resolve, 20));
      }
      if ((stream.writableLength ?? 0) > 0 && inFlight > 0) {
        dropped += inFlight;
        inFlight = 0;
        return false;
      }
      return true;
    },
    close() {
      if (timer) clearInterval(timer);
    },
  };
}
