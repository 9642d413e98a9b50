/**
 * Accepted frames packed into a Float64Array, to hand a batch of them to another thread without copying objects,
 * and the batch type that crosses (frames and rejected lines). The layout is derived from the frame-key table:
 * the airspeed kind and value, then one number per other key in table order (NaN when absent, 1/0 for true/false),
 * then the new-segment mark. Pure: packing then unpacking gives back an equal frame (doubles are stored exactly,
 * −0 included).
 */
import type { AirspeedKind, Frame } from '../core/frame.js';
import { compileFrameBuilder, compileFrameFiller, FRAME_KEYS } from './frame-keys.js';
import type { RejectCode, Rejected } from './rejections.js';

/** Packed code of each airspeed kind: its index here. */
export const AIRSPEED_KINDS: readonly AirspeedKind[] = ['tas', 'cas', 'ias'];

export const PACKED_AIRSPEED_KIND = 0;
export const PACKED_AIRSPEED = 1;
/** The keys packed one number each after the airspeed, in table order. */
export const PACKED_KEYS: readonly string[] = FRAME_KEYS.filter((r) => r.presence !== 'airspeed').map((r) => r.key);
/** Numbers per frame: airspeed kind and value, the other keys, the new-segment mark. */
export const FRAME_SLOTS = PACKED_AIRSPEED + 1 + PACKED_KEYS.length + 1;

const PACKED_RULES = FRAME_KEYS.filter((r) => r.presence !== 'airspeed');
const PACKED_FIELDS = PACKED_RULES.map((r) => r.field as string);

/** Offset of a (non-airspeed) key's number within a packed frame. */
function packedOffset(key: string): number {
  return PACKED_AIRSPEED + 1 + PACKED_KEYS.indexOf(key);
}

const packedReader = {
  params: ['s', 'o', 'kinds'],
  airspeedKind: `kinds[s[o + ${PACKED_AIRSPEED_KIND}]]`,
  airspeedMps: `s[o + ${PACKED_AIRSPEED}]`,
  value: (rule: { key: string; type: string }) =>
    `s[o + ${packedOffset(rule.key)}]${rule.type === 'boolean' ? ' === 1' : ''}`,
  // NaN marks an absent key.
  present: (rule: { key: string }) => `s[o + ${packedOffset(rule.key)}] === s[o + ${packedOffset(rule.key)}]`,
};
const fillUnpacked = compileFrameFiller<[Float64Array, number, readonly AirspeedKind[]]>(packedReader);

const buildUnpacked = compileFrameBuilder<[Float64Array, number, readonly AirspeedKind[]]>(packedReader);

/** The mark of a frame that follows a reconnect (a `#link` break in a recording), not a clock restart. */
export const PACKED_AFTER_RECONNECT = 2;

/** Write the frame at slot `index` of `target`; `newSegment` marks a restart of the computation before it. */
export function packFrame(
  target: Float64Array,
  index: number,
  frame: Frame,
  newSegment: boolean | typeof PACKED_AFTER_RECONNECT,
): void {
  const o = index * FRAME_SLOTS;
  target[o + PACKED_AIRSPEED_KIND] = AIRSPEED_KINDS.indexOf(frame.airspeedKind);
  target[o + PACKED_AIRSPEED] = frame.airspeedMps;
  const values = frame as unknown as Record<string, number | boolean | undefined>;
  const first = o + PACKED_AIRSPEED + 1;
  for (let p = 0; p < PACKED_FIELDS.length; p++) {
    const v = values[PACKED_FIELDS[p]!];
    target[first + p] = v === undefined ? Number.NaN : v === true ? 1 : v === false ? 0 : v;
  }
  target[o + FRAME_SLOTS - 1] = newSegment === PACKED_AFTER_RECONNECT ? PACKED_AFTER_RECONNECT : newSegment ? 1 : 0;
}

