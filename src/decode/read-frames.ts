/**
 * Streaming reader for review and replay: NDJSON, CSV (optionally through a mapping file) or a turnmargin
 * recording. Memory does not grow with the file: lines are read in bounded chunks and yielded one by one
 * (readFrameFile) or a chunk's worth at a time (readFrameBatches).
 * Blank lines are skipped (not counted); lineNo is the line's number in the file.
 */
import { isAscii } from 'node:buffer';
import { createReadStream, readFileSync, statSync } from 'node:fs';
import { basename, extname } from 'node:path';
import { InputError } from '../errors.js';
import { configJsonOrThrow } from '../config-json.js';
import { decodeEntry, RECORDING_MAGIC } from '../recording/format.js';
import {
  FRAME_SLOTS,
  PACKED_AFTER_RECONNECT,
  packFrame,
  packReject,
  type PackedBatchPool,
  type PackedFrameBatch,
} from './frame-batch.js';
import { csvRow, splitCsvLine } from './csv.js';
import { createLineJudge, isBlank, lineText, withoutLineEnd, type DecodedLine } from './frame-decoder.js';
import {
  acceptAsciiFrameBytes,
  acceptedFrameTime,
  judgeAsciiFrameBytes,
  packAcceptedFrame,
  parseAsciiFrameLine,
  parseFrameLine,
  validateFrameObject,
  type FrameVerdict,
  type LineVerdict,
} from './frame-line.js';
import { createLineSplitter, DEFAULT_MAX_LINE_BYTES, type RawLine } from './line-splitter.js';
import { applyMapping, missingColumnProblems, parseMapping, type ColumnMapping } from './mapping.js';
import { createLineShape, type PackedRun } from './line-shape.js';
import { lineTooLong, rejected } from './rejections.js';
import { systemErrorWords } from '../system-errors.js';

export interface FileLine extends DecodedLine {
  /** Receive time (ms since the epoch) for lines read from a recording. */
  receivedAtMs?: number;
  /** A reconnect happened just before this line in the recording: the time check restarted. */
  afterReconnect?: boolean;
}

/** A FileLine whose accepted frame may come without its raw object (readFrameBatches with `raw: false`). */
export type FrameLine = Omit<FileLine, 'verdict'> & { verdict: FrameVerdict };

export type FileFormat = 'ndjson' | 'csv' | 'recording';

export interface ReadFrameOptions {
  mappingPath?: string;
  /** Called now and then with bytes read so far and the file size (for a progress indicator). */
  onProgress?(bytesRead: number, totalBytes: number): void;
  /** readFramePackedBatches: called with the receive time (ms since the epoch) of each accepted frame of a recording. */
  onReceivedAt?(receivedAtMs: number): void;
  /** Bytes per read (tests use small reads to put lines across read boundaries). */
  readChunkBytes?: number;
  /** readFramePackedBatches: where it takes the arrays of each next batch from, if any are there. */
  batchPool?: PackedBatchPool;
}

/** Bytes per read for readers that hold a chunk's lines as objects (a batch of lines per read). */
const LINE_CHUNK_BYTES = 64 * 1024;
/**
 * Bytes per read for readFramePackedBatches, which holds no line objects: a larger read costs less per byte than
 * 64 KiB ones (fewer reads); 1 MiB reads were no faster and raised review's peak RSS by about 30 MB.
 */
const PACKED_CHUNK_BYTES = 1 << 18;

export function loadMappingFile(path: string): ColumnMapping {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    throw new InputError([`${path}: cannot read the mapping file (${systemErrorWords(err)})`]);
  }
  const json = configJsonOrThrow(text, basename(path), 'mapping');
  const result = parseMapping(json, basename(path));
  if (!result.ok) throw new InputError(result.problems);
  return result.mapping;
}

/**
 * Throws the InputError that reading `path` through the mapping would throw at its start: a mapping file that cannot
 * be read or is invalid, a mapped column missing from the CSV header, a file that is not a CSV log with a header.
 * For commands that read the file later or elsewhere (replay's file source) and should refuse it up front.
 */
