/**
 * The stateful decoder: bytes or strings in any split → numbered, judged lines. It joins lines split across reads,
 * cuts runaway lines (64 KiB), skips blank lines (not counted), ignores CRLF endings and a UTF-8 BOM, and applies the
 * time gate so that "time not increasing" arrives as a rejected verdict (code `time_not_increasing`).
 */
import { createLineSplitter, DEFAULT_MAX_LINE_BYTES, type RawLine } from './line-splitter.js';
import { parseFrameLine, type FrameVerdict, type LineVerdict } from './frame-line.js';
import { lineTooLong, type Rejected } from './rejections.js';
import { createTimeGate, type TimeGate } from './time-gate.js';

export interface DecodedLine {
  /** 1-based: the line's number in its file, or the count of lines received on a live link. */
  lineNo: number;
  /** The line as text (UTF-8, without its line ending). */
  text: string;
  verdict: LineVerdict;
  /** The frame starts a new segment: the sender's clock restarted. */
  newSegment?: boolean;
}

/** Decode raw bytes of one line to text without line ending or BOM. */
export function lineText(bytes: Buffer): string {
  return withoutLineEnd(bytes.toString('utf8'));
}

/** A decoded line without its CR ending or BOM. */
export function withoutLineEnd(decoded: string): string {
  let text = decoded;
  if (text.charCodeAt(text.length - 1) === 0x0d) text = text.slice(0, -1);
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  return text;
}

export function isBlank(text: string): boolean {
  return text.trim() === '';
}

/** Validation plus the time gate, shared by the live decoder and the file readers. */
export interface LineJudge {
  /** Judge an already validated (or rejected) verdict against the time order. */
  gate<V extends FrameVerdict>(verdict: V): { verdict: V | Rejected; newSegment: boolean };
  /** The time check alone, for an accepted frame's t_s (what gate applies to an accepted verdict). */
  checkTime(tS: number): ReturnType<TimeGate['check']>;
  reset(): void;
}

export function createLineJudge(): LineJudge {
  const timeGate = createTimeGate();
  return {
    gate(verdict) {
      if (!verdict.ok) return { verdict, newSegment: false };
      const order = timeGate.check(verdict.frame.tS);
      if (!order.ok) return { verdict: order, newSegment: false };
      return { verdict, newSegment: order.newSegment };
    },
    checkTime: (tS) => timeGate.check(tS),
    reset: () => timeGate.reset(),
  };
}

export interface FrameDecoder {
  push(chunk: Buffer | string): DecodedLine[];
  end(): DecodedLine[];
  /** Start afresh (after a reconnect or a seek): the partial line is dropped and the time check restarts. */
  reset(): void;
  /** Judge one complete line that was split elsewhere (a source's own splitter); null for a blank line. */
  judgeLine(line: RawLine): DecodedLine | null;
  /** Restart only the time check (a reconnect), keeping the line count. */
  resetTime(): void;
}

export function createFrameDecoder(options: { maxLineBytes?: number } = {}): FrameDecoder {
  const maxLineBytes = options.maxLineBytes ?? DEFAULT_MAX_LINE_BYTES;
  let splitter = createLineSplitter(maxLineBytes);
  const judge = createLineJudge();
  let lineNo = 0;

  function judgeLine(line: RawLine): DecodedLine | null {
    const text = lineText(line.bytes);
    if (!line.cut && isBlank(text)) return null;
    lineNo += 1;
    const parsed: LineVerdict = line.cut ? lineTooLong(maxLineBytes) : parseFrameLine(text);
    const { verdict, newSegment } = judge.gate(parsed);
    const decoded: DecodedLine = { lineNo, text, verdict };
    if (newSegment) decoded.newSegment = true;
    return decoded;
  }

  function judgeAll(lines: RawLine[]): DecodedLine[] {
    const out: DecodedLine[] = [];
    for (const line of lines) {
      const decoded = judgeLine(line);
      if (decoded) out.push(decoded);
    }
    return out;
  }

  return {
    push: (chunk) => judgeAll(splitter.push(chunk)),
    end: () => judgeAll(splitter.end()),
    reset() {
      splitter = createLineSplitter(maxLineBytes);
      judge.reset();
    },
    judgeLine,
    resetTime: () => judge.reset(),
  };
}
