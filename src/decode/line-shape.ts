/**
 * Runs of NDJSON frame lines written alike, read straight into a packed batch (frame-batch.ts). A sender writes the
 * same keys in the same order with the same spacing line after line, so the bytes between the values (`{"t_s":`,
 * `,"tas_mps":`, … `}`) can be learned from one accepted line — the line's shape — and checked byte for byte on the
 * next ones, without looking a key up or building anything: each value is read into its packed slot and checked
 * against its bounds there. A line that differs in any way (another key order, spacing, a string or a null where
 * the shape cannot take one, a value out of bounds, a line too long, anything after the closing brace) ends the run:
 * the caller judges it the usual way (acceptAsciiFrameBytes, then JSON.parse and the schema), with the same verdict
 * as ever, and an accepted line becomes the new shape.
 *
 * Each learned shape is also compiled into a reader of its own (compileShapeTaker): the same steps with the shape's
 * literals, rows and bounds written in as constants, which reads a line in about half the time of the table-driven
 * loop. The table-driven loop stays for the lines the compiled reader leaves to it (an exponent, many digits) and
 * for shapes past the compiled ones; the tests hold the two to the same results.
 *
 * Same verdicts as scanFlatFrameBytes + the compiled check for the lines it takes: the numbers come from the same
 * scanJsonNumber (JSON.parse's values), the bounds are the table's, a frame key occurs at most once in a shape (so no
 * duplicate to resolve), keys outside the table are passed over as the scan does (numbers in JSON's grammar, strings
 * without escapes, null, true, false), and the presence rules (required keys, exactly one airspeed, an attitude
 * key) are checked per line.
 */
import { FRAME_SLOTS, PACKED_AIRSPEED, PACKED_AIRSPEED_KIND, PACKED_KEYS, AIRSPEED_KINDS } from './frame-batch.js';
import { FRAME_KEYS } from './frame-keys.js';
import { frameKeyAt, matchesWord, plainJsonStringEnd, scanJsonNumber, skipJsonSpace } from './frame-line.js';
import type { Rejected } from './rejections.js';

/** Where a run writes and what it needs from its reader: the batch being filled and the time check. */
export interface PackedRun {
  frames: Float64Array<ArrayBuffer>;
  lineNos: Int32Array<ArrayBuffer>;
  /** Frames packed so far in `frames`. */
  count: number;
  /** Frames `frames` and `lineNos` have room for. */
  capacity: number;
  /** In: the start of the first line to try; out: the start of the first line not taken. */
  pos: number;
  /** In: the physical number of the line before `pos`; out: that of the last line taken. */
  physicalNo: number;
  /** Makes room for more frames (replacing `frames` and `lineNos` with larger arrays holding the same). */
  grow(): void;
  /** The time check of an accepted frame (the reader's time gate). */
  checkTime(tS: number): { ok: true; newSegment: boolean } | Rejected;
  /** Records a line the time check refused. */
  reject(physicalNo: number, rejected: Rejected): void;
}

const LF = 0x0a;
const CR = 0x0d;
const QUOTE = 0x22;
const COMMA = 0x2c;
const MINUS = 0x2d;
const DIGIT_0 = 0x30;
const DIGIT_9 = 0x39;
const COLON = 0x3a;
const OPEN_BRACE = 0x7b;
const CLOSE_BRACE = 0x7d;

const PRESENCE_REQUIRED = 0;
const PRESENCE_AIRSPEED = 1;
const PRESENCE_ATTITUDE = 2;
const PRESENCE_OPTIONAL = 3;