export async function checkMappingFits(path: string, mappingPath: string): Promise<void> {
  // The checks run on the header and first line: the first chunk's batch is enough.
  for await (const _batch of readFrameBatches(path, { mappingPath })) return;
}

function formatFromExtension(path: string): FileFormat | undefined {
  const ext = extname(path).toLowerCase();
  if (ext === '.csv' || ext === '.tsv') return 'csv';
  if (ext === '.ndjson' || ext === '.jsonl' || ext === '.json') return 'ndjson';
  return undefined;
}

/** One line of a file: its 1-based physical number and its bytes (`block` from `start` to `end`, LF removed). */
export interface PhysicalLine {
  physicalNo: number;
  block: Buffer;
  start: number;
  end: number;
  cut: boolean;
  /** The bytes decoded as UTF-8 (CR and BOM kept), when the line came from a block decoded at once. */
  decoded: string | undefined;
  /** The line is plain ASCII without DEL (checked once for its whole block). */
  ascii: boolean;
}

function lineBytes(line: PhysicalLine): Buffer {
  return line.start === 0 && line.end === line.block.length ? line.block : line.block.subarray(line.start, line.end);
}

/** A recording line carries up to the cap plus its prefix; allow some room. */
const FILE_LINE_CAP_BYTES = DEFAULT_MAX_LINE_BYTES + 64;

/**
 * Takes the lines of physicalBatches as they are cut, in file order, instead of in arrays. `plain` is offered each
 * line of an ASCII block (no DEL) first, by its bytes: when it returns true the line is taken care of and no
 * PhysicalLine is made for it; any other line goes to `line`.
 */
interface LineSink {
  plain(block: Buffer, start: number, end: number, physicalNo: number): boolean;
  line(line: PhysicalLine): void;
  /**
   * Offered first at each line of an ASCII block (no DEL), block[at.pos, lastLf] being whole lines: takes as many
   * lines as it can at once, moving `at` past them (at.physicalNo: the number of the last line taken).
   */
  run?(block: Buffer, lastLf: number, at: LineCursor): void;
}

interface LineCursor {
  pos: number;
  physicalNo: number;
}

/**
 * Reads the lines of a file with their 1-based physical numbers, in bounded memory, one batch per chunk read.
 * Blank lines are not returned.
 *
 * Speed: the complete lines of a chunk are decoded at once and cut out of the text when every byte decodes to one
 * character (ASCII, the usual case), so offsets in the text are byte offsets and the length cap can be checked on
 * the text; otherwise, and for a line running over from the previous chunk or past the cap, the lines go one at a
 * time through the bounded splitter. Decoding a block of whole lines gives the same text as decoding each line: an
 * LF never belongs to a multi-byte sequence. With a sink, the batches are empty: one per chunk read, after its lines
 * went to the sink.
 */
