/**
 * A bounded, evenly spread sample of a stream of unknown length: keeps every k-th item, and when the buffer is
 * full drops every other kept item and doubles k. Memory stays at `capacity` items; the sample stays spread over
 * the whole stream, in order, and is deterministic (the same stream gives the same sample).
 */

export interface Decimator<T> {
  push(item: T): void;
  /** The kept items, in stream order. */
  items(): readonly T[];
  /** Items offered so far. */
  seen(): number;
  /** Whether the next item offered will be kept (so a caller can build it only then). */
  keepsNext(): boolean;
  /** Offer an item that would not be kept, without building it (the same as push when keepsNext() is false). */
  skip(): void;
}

export function createDecimator<T>(capacity: number): Decimator<T> {
  if (!(capacity >= 2)) throw new RangeError('decimator capacity must be at least 2');
  let kept: T[] = [];
  let stride = 1;
  let count = 0;
  return {
    push(item) {
      if (count % stride === 0) {
        kept.push(item);
        if (kept.length >= capacity) {
          kept = kept.filter((_, i) => i % 2 === 0);
          stride *= 2;
        }
      }
      count += 1;
    },
    items: () => kept,
    seen: () => count,
    keepsNext: () => count % stride === 0,
    skip() {
      if (count % stride === 0) throw new RangeError('decimator: skip() of an item that would be kept');
      count += 1;
    },
  };
}

/** Median of a list of numbers (mean of the middle two for an even count), or null when empty. */
export function median(values: readonly number[]): number | null {
  if (values.length === 0) return null;
  const sorted = [...values].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  return sorted.length % 2 === 1 ? sorted[mid]! : (sorted[mid - 1]! + sorted[mid]!) / 2;
}
