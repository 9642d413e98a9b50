/**
 * Streaming reader for review and replay: NDJSON, CSV (optionally through a mapping file) or a turnmargin
 * recording. Memory does not grow with the file: lines are read through a bounded splitter and yielded one by one.
 * Blank lines are skipped (not counted); lineNo is the line's number in the file.
 */
import { createReadStream, readFileSync, statSync } from 'node:fs';
import { basename, extname } from 'node:path';
import { InputError } from '../cli/errors.js';
import { decodeEntry, RECORDING_MAGIC } from '../recording/format.js';
import { csvRow, splitCsvLine } from './csv.js';
import { createLineJudge, cutReason, isBlank, lineText, type DecodedLine } from './frame-decoder.js';
import { parseFrameLine, validateFrameObject, type LineVerdict } from './frame-line.js';
import { createLineSplitter, DEFAULT_MAX_LINE_BYTES } from './line-splitter.js';
import { applyMapping, parseMapping, type ColumnMapping } from './mapping.js';

export interface FileLine extends DecodedLine {
  /** Receive time (ms since the epoch) for lines read from a recording. */
  receivedAtMs?: number;
  /** A reconnect happened just before this line in the recording: the time check restarted. */
  afterReconnect?: boolean;
}

export type FileFormat = 'ndjson' | 'csv' | 'recording';

export interface ReadFrameOptions {
  mappingPath?: string;
  /** Called now and then with bytes read so far and the file size (for a progress indicator). */
  onProgress?(bytesRead: number, totalBytes: number): void;
}

function describeErrno(err: unknown): string {
  const code = (err as NodeJS.ErrnoException).code;
  if (code === 'ENOENT') return 'no such file';
  if (code === 'EISDIR') return 'is a directory';
  if (code === 'EACCES') return 'permission denied';
  return (err as Error).message;
}

export function loadMappingFile(path: string): ColumnMapping {
  let json: unknown;
  try {
    json = JSON.parse(readFileSync(path, 'utf8').replace(/^\uFEFF/, ''));
  } catch (err) {
    if (err instanceof SyntaxError) throw new InputError([`${basename(path)}: the mapping file is not valid JSON (${err.message})`]);
    throw new InputError([`${path}: cannot read the mapping file (${describeErrno(err)})`]);
  }
  const result = parseMapping(json, basename(path));
  if (!result.ok) throw new InputError(result.problems);
  return result.mapping;
}

function formatFromExtension(path: string): FileFormat | undefined {
  const ext = extname(path).toLowerCase();
  if (ext === '.csv' || ext === '.tsv') return 'csv';
  if (ext === '.ndjson' || ext === '.jsonl' || ext === '.json') return 'ndjson';
  return undefined;
}

/** Reads lines of a file with their 1-based physical numbers, in bounded memory. Blank lines are not yielded. */
async function* physicalLines(path: string, options: ReadFrameOptions): AsyncGenerator<{ physicalNo: number; bytes: Buffer; cut: boolean }> {
  let size = 0;
  try {
    const st = statSync(path);
    if (st.isDirectory()) throw Object.assign(new Error('is a directory'), { code: 'EISDIR' });
    size = st.size;
  } catch (err) {
    throw new InputError([`${path}: cannot read the telemetry file (${describeErrno(err)})`]);
  }
  // A recording line carries up to the cap plus its prefix; allow some room.
  const splitter = createLineSplitter(DEFAULT_MAX_LINE_BYTES + 64);
  const stream = createReadStream(path, { highWaterMark: 64 * 1024 });
  let physicalNo = 0;
  let bytesRead = 0;
  let lastProgress = 0;
  // Empty lines are dropped by the splitter; count them by counting LFs instead.
  try {
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      bytesRead += chunk.length;
      let start = 0;
      const lines = [];
      for (;;) {
        const lf = chunk.indexOf(0x0a, start);
        if (lf < 0) break;
        lines.push(...splitter.push(chunk.subarray(start, lf + 1)).map((l) => ({ ...l, no: physicalNo + 1 })));
        physicalNo += 1;
        start = lf + 1;
      }
      if (start < chunk.length) lines.push(...splitter.push(chunk.subarray(start)).map((l) => ({ ...l, no: physicalNo + 1 })));
      for (const l of lines) yield { physicalNo: l.no, bytes: l.bytes, cut: l.cut };
      if (options.onProgress && bytesRead - lastProgress >= 1 << 20) {
        lastProgress = bytesRead;
        options.onProgress(bytesRead, size);
      }
    }
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError([`${path}: read error after ${physicalNo} lines (${describeErrno(err)})`]);
  }
  for (const l of splitter.end()) yield { physicalNo: physicalNo + 1, bytes: l.bytes, cut: l.cut };
  options.onProgress?.(bytesRead, size);
}