export async function* physicalBatches(
  path: string,
  options: ReadFrameOptions,
  sink?: LineSink,
): AsyncGenerator<PhysicalLine[]> {
  let size: number;
  try {
    const st = statSync(path);
    if (st.isDirectory()) throw Object.assign(new Error('is a directory'), { code: 'EISDIR' });
    size = st.size;
  } catch (err) {
    throw new InputError([`${path}: cannot read the telemetry file (${systemErrorWords(err)})`]);
  }
  const splitter = createLineSplitter(FILE_LINE_CAP_BYTES);
  const stream = createReadStream(path, {
    highWaterMark: options.readChunkBytes ?? (sink ? PACKED_CHUNK_BYTES : LINE_CHUNK_BYTES),
  });
  let physicalNo = 0;
  let bytesRead = 0;
  let lastProgress = 0;

  const emit = (line: PhysicalLine, out: PhysicalLine[]): void => {
    if (sink) sink.line(line);
    else out.push(line);
  };
  const fromSplitter = (lines: RawLine[], out: PhysicalLine[]): void => {
    for (const l of lines) {
      emit(
        {
          physicalNo: physicalNo + 1,
          block: l.bytes,
          start: 0,
          end: l.bytes.length,
          cut: l.cut,
          decoded: undefined,
          ascii: false,
        },
        out,
      );
    }
  };
  /** Lines of chunk[from, to) one at a time through the splitter; `to` is just after an LF or the chunk's end. */
  const oneByOne = (chunk: Buffer, from: number, to: number, out: PhysicalLine[]): void => {
    let start = from;
    for (;;) {
      const lf = chunk.indexOf(0x0a, start);
      if (lf < 0 || lf >= to) break;
      fromSplitter(splitter.push(chunk.subarray(start, lf + 1)), out);
      physicalNo += 1;
      start = lf + 1;
    }
    if (start < to) fromSplitter(splitter.push(chunk.subarray(start, to)), out);
  };
  /** Whole lines of chunk[from, lastLf] decoded at once; returns where it stopped (lastLf + 1 when done). */
  const asBlock = (chunk: Buffer, from: number, lastLf: number, out: PhysicalLine[]): number => {
    if (sink) {
      const del = chunk.indexOf(0x7f, from);
      if ((del < 0 || del > lastLf) && isAscii(chunk.subarray(from, lastLf))) return asciiBlock(chunk, from, lastLf);
    }
    const text = chunk.toString('utf8', from, lastLf);
    if (text.length !== lastLf - from) return from;
    // Plain ASCII without DEL: no line can hold U+007F or U+FFFD (see parseAsciiFrameLine).
    const del = chunk.indexOf(0x7f, from);
    const ascii = (del < 0 || del > lastLf) && isAscii(chunk.subarray(from, lastLf));
    let pos = 0;
    for (;;) {
      let nl = text.indexOf('\n', pos);
      if (nl < 0) nl = text.length;
      const length = nl - pos;
      if (length > FILE_LINE_CAP_BYTES) return from + pos;
      physicalNo += 1;
      if (length > 1 || (length === 1 && text.charCodeAt(pos) !== 0x0d)) {
        if (!(ascii && sink?.plain(chunk, from + pos, from + nl, physicalNo))) {
          emit(
            {
              physicalNo,
              block: chunk,
              start: from + pos,
              end: from + nl,
              cut: false,
              decoded: text.slice(pos, nl),
              ascii,
            },
            out,
          );
        }
      }
      if (nl === text.length) return lastLf + 1;
      pos = nl + 1;
    }
  };
  /**
   * asBlock for a block of plain ASCII (no DEL) when a sink takes the lines: each line is offered by its bytes
   * first, and only a line the sink does not take is decoded (byte offsets are character offsets here).
   */
  const cursor: LineCursor = { pos: 0, physicalNo: 0 };
  const asciiBlock = (chunk: Buffer, from: number, lastLf: number): number => {
    let pos = from;
    for (;;) {
      if (sink!.run !== undefined) {
        cursor.pos = pos;
        cursor.physicalNo = physicalNo;
        sink!.run(chunk, lastLf, cursor);
        pos = cursor.pos;
        physicalNo = cursor.physicalNo;
        if (pos > lastLf) return lastLf + 1;
      }
      let nl = chunk.indexOf(0x0a, pos);
      if (nl < 0 || nl > lastLf) nl = lastLf;
      const length = nl - pos;
      if (length > FILE_LINE_CAP_BYTES) return pos;
      physicalNo += 1;
      if (length > 1 || (length === 1 && chunk[pos] !== 0x0d)) {
        if (!sink!.plain(chunk, pos, nl, physicalNo)) {
          sink!.line({
            physicalNo,
            block: chunk,
            start: pos,
            end: nl,
            cut: false,
            decoded: chunk.toString('latin1', pos, nl),
            ascii: true,
          });
        }
      }
      if (nl === lastLf) return lastLf + 1;
      pos = nl + 1;
    }
  };

  try {
    for await (const chunk of stream as AsyncIterable<Buffer>) {
      bytesRead += chunk.length;
      const out: PhysicalLine[] = [];
      let start = 0;
      if (splitter.pendingBytes() > 0 || splitter.discarding()) {
        // The line in progress from the previous chunk ends at this chunk's first LF.
        const lf = chunk.indexOf(0x0a);
        start = lf < 0 ? chunk.length : lf + 1;
        oneByOne(chunk, 0, start, out);
      }
      const lastLf = chunk.lastIndexOf(0x0a);
      if (lastLf >= start) {
        start = asBlock(chunk, start, lastLf, out);
        if (start <= lastLf) oneByOne(chunk, start, lastLf + 1, out);
        start = lastLf + 1;
      }
      if (start < chunk.length) oneByOne(chunk, start, chunk.length, out);
      if (out.length > 0 || sink) yield out;
      if (options.onProgress && bytesRead - lastProgress >= 1 << 20) {
        lastProgress = bytesRead;
        options.onProgress(bytesRead, size);
      }
    }
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError([`${path}: read error after ${physicalNo} lines (${systemErrorWords(err)})`]);
  }
  const last: PhysicalLine[] = [];
  fromSplitter(splitter.end(), last);
  if (last.length > 0 || sink) yield last;
  options.onProgress?.(bytesRead, size);
}

