/**
 * Ascending lists of non-negative integers stored as gaps: the first value
 * itself, then each value minus the one before, as little-endian unsigned
 * integers of the narrowest numpy type that holds every gap (`<u1`, `<u2`,
 * `<u4`). numpy gives the values back with
 * `np.cumsum(np.frombuffer(data, type))`.
 *
 * Why: the bucket lists of a shard (a sentence's buckets, the positions of a
 * vector's entries among them, a count file's buckets) are ascending, and
 * their gaps are small: half the bytes or less than the values as uint32,
 * and bytes that gzip shrinks further.
 *
 * Pure: no node: imports.
 */
import type { MsgpackWriter } from './msgpack.js';

export type GapType = '<u1' | '<u2' | '<u4';

export const GAP_TYPES: readonly GapType[] = ['<u1', '<u2', '<u4'];

/** Bytes per gap of each type. */
export const GAP_WIDTH: Readonly<Record<GapType, number>> = { '<u1': 1, '<u2': 2, '<u4': 4 };

/** The narrowest type for a largest gap of `max`. */
export function gapTypeFor(max: number): GapType {
  return max <= 0xff ? '<u1' : max <= 0xffff ? '<u2' : '<u4';
}

/** The largest gap of a[from … from+n) (strictly ascending, from 0). */
export function largestGap(a: ArrayLike<number>, from = 0, n = a.length - from): number {
  let max = 0;
  let prev = 0;
  for (let k = from, to = from + n; k < to; k++) {
    const g = a[k] - prev;
    if (g > max) max = g;
    prev = a[k];
  }
  return max;
}

let scratch = new Uint32Array(1024);

/** Writes a[from … from+n) as a bin of gaps of type `t` (every gap must fit). */
export function writeGaps(w: MsgpackWriter, a: ArrayLike<number>, from: number, n: number, t: GapType): void {
  if (scratch.length < n) scratch = new Uint32Array(Math.max(n, 2 * scratch.length));
  let prev = 0;
  for (let k = 0; k < n; k++) {
    const x = a[from + k];
    scratch[k] = x - prev;
    prev = x;
  }
  w.binOf(scratch, 0, n, t === '<u1' ? 'u8' : t === '<u2' ? 'u16' : 'u32');
}

/** How many values a bin of gaps of type `t` holds, or -1 when its length is not a multiple of the width. */
export function gapCount(bin: Uint8Array, t: GapType): number {
  const w = GAP_WIDTH[t];
  return bin.byteLength % w === 0 ? bin.byteLength / w : -1;
}

/**
 * Reads a bin of gaps into out[at …]: the values, or a reason they are not
 * strictly ascending values below `limit` (every gap after the first ≥ 1).
 */
export function readGaps(bin: Uint8Array, t: GapType, out: Uint32Array, at: number, limit: number): string | null {
  const n = gapCount(bin, t);
  if (n < 0) return `expected ${t} data (a multiple of ${GAP_WIDTH[t]} bytes), got ${bin.byteLength} bytes`;
  const v = new DataView(bin.buffer, bin.byteOffset, bin.byteLength);
  let x = 0;
  for (let k = 0; k < n; k++) {
    const g = t === '<u1' ? bin[k] : t === '<u2' ? v.getUint16(2 * k, true) : v.getUint32(4 * k, true);
    if (k > 0 && g === 0) return `expected ascending values, got a repeat of ${x} at ${k}`;
    x += g;
    if (x >= limit) return `expected values below ${limit}, got ${x} at ${k}`;
    out[at + k] = x;
  }
  return null;
}

/** A gap type named by a decoded value, or null. */
export function asGapType(v: unknown): GapType | null {
  return typeof v === 'string' && (GAP_TYPES as readonly string[]).includes(v) ? (v as GapType) : null;
}
