/**
 * Sums signed values per bucket: an open-addressing table over bucket
 * indices that remembers which slots it touched, so clearing costs what was
 * used, not the table size.
 *
 * Hot path: typed arrays only, no Map; `take` sorts the touched buckets once.
 */
import type { SparseVector } from './sparse-vector.js';

export type { SparseVector };

function slotHash(b: number): number {
  return Math.imul(b, 0x9e3779b1) >>> 7;
}

export class SparseAccumulator {
  private keys = new Int32Array(1024).fill(-1);
  private vals = new Float64Array(1024);
  private touched = new Int32Array(512);
  private nTouched = 0;
  private order = new Uint32Array(512);

  /** Buckets touched since the last clear(). */
  get size(): number {
    return this.nTouched;
  }

  /** Adds `v` at bucket `b`. */
  add(b: number, v: number): void {
    // slot() may rehash and replace `vals`: take the slot first.
    const s = this.slot(b);
    this.vals[s] += v;
  }

  /** Marks bucket `b` as touched (value unchanged). */
  touch(b: number): void {
    this.slot(b);
  }

  /** The value at bucket `b` (0 when untouched). */
  get(b: number): number {
    const keys = this.keys;
    const mask = keys.length - 1;
    let s = slotHash(b) & mask;
    for (;;) {
      const k = keys[s];
      if (k === b) return this.vals[s];
      if (k === -1) return 0;
      s = (s + 1) & mask;
    }
  }

  /** True when bucket `b` was touched since the last clear(). */
  has(b: number): boolean {
    const keys = this.keys;
    const mask = keys.length - 1;
    let s = slotHash(b) & mask;
    for (;;) {
      const k = keys[s];
      if (k === b) return true;
      if (k === -1) return false;
      s = (s + 1) & mask;
    }
  }

  /** Adds `sign` × every logged feature in [from, to) of the given arrays. */
  addAll(buckets: Int32Array, values: Float64Array, from: number, to: number, sign = 1): void {
    for (let k = from; k < to; k++) {
      const s = this.slot(buckets[k]);
      this.vals[s] += sign * values[k];
    }
  }

  /** Touched buckets in ascending order (valid until the next call that changes the table). */
  sortedBuckets(): Uint32Array {
    const n = this.nTouched;
    if (this.order.length < n) this.order = new Uint32Array(n * 2);
    const order = this.order.subarray(0, n);
    for (let k = 0; k < n; k++) order[k] = this.keys[this.touched[k]];
    order.sort();
    return order;
  }

  /** The non-zero entries, sorted by bucket, as a new vector; does not clear. */
  take(round: (x: number) => number = (x) => x): SparseVector {
    const order = this.sortedBuckets();
    let kept = 0;
    for (let k = 0; k < order.length; k++) if (round(this.get(order[k])) !== 0) kept++;
    const idx = new Uint32Array(kept);
    const val = new Float64Array(kept);
    for (let k = 0, o = 0; k < order.length; k++) {
      const v = round(this.get(order[k]));
      if (v !== 0) {
        idx[o] = order[k];
        val[o++] = v;
      }
    }
    return { idx, val };
  }

  clear(): void {
    for (let k = 0; k < this.nTouched; k++) {
      const s = this.touched[k];
      this.keys[s] = -1;
      this.vals[s] = 0;
    }
    this.nTouched = 0;
  }

  private slot(b: number): number {
    const keys = this.keys;
    const mask = keys.length - 1;
    let s = slotHash(b) & mask;
    for (;;) {
      const k = keys[s];
      if (k === b) return s;
      if (k === -1) break;
      s = (s + 1) & mask;
    }
    keys[s] = b;
    if (this.nTouched === this.touched.length) {
      const t = new Int32Array(this.touched.length * 2);
      t.set(this.touched);
      this.touched = t;
    }
    this.touched[this.nTouched++] = s;
    if (this.nTouched * 2 > keys.length) {
      this.rehash();
      return this.slot(b);
    }
    return s;
  }

  private rehash(): void {
    const oldKeys = this.keys;
    const oldVals = this.vals;
    const n = this.nTouched;
    const oldTouched = this.touched.slice(0, n);
    this.keys = new Int32Array(oldKeys.length * 2).fill(-1);
    this.vals = new Float64Array(oldKeys.length * 2);
    const mask = this.keys.length - 1;
    for (let k = 0; k < n; k++) {
      const b = oldKeys[oldTouched[k]];
      let s = slotHash(b) & mask;
      while (this.keys[s] !== -1) s = (s + 1) & mask;
      this.keys[s] = b;
      this.vals[s] = oldVals[oldTouched[k]];
      this.touched[k] = s;
    }
  }
}

/** The summed vector of features logged by a sink (or any bucket/value log). */
export function sumFeatures(buckets: Int32Array, values: Float64Array, n: number, acc = new SparseAccumulator()): SparseVector {
  acc.clear();
  acc.addAll(buckets, values, 0, n);
  const v = acc.take();
  acc.clear();
  return v;
}
