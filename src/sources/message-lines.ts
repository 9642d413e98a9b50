/**
 * The lines of one complete message (a websocket message, a datagram), read one at a time so that a big message
 * can be handled in slices without first making a buffer per line. Same rules as the stream splitter
 * (decode/line-splitter.ts) fed the message and then ended: split on LF, CR kept, empty lines skipped, a line over
 * the cap comes out cut (its first maxLineBytes bytes, flagged) and the rest of it up to the LF is dropped, and the
 * last line needs no LF — a message ends any partial line; nothing carries over to the next message.
 */
import { DEFAULT_MAX_LINE_BYTES, type RawLine } from '../decode/line-splitter.js';

const LF = 0x0a;
const CR = 0x0d;

export interface MessageLines {
  /** The next line, or null when the message is used up. The bytes are a view into the message. */
  next(): RawLine | null;
  /** Bytes of the message not read yet. */
  remainingBytes(): number;
}

export function readMessageLines(message: Buffer, maxLineBytes: number = DEFAULT_MAX_LINE_BYTES): MessageLines {
  let pos = 0;
  return {
    next() {
      while (pos < message.length) {
        const start = pos;
        const lf = message.indexOf(LF, start);
        const end = lf < 0 ? message.length : lf;
        pos = end + 1;
        const length = end - start;
        if (length === 0 || (length === 1 && message[start] === CR)) continue;
        if (length > maxLineBytes) return { bytes: message.subarray(start, start + maxLineBytes), cut: true };
        return { bytes: message.subarray(start, end), cut: false };
      }
      pos = message.length;
      return null;
    },
    remainingBytes: () => message.length - pos,
  };
}

/** A list of lines already split (a stream chunk) behind the same reader interface. */
export function readLineList(lines: RawLine[]): MessageLines {
  let i = 0;
  return {
    next: () => (i < lines.length ? lines[i++]! : null),
    remainingBytes: () => 0,
  };
}