/** Per row of the table: its packed offset, bounds, type, presence and (airspeed rows) airspeed code. */
const ROW_COUNT = FRAME_KEYS.length;
const rowOffset = Int32Array.from(FRAME_KEYS, (r) =>
  r.presence === 'airspeed' ? PACKED_AIRSPEED : PACKED_AIRSPEED + 1 + PACKED_KEYS.indexOf(r.key),
);
const rowMin = Float64Array.from(FRAME_KEYS, (r) => (r.type === 'number' ? r.min : Number.NaN));
const rowMax = Float64Array.from(FRAME_KEYS, (r) => (r.type === 'number' ? r.max : Number.NaN));
const rowIsBoolean = Uint8Array.from(FRAME_KEYS, (r) => (r.type === 'boolean' ? 1 : 0));
const rowPresence = Uint8Array.from(FRAME_KEYS, (r) =>
  r.presence === 'required'
    ? PRESENCE_REQUIRED
    : r.presence === 'airspeed'
      ? PRESENCE_AIRSPEED
      : r.presence === 'attitude'
        ? PRESENCE_ATTITUDE
        : PRESENCE_OPTIONAL,
);
const rowSpeedCode = Float64Array.from(FRAME_KEYS, (r) =>
  r.presence === 'airspeed' ? AIRSPEED_KINDS.indexOf(r.field as (typeof AIRSPEED_KINDS)[number]) : Number.NaN,
);
const T_OFFSET = rowOffset[FRAME_KEYS.findIndex((r) => r.key === 't_s')]!;
/** The packed offsets a frame of any shape writes: the airspeed kind and value and every packed key. */
const ALL_OFFSETS = [PACKED_AIRSPEED_KIND, PACKED_AIRSPEED, ...PACKED_KEYS.map((_k, p) => PACKED_AIRSPEED + 1 + p)];

/** A shape has at most this many members and literal bytes (longer lines are rare enough for the usual path). */
const MAX_MEMBERS = 64;
const MAX_LITERAL_BYTES = 4096;
/** 10^0 … 10^22, exact doubles (see scanJsonNumber). */
const POWERS_OF_TEN = Float64Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));
const EXACT_DIGITS = 15;
const DOT = 0x2e;
const REQUIRED_ROWS = FRAME_KEYS.flatMap((r, row) => (r.presence === 'required' ? [row] : []));
const HAS_ATTITUDE_KEYS = FRAME_KEYS.some((r) => r.presence === 'attitude');

export interface LineShape {
  /**
   * Learns the shape of bytes[start, end): a line that acceptAsciiFrameBytes accepted, `end` just after its closing
   * brace (so a flat object of plain values). A shape with a frame key twice, or too large, is not learned (its
   * lines take the usual path).
   */
  learn(bytes: Uint8Array, start: number, end: number): void;
  /** Whether a shape is learned. */
  learned(): boolean;
  /**
   * Takes the lines from run.pos on while they have the learned shape (blank lines in between counted and passed
   * over), packing their frames into run.frames or recording their time rejections, and stops at the first line it
   * does not take or at lastLf + 1. bytes[run.pos, lastLf] must be whole lines of plain ASCII without DEL, lastLf an
   * LF. A line longer than maxLineBytes (its LF not counted) is not taken.
   */
  take(bytes: Uint8Array, lastLf: number, maxLineBytes: number, run: PackedRun): void;
}

/**
 * A learned shape: the literal bytes before each member's value (from the opening brace or the previous value on)
 * and after the last value (up to the closing brace), and each member's table row (-1 for a key outside the table).
 * The literals also as 32-bit little-endian words, for a literal of 4 bytes or more: the words at 0, 4, 8, … and,
 * for a length not a multiple of 4, the last 4 bytes (overlapping); the words of literal m are
 * [wordStart[m], wordStart[m + 1]). One plain object of typed arrays read by module functions (not closures), so
 * that the hot loop is one function however many readers there are.
 */
interface ShapeState {
  literalBytes: Uint8Array;
  literalStart: Int32Array;
  literalLength: Int32Array;
  memberRow: Int32Array;
  wordAt: Int32Array;
  wordValue: Int32Array;
  wordStart: Int32Array;
  /** Members (0: no shape learned). */
  memberCount: number;
  /** Packed offsets of the keys the shape lacks (NaN at each line), in absentOffsets[0, absentCount). */
  absentOffsets: Int32Array;
  absentCount: number;
  /** The shape's own compiled taker (compileShapeTaker), or null: takeShapedLines reads it from the tables. */
  compiled: ShapeTaker | null;
}

const skipped = new Float64Array(1);

/**
 * A reader's line shape (one per reader: files read side by side each have their own). `compile: false` reads every
 * shape from the tables (takeShapedLines), as a shape past the compiled ones is read: the tests compare the two.
 */