/**
 * Read a telemetry file. The format comes from the first meaningful line: the recording header, a CSV header
 * (a line holding the delimiter that is not a JSON object), otherwise NDJSON; the extension .csv/.ndjson/.jsonl
 * decides when present. Throws InputError when the
 * file or the mapping file cannot be read.
 */
export async function* readFrameFile(path: string, options: ReadFrameOptions = {}): AsyncGenerator<FileLine> {
  for await (const batch of readFrameBatches(path, options)) yield* batch;
}

/**
 * readFrameFile in batches (the lines of one chunk read at a time, in file order): the same lines, without one
 * await per line. For readers of long files (review, check). With `raw: false` an accepted frame of a plain
 * NDJSON line comes without its raw object, read straight from the bytes (judgeAsciiFrameBytes): the same
 * verdicts, faster.
 */
export function readFrameBatches(path: string, options?: ReadFrameOptions & { raw?: true }): AsyncGenerator<FileLine[]>;
export function readFrameBatches(path: string, options: ReadFrameOptions & { raw: false }): AsyncGenerator<FrameLine[]>;
export async function* readFrameBatches(
  path: string,
  options: ReadFrameOptions & { raw?: boolean } = {},
): AsyncGenerator<FrameLine[]> {
  const reader = createLineReader(path, options.mappingPath, options.raw !== false);
  for await (const batch of physicalBatches(path, options)) {
    const out: FrameLine[] = [];
    for (const physical of batch) {
      const line = reader.judge(physical);
      if (line !== null) out.push(line);
    }
    if (out.length > 0) yield out;
  }
}

/**
 * readFrameBatches for a reader that hands the frames to another thread: each batch's accepted frames packed
 * (packFrame, with the new-segment mark of a clock restart or a reconnect) and its rejected lines with their
 * codes and words (packReject). A plain NDJSON frame line is read from its bytes straight into the batch, without
 * objects; runs of lines of the shape of the last such line are taken at once (line-shape.ts). Reads are 256 KiB.
 */