/** The frame at slot `index`, with its keys in the order validation builds them (table order). */
export function unpackFrame(source: Float64Array, index: number): Frame {
  return buildUnpacked(source, index * FRAME_SLOTS, AIRSPEED_KINDS);
}

/**
 * unpackFrame into one frame object that each call overwrites (an absent key is undefined there): for a consumer
 * that keeps no reference to the frame (the frame engine), no object per frame.
 */
export function createFrameUnpacker(): (source: Float64Array, index: number) => Frame {
  const frame = {} as Frame;
  return (source, index) => {
    fillUnpacked(frame, source, index * FRAME_SLOTS, AIRSPEED_KINDS);
    return frame;
  };
}

/** The computation restarts before this frame (a clock restart or a reconnect). */
export function packedNewSegment(source: Float64Array, index: number): boolean {
  return source[index * FRAME_SLOTS + FRAME_SLOTS - 1] !== 0;
}

/** The frame follows a reconnect (packed with PACKED_AFTER_RECONNECT), not a clock restart. */
export function packedAfterReconnect(source: Float64Array, index: number): boolean {
  return source[index * FRAME_SLOTS + FRAME_SLOTS - 1] === PACKED_AFTER_RECONNECT;
}

/**
 * The accepted frames of a batch of lines packed for another thread, and its rejected lines: what the reader of a
 * long file hands to the review worker.
 */
export interface PackedFrameBatch {
  frames: Float64Array<ArrayBuffer>;
  count: number;
  /** The line number of each packed frame (for a frame the frame engine refuses). */
  lineNos: Int32Array<ArrayBuffer>;
  /** Rejected lines in order, REJECT_STRIDE entries each: line number, words, code, key ('' if none), got ('' if none). */
  rejects: Array<number | string>;
}

/** The frame arrays of a packed batch. */
export type PackedArrays = Pick<PackedFrameBatch, 'frames' | 'lineNos'>;

/**
 * Frame arrays a consumer is done with, for the reader to fill again. A batch's arrays are otherwise new memory
 * each time, given back only when the garbage collector next runs; and with little other garbage it runs seldom,
 * so a review held tens of MB of spent batches.
 */
export interface PackedBatchPool {
  /** Give back the arrays of a batch whose frames were all read (the giver uses them no more). */
  give(arrays: PackedArrays): void;
  /** Arrays for at least `capacity` frames (their old numbers are all written over before use), or null. */
  take(capacity: number): PackedArrays | null;
}

export function createPackedBatchPool(limit = 16): PackedBatchPool {
  const spare: PackedArrays[] = [];
  return {
    give(arrays) {
      if (spare.length < limit && arrays.frames.length === arrays.lineNos.length * FRAME_SLOTS) spare.push(arrays);
    },
    take(capacity) {
      // A batch's capacity only grows: smaller arrays will never serve again.
      while (spare.length > 0) {
        const arrays = spare.pop()!;
        if (arrays.lineNos.length >= capacity) return arrays;
      }
      return null;
    },
  };
}

const REJECT_STRIDE = 5;

export function packReject(rejects: Array<number | string>, lineNo: number, r: Rejected): void {
  rejects.push(lineNo, r.reason, r.code, r.key ?? '', r.got ?? '');
}

/** The rejected lines of a packed batch, in order. */
export function unpackRejects(rejects: ReadonlyArray<number | string>): Array<{ lineNo: number; rejected: Rejected }> {
  const out: Array<{ lineNo: number; rejected: Rejected }> = [];
  for (let i = 0; i + REJECT_STRIDE <= rejects.length; i += REJECT_STRIDE) {
    const r: Rejected = { ok: false, reason: rejects[i + 1] as string, code: rejects[i + 2] as RejectCode };
    const key = rejects[i + 3] as string;
    const got = rejects[i + 4] as string;
    if (key !== '') r.key = key;
    if (got !== '') r.got = got;
    out.push({ lineNo: rejects[i] as number, rejected: r });
  }
  return out;
}