export function createLineShape(options: { compile?: boolean } = {}): LineShape {
  const compile = options.compile !== false;
  const state: ShapeState = {
    literalBytes: new Uint8Array(MAX_LITERAL_BYTES),
    literalStart: new Int32Array(MAX_MEMBERS + 1),
    literalLength: new Int32Array(MAX_MEMBERS + 1),
    memberRow: new Int32Array(MAX_MEMBERS),
    wordAt: new Int32Array(MAX_LITERAL_BYTES),
    wordValue: new Int32Array(MAX_LITERAL_BYTES),
    wordStart: new Int32Array(MAX_MEMBERS + 2),
    memberCount: 0,
    absentOffsets: new Int32Array(ALL_OFFSETS.length),
    absentCount: 0,
    compiled: null,
  };
  return {
    learn: (bytes, start, end) => {
      learnShape(state, bytes, start, end);
      if (compile && state.memberCount > 0) state.compiled = compiledTakerOf(state);
    },
    learned: () => state.memberCount > 0,
    take: (bytes, lastLf, maxLineBytes, run) => {
      const compiled = state.compiled;
      if (compiled === null) return takeShapedLines(state, bytes, lastLf, maxLineBytes, run);
      // The compiled taker leaves the rare steps to this loop, so that it never meets code it has not run before.
      for (;;) {
        const stopped = compiled(bytes, lastLf, maxLineBytes, run);
        if (stopped === TAKEN) return;
        if (stopped === NEEDS_ROOM) run.grow();
        else if (stopped === UNUSUAL_LINE) {
          const linePos = run.pos;
          takeShapedLines(state, bytes, lastLf, maxLineBytes, run, 1);
          if (run.pos === linePos) return; // not taken there either: the caller judges it the usual way
        } else run.reject(run.physicalNo, stopped);
      }
    },
  };
}

function learnShape(state: ShapeState, bytes: Uint8Array, start: number, end: number): void {
  const { literalBytes, literalStart, literalLength, memberRow, wordAt, wordValue, wordStart, absentOffsets } = state;
  state.memberCount = 0;
  state.compiled = null;
  if (bytes[start] !== OPEN_BRACE || bytes[end - 1] !== CLOSE_BRACE) return;
  const seen = new Uint8Array(ROW_COUNT);
  let literalUsed = 0;
  let members = 0;
  let from = start;
  const addLiteral = (to: number): boolean => {
    const length = to - from;
    if (literalUsed + length > MAX_LITERAL_BYTES) return false;
    literalBytes.set(bytes.subarray(from, to), literalUsed);
    literalStart[members] = literalUsed;
    literalLength[members] = length;
    literalUsed += length;
    return true;
  };
  let i = skipJsonSpace(bytes, start + 1, end);
  for (;;) {
    if (bytes[i] !== QUOTE) return;
    const keyEnd = plainJsonStringEnd(bytes, i, end);
    if (keyEnd < 0) return;
    const row = frameKeyAt(bytes, i + 1, keyEnd - i - 2);
    if (row >= 0) {
      if (seen[row] === 1) return;
      seen[row] = 1;
    }
    i = skipJsonSpace(bytes, keyEnd, end);
    if (bytes[i] !== COLON) return;
    i = skipJsonSpace(bytes, i + 1, end);
    if (members === MAX_MEMBERS || !addLiteral(i)) return;
    memberRow[members++] = row;
    const c = bytes[i];
    if (c === QUOTE) i = plainJsonStringEnd(bytes, i, end);
    else if (c === 0x6e /* n */ || c === 0x74 /* t */) i += 4;
    else if (c === 0x66 /* f */) i += 5;
    else i = scanJsonNumber(bytes, i, end, skipped, -1);
    if (i < 0) return;
    from = i;
    i = skipJsonSpace(bytes, i, end);
    if (bytes[i] === COMMA) {
      i = skipJsonSpace(bytes, i + 1, end);
      continue;
    }
    if (i !== end - 1 || !addLiteral(end)) return;
    break;
  }
  // Every line of the shape holds the required keys (as numbers: a null there is not taken).
  if (REQUIRED_ROWS.some((row) => seen[row] !== 1)) return;
  const view = new DataView(literalBytes.buffer);
  let words = 0;
  for (let m = 0; m <= members; m++) {
    wordStart[m] = words;
    const length = literalLength[m]!;
    if (length < 4) continue;
    const add = (k: number): void => {
      wordAt[words] = k;
      wordValue[words++] = view.getInt32(literalStart[m]! + k, true);
    };
    for (let k = 0; k + 4 <= length; k += 4) add(k);
    if (length % 4 !== 0) add(length - 4);
  }
  wordStart[members + 1] = words;
  let absentCount = 0;
  for (const offset of ALL_OFFSETS) {
    let written = false;
    for (let m = 0; m < members; m++) {
      const row = memberRow[m]!;
      if (row >= 0 && (rowOffset[row] === offset || (offset === PACKED_AIRSPEED_KIND && rowSpeedCode[row]! >= 0)))
        written = true;
    }
    if (!written) absentOffsets[absentCount++] = offset;
  }
  state.absentCount = absentCount;
  state.memberCount = members;
}