export async function* readFramePackedBatches(
  path: string,
  options: ReadFrameOptions = {},
): AsyncGenerator<PackedFrameBatch> {
  const reader = createLineReader(path, options.mappingPath, false);
  const shape = createLineShape();
  let rejects: Array<number | string> = [];
  // New arrays (or the pool's) per batch: the consumer may transfer the ones it was given to another thread.
  const packed: PackedRun = {
    frames: new Float64Array(1024 * FRAME_SLOTS),
    lineNos: new Int32Array(1024),
    count: 0,
    capacity: 1024,
    pos: 0,
    physicalNo: 0,
    grow() {
      packed.capacity *= 2;
      const larger = new Float64Array(packed.capacity * FRAME_SLOTS);
      larger.set(packed.frames);
      packed.frames = larger;
      const moreNos = new Int32Array(packed.capacity);
      moreNos.set(packed.lineNos);
      packed.lineNos = moreNos;
    },
    checkTime: (tS) => reader.checkTime(tS),
    reject: (physicalNo, r) => packReject(rejects, physicalNo, r),
  };
  const room = (): void => {
    if (packed.count === packed.capacity) packed.grow();
  };
  const sink: LineSink = {
    plain(block, start, end, physicalNo) {
      if (!reader.plainNdjson() || !acceptAsciiFrameBytes(block, start, end)) return false;
      // Lines like this one are taken by `run` from now on.
      shape.learn(block, start, block[end - 1] === 0x0d ? end - 1 : end);
      const order = reader.checkTime(acceptedFrameTime());
      if (order.ok) {
        room();
        packed.lineNos[packed.count] = physicalNo;
        packAcceptedFrame(packed.frames, packed.count++, order.newSegment);
      } else packReject(rejects, physicalNo, order);
      return true;
    },
    line(physical) {
      const line = reader.judge(physical);
      if (line === null) return;
      if (line.verdict.ok) {
        if (line.receivedAtMs !== undefined) options.onReceivedAt?.(line.receivedAtMs);
        room();
        packed.lineNos[packed.count] = line.lineNo;
        packFrame(
          packed.frames,
          packed.count++,
          line.verdict.frame,
          line.afterReconnect === true ? PACKED_AFTER_RECONNECT : line.newSegment === true,
        );
      } else packReject(rejects, line.lineNo, line.verdict);
    },
    run(block, lastLf, at) {
      if (!shape.learned() || !reader.plainNdjson()) return;
      packed.pos = at.pos;
      packed.physicalNo = at.physicalNo;
      shape.take(block, lastLf, FILE_LINE_CAP_BYTES, packed);
      at.pos = packed.pos;
      at.physicalNo = packed.physicalNo;
    },
  };
  for await (const _chunk of physicalBatches(path, options, sink)) {
    if (packed.count === 0 && rejects.length === 0) continue;
    yield { frames: packed.frames, count: packed.count, lineNos: packed.lineNos, rejects };
    const spare = options.batchPool?.take(packed.capacity) ?? null;
    if (spare !== null) {
      packed.frames = spare.frames;
      packed.lineNos = spare.lineNos;
      packed.capacity = spare.lineNos.length;
    } else {
      packed.frames = new Float64Array(packed.capacity * FRAME_SLOTS);
      packed.lineNos = new Int32Array(packed.capacity);
    }
    packed.count = 0;
    rejects = [];
  }
}

/**
 * The per-line judging of readFrameBatches, with the state carried from line to line (format, header, time).
 * Also the decoding stage of a replay (src/engine/replay.ts), fed the file source's raw lines.
 */
