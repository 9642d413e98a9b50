/**
 * One bench client's conversation with `serve`: each message holds one frame or several lines; every line that
 * is not blank is answered, in order, with one margin record or one error object. State (line count, time order,
 * and a frame engine: smoothing, alerts, events, breaks) belongs to the session, so clients are independent.
 * A connection is one stretch of data: its end is the end of the data for the engine.
 *
 * No socket here: the server hands in message bytes and sends out the answers; the recorder is injected.
 */
import type { Aircraft } from '../core/aircraft.js';
import type { LimitEvent } from '../core/events.js';
import { createFrameEngine } from '../core/frame-engine.js';
import type { MarginOptions } from '../core/margins.js';
import type { MarginRecord } from '../core/margin-record.js';
import { createFrameDecoder } from '../decode/frame-decoder.js';
import { createLineSplitter, type RawLine } from '../decode/line-splitter.js';
import { rejectionWords, type RejectCode } from '../decode/rejections.js';
import type { ReceivedLine } from '../sources/source.js';

/** The answer to a line that is not an accepted frame. */
export interface ServeErrorAnswer {
  /** Why the line was refused (the same reasons the monitor shows). */
  error: string;
  /** The stable code of the reason (README lists them). */
  code: RejectCode;
  /** The line's number on this connection (1-based, blank lines not counted); absent for an empty message. */
  line?: number;
  /** The line's t_s when it could be read, so the client can match the answer. */
  t_s?: number;
}

export type ServeAnswer = MarginRecord | ServeErrorAnswer;

/** Where a session keeps the lines it received (a recording file), when recording. */
export interface LineRecorder {
  writeLine(line: ReceivedLine): void;
}

export interface ServeSessionOptions {
  margins: Partial<MarginOptions>;
  recorder?: LineRecorder;
  clock?: () => number;
}

export interface ServeSessionStats {
  lines: number;
  answered: number;
  errors: number;
}

export interface ServeSession {
  /** Answers for one message (text or bytes), in the order of its lines. */
  handleMessage(data: Buffer | string): ServeAnswer[];
  /** Answers for some lines of a message (the server hands a big message in slices); no empty-message rule. */
  handleLines(rawLines: readonly RawLine[], receivedAtMs: number): ServeAnswer[];
  stats(): ServeSessionStats;
  /** The limit events of the session so far (open ones included), as the frame engine made them. */
  events(): readonly LimitEvent[];
  /**
   * The connection closed: open events end, "end_of_data" for a clean close, "link_lost" when the connection
   * dropped; returns every event.
   */
  finish(dropped?: boolean): LimitEvent[];
}

export const EMPTY_MESSAGE_REASON = rejectionWords({ code: 'empty_message' });

export function createServeSession(aircraft: Aircraft, options: ServeSessionOptions): ServeSession {
  const clock = options.clock ?? Date.now;
  const engine = createFrameEngine(aircraft, options.margins);
  const decoder = createFrameDecoder();
  const stats: ServeSessionStats = { lines: 0, answered: 0, errors: 0 };

  const handleLines = (rawLines: readonly RawLine[], receivedAtMs: number): ServeAnswer[] => {
    const answers: ServeAnswer[] = [];
    for (const raw of rawLines) {
      options.recorder?.writeLine({ bytes: raw.bytes, receivedAtMs, cut: raw.cut });
      const decoded = decoder.judgeLine(raw);
      if (!decoded) continue;
      stats.lines++;
      const verdict = decoded.verdict;
      if (!verdict.ok) {
        const answer: ServeErrorAnswer = { error: verdict.reason, code: verdict.code, line: decoded.lineNo };
        const tS = readTime(decoded.text);
        if (tS !== undefined) answer.t_s = tS;
        answers.push(answer);
        stats.errors++;
        continue;
      }
      const rec = engine.push(verdict.frame, decoded);
      if (rec === null) {
        const why = engine.rejection()!;
        answers.push({ error: why.reason, code: why.code, line: decoded.lineNo, t_s: verdict.frame.tS });
        stats.errors++;
        continue;
      }
      answers.push(rec);
      stats.answered++;
    }
    return answers;
  };

  return {
    handleLines,
    handleMessage(data) {
      // A message is complete in itself: its last line needs no newline, and nothing carries over.
      const splitter = createLineSplitter();
      const rawLines = [...splitter.push(data), ...splitter.end()];
      const answers = handleLines(rawLines, clock());
      if (answers.length === 0 && rawLines.every((l) => l.bytes.toString('utf8').trim() === '')) {
        stats.errors++;
        answers.push({ error: EMPTY_MESSAGE_REASON, code: 'empty_message' });
      }
      return answers;
    },
    stats: () => ({ ...stats }),
    events: () => engine.events(),
    finish(dropped = false) {
      if (dropped) engine.breakData('link_lost');
      return engine.finish();
    },
  };
}

/** t_s of a refused line when it is a JSON object with a finite t_s (to help the client match the answer). */
function readTime(text: string): number | undefined {
  // Only a JSON object has a t_s: other text is not parsed (a junk line would cost an exception here).
  if (text.trimStart().charCodeAt(0) !== 0x7b /* { */) return undefined;
  try {
    const obj = JSON.parse(text) as unknown;
    if (obj && typeof obj === 'object' && !Array.isArray(obj)) {
      const t = (obj as Record<string, unknown>)['t_s'];
      if (typeof t === 'number' && Number.isFinite(t)) return t;
    }
  } catch {
    // Not JSON: no time to report.
  }
  return undefined;
}