function takeShapedLines(
  state: ShapeState,
  bytes: Uint8Array,
  lastLf: number,
  maxLineBytes: number,
  run: PackedRun,
  lineLimit = Number.POSITIVE_INFINITY,
): void {
  const { literalBytes, literalStart, literalLength, memberRow, wordAt, wordValue, wordStart, absentOffsets } = state;
  const absentCount = state.absentCount;
  let taken = 0;
  const members = state.memberCount;
  if (members === 0) return;
  const view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  let pos = run.pos;
  let physicalNo = run.physicalNo;
  let count = run.count;
  let frames = run.frames;
  let lineNos = run.lineNos;
  let capacity = run.capacity;
  lines: while (pos <= lastLf) {
    const first = bytes[pos];
    if (first === LF || (first === CR && bytes[pos + 1] === LF)) {
      physicalNo++;
      pos += first === LF ? 1 : 2;
      continue;
    }
    if (taken === lineLimit) break;
    if (count === capacity) {
      run.count = count;
      run.grow();
      frames = run.frames;
      lineNos = run.lineNos;
      capacity = run.capacity;
    }
    const o = count * FRAME_SLOTS;
    let i = pos;
    let speeds = 0;
    let attitudes = 0;
    for (let m = 0; m <= members; m++) {
      const length = literalLength[m]!;
      // A literal holds no LF, so a match ends before lastLf (and the words read stay inside `bytes`).
      if (i + length > lastLf) break lines;
      if (length >= 4) {
        for (let w = wordStart[m]!, last = wordStart[m + 1]!; w < last; w++)
          if (view.getInt32(i + wordAt[w]!, true) !== wordValue[w]) break lines;
      } else {
        const from = literalStart[m]!;
        for (let j = 0; j < length; j++) if (bytes[i + j] !== literalBytes[from + j]) break lines;
      }
      i += length;
      if (m === members) break;
      const row = memberRow[m]!;
      const c = bytes[i]!;
      if ((c >= DIGIT_0 && c <= DIGIT_9) || c === MINUS) {
        if (row < 0) {
          i = scanJsonNumber(bytes, i, lastLf, skipped, -1);
          if (i < 0) break lines;
          continue;
        }
        if (rowIsBoolean[row] === 1) break lines;
        const at = o + rowOffset[row]!;
        // The usual numbers (no exponent, up to 15 significant digits) read here as scanJsonNumber reads them.
        let j = c === MINUS ? i + 1 : i;
        let d = bytes[j]! - DIGIT_0;
        if (!(d >= 0 && d <= 9)) break lines;
        let mantissa = d;
        let digits = d === 0 ? 0 : 1;
        j++;
        if (d !== 0) {
          while ((d = bytes[j]! - DIGIT_0) >= 0 && d <= 9) {
            mantissa = mantissa * 10 + d;
            digits++;
            j++;
          }
        }
        let fractionDigits = 0;
        if (bytes[j] === DOT) {
          const fractionStart = ++j;
          while ((d = bytes[j]! - DIGIT_0) >= 0 && d <= 9) {
            mantissa = mantissa * 10 + d;
            if (mantissa !== 0) digits++;
            j++;
          }
          fractionDigits = j - fractionStart;
          if (fractionDigits === 0) break lines;
        }
        let v: number;
        if ((bytes[j]! | 0x20) === 0x65 /* e or E */ || digits > EXACT_DIGITS || fractionDigits > 22) {
          j = scanJsonNumber(bytes, i, lastLf, frames, at);
          if (j < 0) break lines;
          v = frames[at]!;
        } else {
          const magnitude = fractionDigits === 0 ? mantissa : mantissa / POWERS_OF_TEN[fractionDigits]!;
          v = c === MINUS ? -magnitude : magnitude;
          frames[at] = v;
        }
        i = j;
        if (!(v >= rowMin[row]! && v <= rowMax[row]!)) break lines;
        const presence = rowPresence[row];
        if (presence === PRESENCE_AIRSPEED) {
          speeds++;
          frames[o + PACKED_AIRSPEED_KIND] = rowSpeedCode[row]!;
        } else if (presence === PRESENCE_ATTITUDE) attitudes++;
      } else if (c === 0x6e /* n */) {
        if (!matchesWord(bytes, i, lastLf, 'null')) break lines;
        i += 4;
        if (row < 0) continue;
        const presence = rowPresence[row];
        // A null airspeed might leave another airspeed key to count: the usual path sorts that out.
        if (presence === PRESENCE_REQUIRED || presence === PRESENCE_AIRSPEED) break lines;
        frames[o + rowOffset[row]!] = Number.NaN;
      } else if (c === 0x74 /* t */ || c === 0x66 /* f */) {
        const isTrue = c === 0x74;
        if (!matchesWord(bytes, i, lastLf, isTrue ? 'true' : 'false')) break lines;
        i += isTrue ? 4 : 5;
        if (row < 0) continue;
        if (rowIsBoolean[row] !== 1) break lines;
        frames[o + rowOffset[row]!] = isTrue ? 1 : 0;
      } else if (c === QUOTE && row < 0) {
        i = plainJsonStringEnd(bytes, i, lastLf);
        if (i < 0) break lines;
      } else break lines;
    }
    let lf = i;
    if (bytes[lf] === CR) lf++;
    if (bytes[lf] !== LF || lf - pos > maxLineBytes || speeds !== 1 || (HAS_ATTITUDE_KEYS && attitudes === 0)) break;
    for (let a = 0; a < absentCount; a++) frames[o + absentOffsets[a]!] = Number.NaN;
    taken++;
    physicalNo++;
    pos = lf + 1;
    const order = run.checkTime(frames[o + T_OFFSET]!);
    if (order.ok) {
      frames[o + FRAME_SLOTS - 1] = order.newSegment ? 1 : 0;
      lineNos[count++] = physicalNo;
    } else {
      run.count = count;
      run.reject(physicalNo, order);
    }
  }
  run.pos = pos;
  run.physicalNo = physicalNo;
  run.count = count;
}