export function createLineReader(path: string, mappingPath: string | undefined, withRaw: boolean) {
  const mapping = mappingPath !== undefined ? loadMappingFile(mappingPath) : undefined;
  const judge = createLineJudge();
  let format: FileFormat | undefined = formatFromExtension(path);
  let header: string[] | undefined;
  let sawOpen = false;
  let reconnectPending = false;
  let first = true;

  /** A mapping names CSV columns: given with any other format it would map nothing, so it is refused up front. */
  const refuseMappingFor = (what: string): never => {
    throw new InputError([
      `${basename(mappingPath!)}: a mapping applies to CSV logs with a header line, but ${basename(path)} ${what}`,
    ]);
  };

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

  const judgeLine = (physical: PhysicalLine): FrameLine | null => {
    const { physicalNo, cut } = physical;
    const text = physical.decoded !== undefined ? withoutLineEnd(physical.decoded) : lineText(lineBytes(physical));
    if (first && !cut) {
      if (isBlank(text)) return null;
      if (text.startsWith(RECORDING_MAGIC)) {
        if (mapping) refuseMappingFor('is a turnmargin recording');
        format = 'recording';
        first = false;
        return null;
      }
      if (format === undefined && !text.startsWith('#')) {
        // A CSV header holds the delimiter; anything else (JSON, or noise before the first frame) reads as NDJSON.
        format = !text.trimStart().startsWith('{') && text.includes(mapping?.delimiter ?? ',') ? 'csv' : 'ndjson';
      }
      if (!text.startsWith('#')) {
        first = false;
        if (mapping && text.trimStart().startsWith('{'))
          refuseMappingFor('is NDJSON (its first line is a JSON object, not a header)');
        if (mapping && format === 'ndjson') {
          refuseMappingFor(
            formatFromExtension(path) === 'ndjson'
              ? 'is NDJSON (by its name)'
              : `has no header line with the mapping's delimiter ${JSON.stringify(mapping.delimiter)} (first line: ${JSON.stringify(text.length > 40 ? `${text.slice(0, 37)}...` : text)})`,
          );
        }
      }
    }

    let verdict: FrameVerdict;
    let shown = text;
    let receivedAtMs: number | undefined;
    if (format === 'recording') {
      const entry = decodeEntry(lineBytes(physical));
      if (entry.kind === 'meta') return null;
      if (entry.kind === 'link') {
        if (entry.state === 'open') {
          if (sawOpen) reconnectPending = true;
          sawOpen = true;
        }
        return null;
      }
      if (entry.kind === 'bad') {
        verdict = rejected({ code: 'bad_record', detail: entry.reason });
      } else {
        shown = lineText(entry.bytes);
        receivedAtMs = entry.receivedAtMs;
        if (!entry.cut && isBlank(shown)) return null;
        verdict = entry.cut ? lineTooLong(DEFAULT_MAX_LINE_BYTES) : jsonVerdict(shown);
      }
    } else if (cut) {
      verdict = lineTooLong(DEFAULT_MAX_LINE_BYTES);
    } else if (isBlank(text)) {
      return null;
    } else if (format === 'csv') {
      if (text.startsWith('#')) return null;
      if (header === undefined) {
        header = splitCsvLine(text, mapping?.delimiter ?? ',');
        if (mapping) {
          const problems = missingColumnProblems(mapping, header, basename(mappingPath!), basename(path));
          if (problems.length > 0) throw new InputError(problems);
        }
        return null;
      }
      const row = csvRow(header, text, mapping?.delimiter ?? ',');
      verdict = row.ok ? objectVerdict(row.row) : row;
    } else {
      verdict =
        mapping || !physical.ascii
          ? jsonVerdict(text)
          : withRaw
            ? parseAsciiFrameLine(text)
            : judgeAsciiFrameBytes(physical.block, physical.start, physical.end, text);
    }

    if (reconnectPending) judge.reset();
    const gated = judge.gate(verdict);
    const line: FrameLine = { lineNo: physicalNo, text: shown, verdict: gated.verdict };
    if (gated.newSegment) line.newSegment = true;
    if (receivedAtMs !== undefined) line.receivedAtMs = receivedAtMs;
    // The reconnect mark goes on the first accepted frame after it (the break it makes needs a frame).
    if (reconnectPending && gated.verdict.ok) {
      line.afterReconnect = true;
      reconnectPending = false;
    }
    return line;
  };

  return {
    judge: judgeLine,
    /** The lines now read are NDJSON frames without a mapping, past the first line, with no reconnect pending. */
    plainNdjson: (): boolean => format === 'ndjson' && !first && !mapping && !reconnectPending,
    /** The time check of an accepted frame judged outside judge(). */
    checkTime: (tS: number) => judge.checkTime(tS),
  };
}
