/**
 * Accepted frames packed into a Float64Array, to hand a batch of them to another thread without copying objects.
 * Each frame takes FRAME_SLOTS numbers; an absent optional key is NaN (an accepted frame's values are finite).
 * Pure: packing then unpacking gives back an equal frame (doubles are stored exactly, −0 included).
 */
import type { AirspeedKind, Frame } from '../core/frame.js';

export const FRAME_SLOTS = 9;

const KINDS: readonly AirspeedKind[] = ['tas', 'cas', 'ias'];

/** The mark of a frame that follows a reconnect (packFrame's last argument; `true` marks a clock restart). */
export const PACKED_AFTER_RECONNECT = 2;

/** Write the frame at slot `index` of `target`; `newSegment` marks a restart of the computation before it. */
export function packFrame(
  target: Float64Array,
  index: number,
  frame: Frame,
  newSegment: boolean | typeof PACKED_AFTER_RECONNECT,
): void {
  packFrameValues(
    target,
    index,
    frame.tS,
    frame.airspeedKind,
    frame.airspeedMps,
    frame.altM,
    frame.bankDeg ?? NaN,
    frame.nz ?? NaN,
    frame.oatC ?? NaN,
    frame.massKg ?? NaN,
    newSegment,
  );
}

/** packFrame from the frame's values, NaN for an absent optional key. */
export function packFrameValues(
  target: Float64Array,
  index: number,
  tS: number,
  airspeedKind: AirspeedKind,
  airspeedMps: number,
  altM: number,
  bankDeg: number,
  nz: number,
  oatC: number,
  massKg: number,
  newSegment: boolean | typeof PACKED_AFTER_RECONNECT,
): void {
  const o = index * FRAME_SLOTS;
  target[o] = tS;
  target[o + 1] = KINDS.indexOf(airspeedKind);
  target[o + 2] = airspeedMps;
  target[o + 3] = altM;
  target[o + 4] = bankDeg;
  target[o + 5] = nz;
  target[o + 6] = oatC;
  target[o + 7] = massKg;
  target[o + 8] = newSegment === PACKED_AFTER_RECONNECT ? PACKED_AFTER_RECONNECT : newSegment ? 1 : 0;
}

/** The frame at slot `index`, with its keys in the order validation builds them. */
export function unpackFrame(source: Float64Array, index: number): Frame {
  const o = index * FRAME_SLOTS;
  const frame: Frame = {
    tS: source[o]!,
    airspeedKind: KINDS[source[o + 1]!]!,
    airspeedMps: source[o + 2]!,
    altM: source[o + 3]!,
  };
  const bankDeg = source[o + 4]!;
  const nz = source[o + 5]!;
  const oatC = source[o + 6]!;
  const massKg = source[o + 7]!;
  if (bankDeg === bankDeg) frame.bankDeg = bankDeg;
  if (nz === nz) frame.nz = nz;
  if (oatC === oatC) frame.oatC = oatC;
  if (massKg === massKg) frame.massKg = massKg;
  return frame;
}

export function packedNewSegment(source: Float64Array, index: number): boolean {
  return source[index * FRAME_SLOTS + 8] !== 0;
}

/** The frame follows a reconnect (packed with PACKED_AFTER_RECONNECT), not a clock restart. */
export function packedAfterReconnect(source: Float64Array, index: number): boolean {
  return source[index * FRAME_SLOTS + 8] === PACKED_AFTER_RECONNECT;
}