/**
 * A taker compiled for one shape: takeShapedLines with the shape's literals, rows and bounds written into it. It
 * returns TAKEN where takeShapedLines returns; before a frame when run.frames is full, NEEDS_ROOM (the caller grows
 * the run and calls again); before a line with a number it leaves to takeShapedLines, UNUSUAL_LINE (the caller takes
 * that line with takeShapedLines and calls again); after a line the time check refused, that check's answer (the
 * caller records it and calls again). Either way run.pos, run.physicalNo and run.count say where it stopped.
 */
type ShapeTaker = (
  bytes: Uint8Array,
  lastLf: number,
  maxLineBytes: number,
  run: PackedRun,
) => typeof TAKEN | typeof NEEDS_ROOM | typeof UNUSUAL_LINE | Rejected;
const TAKEN = 0;
const NEEDS_ROOM = 1;
/** The next line has a number the compiled taker does not read (an exponent, many digits): takeShapedLines reads it. */
const UNUSUAL_LINE = 2;

/**
 * Compiled takers by shape (its literal bytes and rows), shared by every reader: a sender's shape is compiled once.
 * Beyond this many shapes (a file whose lines keep changing shape) the rest are read from the tables, so compiling
 * never costs more than it saves.
 */
const MAX_COMPILED_SHAPES = 64;
const compiledShapes = new Map<string, ShapeTaker>();

function compiledTakerOf(state: ShapeState): ShapeTaker | null {
  const members = state.memberCount;
  let key = '';
  for (let m = 0; m <= members; m++) {
    const from = state.literalStart[m]!;
    key += String.fromCharCode(...state.literalBytes.subarray(from, from + state.literalLength[m]!));
    key += m < members ? `\u0000${state.memberRow[m]}\u0000` : '';
  }
  let taker = compiledShapes.get(key);
  if (taker === undefined && compiledShapes.size < MAX_COMPILED_SHAPES) {
    taker = compileShapeTaker(state);
    compiledShapes.set(key, taker);
  }
  return taker ?? null;
}