/**
 * Read a telemetry file. The format comes from the first meaningful line: the recording header, a CSV header
 * (a line holding the delimiter that is not a JSON object), otherwise NDJSON; the extension .csv/.ndjson/.jsonl
 * decides when present. Throws InputError when the
 * file or the mapping file cannot be read.
 */
export async function* readFrameFile(path: string, options: ReadFrameOptions = {}): AsyncGenerator<FileLine> {
  const mapping = options.mappingPath !== undefined ? loadMappingFile(options.mappingPath) : undefined;
  const judge = createLineJudge();
  let format: FileFormat | undefined = formatFromExtension(path);
  let header: string[] | undefined;
  let sawOpen = false;
  let reconnectPending = false;
  let first = true;

  const objectVerdict = (obj: unknown): LineVerdict =>
    mapping && obj !== null && typeof obj === 'object' && !Array.isArray(obj)
      ? validateFrameObject(applyMapping(obj as Record<string, unknown>, mapping))
      : validateFrameObject(obj);

  const jsonVerdict = (text: string): LineVerdict => {
    if (!mapping) return parseFrameLine(text);
    let parsed: unknown;
    try {
      parsed = JSON.parse(text.trim());
    } catch {
      return parseFrameLine(text); // names the reason (invalid JSON, noise, NaN)
    }
    return objectVerdict(parsed);
  };

  for await (const { physicalNo, bytes, cut } of physicalLines(path, options)) {
    const text = lineText(bytes);
    if (first && !cut) {
      if (isBlank(text)) continue;
      if (text.startsWith(RECORDING_MAGIC)) {
        format = 'recording';
        first = false;
        continue;
      }
      if (format === undefined && !text.startsWith('#')) {
        // A CSV header holds the delimiter; anything else (JSON, or noise before the first frame) reads as NDJSON.
        format = !text.trimStart().startsWith('{') && text.includes(mapping?.delimiter ?? ',') ? 'csv' : 'ndjson';
      }
      if (!text.startsWith('#')) first = false;
    }

    let verdict: LineVerdict;
    let shown = text;
    let receivedAtMs: number | undefined;
    if (format === 'recording') {
      const entry = decodeEntry(bytes);
      if (entry.kind === 'meta') continue;
      if (entry.kind === 'link') {
        if (entry.state === 'open') {
          if (sawOpen) reconnectPending = true;
          sawOpen = true;
        }
        continue;
      }
      if (entry.kind === 'bad') {
        verdict = { ok: false, reason: entry.reason };
      } else {
        shown = lineText(entry.bytes);
        receivedAtMs = entry.receivedAtMs;
        if (!entry.cut && isBlank(shown)) continue;
        verdict = entry.cut ? { ok: false, reason: cutReason(DEFAULT_MAX_LINE_BYTES) } : jsonVerdict(shown);
      }
    } else if (cut) {
      verdict = { ok: false, reason: cutReason(DEFAULT_MAX_LINE_BYTES) };
    } else if (isBlank(text)) {
      continue;
    } else if (format === 'csv') {
      if (text.startsWith('#')) continue;
      if (header === undefined) {
        header = splitCsvLine(text, mapping?.delimiter ?? ',');
        continue;
      }
      const row = csvRow(header, text, mapping?.delimiter ?? ',');
      verdict = row.ok ? objectVerdict(row.row) : row;
    } else {
      verdict = jsonVerdict(text);
    }

    if (reconnectPending) judge.reset();
    const gated = judge.gate(verdict);
    const line: FileLine = { lineNo: physicalNo, text: shown, verdict: gated.verdict };
    if (gated.newSegment) line.newSegment = true;
    if (receivedAtMs !== undefined) line.receivedAtMs = receivedAtMs;
    if (reconnectPending) {
      line.afterReconnect = true;
      reconnectPending = false;
    }
    yield line;
  }
}
