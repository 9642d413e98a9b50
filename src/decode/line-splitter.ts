/**
 * Splits a byte stream into lines on LF, whatever the chunking. Bytes are kept verbatim (a CR before the LF stays
 * in the line) so that a recording holds exactly what was received. A line longer than maxLineBytes is cut: its
 * first maxLineBytes bytes come out flagged `cut`, the rest up to the next LF is dropped — never buffered without
 * bound. Empty lines are dropped (they carry nothing).
 */
export const DEFAULT_MAX_LINE_BYTES = 64 * 1024;

export interface RawLine {
  bytes: Buffer;
  /** The line was longer than the cap and was cut. */
  cut: boolean;
}

export interface LineSplitter {
  push(chunk: Buffer | string): RawLine[];
  /** Flush the unterminated rest as a line (end of file, link lost). */
  end(): RawLine[];
  /** Bytes held for the line in progress. */
  pendingBytes(): number;
  /** True after a cut, until the next LF: bytes pushed are dropped. */
  discarding(): boolean;
  /** The unterminated rest, without consuming it. */
  peekPending(): Buffer;
}

const LF = 0x0a;
const CR = 0x0d;

function isEmpty(bytes: Buffer): boolean {
  return bytes.length === 0 || (bytes.length === 1 && bytes[0] === CR);
}

export function createLineSplitter(maxLineBytes: number = DEFAULT_MAX_LINE_BYTES): LineSplitter {
  let pending: Buffer[] = [];
  let pendingLength = 0;
  // After a cut, bytes are dropped until the next LF.
  let discarding = false;

  function take(): Buffer {
    const bytes = pending.length === 1 ? pending[0]! : Buffer.concat(pending, pendingLength);
    pending = [];
    pendingLength = 0;
    return bytes;
  }

  function append(part: Buffer, out: RawLine[]): void {
    if (discarding || part.length === 0) return;
    const room = maxLineBytes - pendingLength;
    if (part.length <= room) {
      pending.push(part);
      pendingLength += part.length;
      return;
    }
    pending.push(part.subarray(0, room));
    pendingLength += room;
    out.push({ bytes: take(), cut: true });
    discarding = true;
  }

  return {
    push(chunk) {
      const buf = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk;
      const out: RawLine[] = [];
      let start = 0;
      for (;;) {
        const lf = buf.indexOf(LF, start);
        if (lf < 0) break;
        append(buf.subarray(start, lf), out);
        if (discarding) {
          discarding = false;
        } else {
          const bytes = take();
          if (!isEmpty(bytes)) out.push({ bytes: Buffer.from(bytes), cut: false });
        }
        start = lf + 1;
      }
      // Copy the tail: the caller may reuse its buffer.
      if (start < buf.length) append(Buffer.from(buf.subarray(start)), out);
      return out;
    },
    end() {
      const wasDiscarding = discarding;
      discarding = false;
      const bytes = take();
      return wasDiscarding || isEmpty(bytes) ? [] : [{ bytes, cut: false }];
    },
    pendingBytes: () => pendingLength,
    discarding: () => discarding,
    peekPending: () => (pending.length === 1 ? pending[0]! : Buffer.concat(pending, pendingLength)),
  };
}