/** A number as JavaScript source that reads back as the same double (±Infinity included). */
function numberSource(x: number): string {
  return x === Number.POSITIVE_INFINITY
    ? 'Number.POSITIVE_INFINITY'
    : x === Number.NEGATIVE_INFINITY
      ? 'Number.NEGATIVE_INFINITY'
      : Object.is(x, -0)
        ? '-0'
        : String(x);
}

/**
 * The source of takeShapedLines for one learned shape, unrolled: each literal compared as constant words or bytes,
 * each member's value read with its row's offset, bounds and presence as constants. The same steps in the same
 * order as takeShapedLines (the tests hold the two to the same runs), without a table look-up per member; the number
 * reading, the end of line and the time check are its own, line for line.
 */
function compileShapeTaker(state: ShapeState): ShapeTaker {
  const members = state.memberCount;
  // The usual number (no exponent, up to 15 significant digits), read as takeShapedLines reads it, into
  // frames[at] and v (at null: passed over). Any other number stops before the line (UNUSUAL_LINE).
  const unusual = `{ run.pos = pos; run.physicalNo = physicalNo; run.count = count; return ${UNUSUAL_LINE}; }`;
  const usualNumber = (at: string | null): string[] => [
    '  j = c === 45 ? i + 1 : i;',
    '  d = bytes[j] - 48;',
    '  if (!(d >= 0 && d <= 9)) break lines;',
    '  mantissa = d;',
    '  digits = d === 0 ? 0 : 1;',
    '  j++;',
    '  if (d !== 0) while ((d = bytes[j] - 48) >= 0 && d <= 9) { mantissa = mantissa * 10 + d; digits++; j++; }',
    '  fractionDigits = 0;',
    '  if (bytes[j] === 46) {',
    '    fractionStart = ++j;',
    '    while ((d = bytes[j] - 48) >= 0 && d <= 9) { mantissa = mantissa * 10 + d; if (mantissa !== 0) digits++; j++; }',
    '    fractionDigits = j - fractionStart;',
    '    if (fractionDigits === 0) break lines;',
    '  }',
    `  if ((bytes[j] | 32) === 101 || digits > ${EXACT_DIGITS} || fractionDigits > 22) ${unusual}`,
    ...(at === null
      ? []
      : [
          '  magnitude = fractionDigits === 0 ? mantissa : mantissa / POWERS_OF_TEN[fractionDigits];',
          '  v = c === 45 ? -magnitude : magnitude;',
          `  frames[${at}] = v;`,
        ]),
    '  i = j;',
  ];
  const code: string[] = [];
  let airspeedMembers = 0;
  for (let m = 0; m <= members; m++) {
    const length = state.literalLength[m]!;
    const from = state.literalStart[m]!;
    code.push(`if (i + ${length} > lastLf) break lines;`);
    const mismatches: string[] = [];
    for (let j = 0; j < length; j++) mismatches.push(`bytes[i + ${j}] !== ${state.literalBytes[from + j]}`);
    if (mismatches.length > 0) code.push(`if (${mismatches.join(' || ')}) break lines;`);
    if (length > 0) code.push(`i += ${length};`);
    if (m === members) break;
    const row = state.memberRow[m]!;
    code.push('c = bytes[i];');
    const isNumberStart = '(c >= 48 && c <= 57) || c === 45';
    const nullWord = `if (!(i + 4 <= lastLf && bytes[i + 1] === 117 && bytes[i + 2] === 108 && bytes[i + 3] === 108)) break lines;`;
    const trueWord = `if (!(i + 4 <= lastLf && bytes[i + 1] === 114 && bytes[i + 2] === 117 && bytes[i + 3] === 101)) break lines;`;
    const falseWord =
      `if (!(i + 5 <= lastLf && bytes[i + 1] === 97 && bytes[i + 2] === 108 && bytes[i + 3] === 115 && ` +
      `bytes[i + 4] === 101)) break lines;`;
    if (row < 0) {
      code.push(
        `if (${isNumberStart}) {`,
        ...usualNumber(null),
        '}',
        `else if (c === 110) { ${nullWord} i += 4; }`,
        `else if (c === 116) { ${trueWord} i += 4; }`,
        `else if (c === 102) { ${falseWord} i += 5; }`,
        `else if (c === 34) { i = plainJsonStringEnd(bytes, i, lastLf); if (i < 0) break lines; }`,
        'else break lines;',
      );
      continue;
    }
    const at = `o + ${rowOffset[row]}`;
    const presence = rowPresence[row];
    const onNull =
      presence === PRESENCE_REQUIRED || presence === PRESENCE_AIRSPEED
        ? 'break lines;'
        : `${nullWord} i += 4; frames[${at}] = Number.NaN;`;
    if (rowIsBoolean[row] === 1) {
      code.push(
        `if (${isNumberStart}) break lines;`,
        `else if (c === 110) { ${onNull} }`,
        `else if (c === 116) { ${trueWord} i += 4; frames[${at}] = 1; }`,
        `else if (c === 102) { ${falseWord} i += 5; frames[${at}] = 0; }`,
        'else break lines;',
      );
      continue;
    }
    const counted =
      presence === PRESENCE_AIRSPEED
        ? `frames[o + ${PACKED_AIRSPEED_KIND}] = ${rowSpeedCode[row]};`
        : presence === PRESENCE_ATTITUDE
          ? 'attitudes++;'
          : '';
    if (presence === PRESENCE_AIRSPEED) airspeedMembers++;
    code.push(
      `if (${isNumberStart}) {`,
      ...usualNumber(at),
      `  if (!(v >= ${numberSource(rowMin[row]!)} && v <= ${numberSource(rowMax[row]!)})) break lines;`,
      `  ${counted}`,
      `} else if (c === 110) { ${onNull} }`,
      'else break lines;',
    );
  }
  const absent: string[] = [];
  for (let a = 0; a < state.absentCount; a++) absent.push(`frames[o + ${state.absentOffsets[a]}] = Number.NaN;`);
  const lineEnds =
    `bytes[lf] !== 10 || lf - pos > maxLineBytes` +
    (airspeedMembers !== 1 ? ' || true' : '') +
    (HAS_ATTITUDE_KEYS ? ' || attitudes === 0' : '');
  const source = `
return function takeCompiledShape(bytes, lastLf, maxLineBytes, run) {
  let pos = run.pos;
  let physicalNo = run.physicalNo;
  let count = run.count;
  const frames = run.frames;
  const lineNos = run.lineNos;
  const capacity = run.capacity;
  let c = 0, d = 0, j = 0, mantissa = 0, digits = 0, fractionDigits = 0, fractionStart = 0, magnitude = 0, v = 0;
  lines: while (pos <= lastLf) {
    const first = bytes[pos];
    if (first === 10 || (first === 13 && bytes[pos + 1] === 10)) {
      physicalNo++;
      pos += first === 10 ? 1 : 2;
      continue;
    }
    if (count === capacity) {
      run.pos = pos;
      run.physicalNo = physicalNo;
      run.count = count;
      return ${NEEDS_ROOM};
    }
    const o = count * ${FRAME_SLOTS};
    let i = pos;
    let attitudes = 0;
    ${code.join('\n    ')}
    let lf = i;
    if (bytes[lf] === 13) lf++;
    if (${lineEnds}) break;
    ${absent.join('\n    ')}
    physicalNo++;
    pos = lf + 1;
    const order = run.checkTime(frames[o + ${T_OFFSET}]);
    if (order.ok) {
      frames[o + ${FRAME_SLOTS - 1}] = order.newSegment ? 1 : 0;
      lineNos[count++] = physicalNo;
    } else {
      run.pos = pos;
      run.physicalNo = physicalNo;
      run.count = count;
      return order;
    }
  }
  run.pos = pos;
  run.physicalNo = physicalNo;
  run.count = count;
  return ${TAKEN};
};`;
  // Code made from the shape's own bytes as numbers and the table's constants only: no text of the line goes in.
  const make = new Function('plainJsonStringEnd', 'POWERS_OF_TEN', source) as (...helpers: unknown[]) => ShapeTaker;
  return make(plainJsonStringEnd, POWERS_OF_TEN);
}
