/**
 * Builds feature keys as UTF-8 bytes, hashes them (signed MurmurHash3 x86_32,
 * scikit-learn FeatureHasher's rule) and sums the values per bucket.
 *
 * Hot path: a key is written into one reused byte buffer from pre-encoded
 * pieces (template prefixes, interned labels and words), never built as a JS
 * string; the canonical key string is only decoded when names are kept.
 * The canonical key is the pieces joined by single spaces, so a user can
 * rebuild any key in Python and get the same bucket and sign.
 */
import { murmur3 } from './murmur3.js';

const SPACE = 32;
const decoder = new TextDecoder();
const encoder = new TextEncoder();

export interface SparseVector {
  /** Bucket indices, ascending, unique. */
  idx: Uint32Array;
  /** Summed signed values, one per index. */
  val: Float32Array;
}

/**
 * Hands out vectors as views into shared chunks: one allocation per chunk
 * instead of one per vector (ArrayBuffer allocation dominated take()).
 */
export class VectorArena {
  private idx = new Uint32Array(0);
  private val = new Float32Array(0);
  private used = 0;

  constructor(private readonly chunk = 1 << 15) {}

  alloc(n: number): SparseVector {
    if (this.used + n > this.idx.length) {
      const size = Math.max(this.chunk, n);
      const buffer = new ArrayBuffer(size * 8);
      this.idx = new Uint32Array(buffer, 0, size);
      this.val = new Float32Array(buffer, size * 4, size);
      this.used = 0;
    }
    const v = { idx: this.idx.subarray(this.used, this.used + n), val: this.val.subarray(this.used, this.used + n) };
    this.used += n;
    return v;
  }
}

/**
 * Keeps, per bucket, a few canonical keys (the `perBucket` smallest in code
 * unit order: unlike "the first seen", that does not depend on which worker
 * saw what, so merged books are deterministic), and counts distinct keys.
 * Holds every distinct key: meant for inspection runs and samples.
 */
export class NameBook {
  readonly byBucket = new Map<number, string[]>();
  private readonly seen = new Set<string>();

  constructor(readonly perBucket: number) {}

  add(bucket: number, key: string): void {
    if (this.seen.has(key)) return;
    this.seen.add(key);
    const list = this.byBucket.get(bucket);
    if (!list) {
      this.byBucket.set(bucket, [key]);
      return;
    }
    if (list.length === this.perBucket && key >= list[list.length - 1]) return;
    let k = list.length;
    while (k > 0 && list[k - 1] > key) k--;
    list.splice(k, 0, key);
    if (list.length > this.perBucket) list.pop();
  }

  /** Every distinct key with its bucket (to merge books from several workers). */
  entries(): [number, string[]][] {
    return [...this.byBucket];
  }

  get keys(): ReadonlySet<string> {
    return this.seen;
  }

  /** Adds another book's keys (bucket of each given by `bucketOfKey`). */
  merge(keys: Iterable<string>, bucketOfKey: (key: string) => number): void {
    for (const k of keys) this.add(bucketOfKey(k), k);
  }

  /** Distinct keys seen, buckets they occupy, and the collision rate 1 − buckets/keys. */
  collisions(): { keys: number; buckets: number; rate: number } {
    const keys = this.seen.size;
    const buckets = this.byBucket.size;
    return { keys, buckets, rate: keys === 0 ? 0 : 1 - buckets / keys };
  }
}

/** Encodes a constant key piece once (template prefixes, fixed words). */
export function piece(text: string): Uint8Array {
  return encoder.encode(text);
}

export class FeatureSink {
  private buf = new Uint8Array(512);
  private len = 0;
  // Open-addressing accumulator: bucket → slot; reset after each take().
  private keys = new Int32Array(4096).fill(-1);
  private vals = new Float64Array(4096);
  private touched = new Int32Array(1024);
  private order = new Uint32Array(1024);
  private nTouched = 0;

  private readonly mask: number;

  constructor(readonly bits: number, readonly seed: number, readonly names: NameBook | null = null) {
    if (!Number.isInteger(bits) || bits < 1 || bits > 31) throw new RangeError(`expected hash bits from 1 to 31, got ${bits}`);
    this.mask = (2 ** bits - 1) | 0;
  }

  /** Starts a key with its (pre-encoded) prefix, normally the template id and kind. */
  begin(prefix: Uint8Array): this {
    this.len = 0;
    this.write(prefix);
    return this;
  }

  /** Appends a space and a pre-encoded piece. */
  add(bytes: Uint8Array): this {
    const n = bytes.length;
    if (this.len + n + 1 > this.buf.length) this.grow(this.len + n + 1);
    const buf = this.buf;
    let o = this.len;
    buf[o++] = SPACE;
    // A loop beats TypedArray.set for pieces this short.
    for (let k = 0; k < n; k++) buf[o++] = bytes[k];
    this.len = o;
    return this;
  }

  /** Appends a space and a string piece (for rare, non-hot pieces). */
  addText(text: string): this {
    return this.add(encoder.encode(text));
  }

  /** Hashes the key built so far and adds `value` (times its sign) to its bucket. */
  emit(value = 1): void {
    const h = murmur3(this.buf, this.len, this.seed);
    const bucket = Math.abs(h) & this.mask; // = bucketOf(h, bits)
    if (this.names) this.names.add(bucket, decoder.decode(this.buf.subarray(0, this.len)));
    const v = h >= 0 ? value : -value;
    if (this.capLen >= 0) {
      if (this.capLen === this.capBuckets.length) {
        const b = new Int32Array(this.capLen * 2);
        b.set(this.capBuckets);
        this.capBuckets = b;
        const c = new Float64Array(this.capLen * 2);
        c.set(this.capValues);
        this.capValues = c;
      }
      this.capBuckets[this.capLen] = bucket;
      this.capValues[this.capLen++] = v;
    }
    this.accumulate(bucket, v);
  }

  // Capture: while on, every (bucket, signed value) emitted is also recorded,
  // so a caller can replay the same features later without rebuilding keys.
  private capBuckets = new Int32Array(256);
  private capValues = new Float64Array(256);
  private capLen = -1;

  startCapture(): void {
    this.capLen = 0;
  }

  /** Stops capturing; returns how many features were captured (read them with capturedBuckets/Values). */
  endCapture(): number {
    const n = Math.max(0, this.capLen);
    this.capLen = -1;
    return n;
  }

  /** The capture buffers (valid until the next startCapture()). */
  get capturedBuckets(): Int32Array {
    return this.capBuckets;
  }

  get capturedValues(): Float64Array {
    return this.capValues;
  }

  /** Adds already-hashed features (from a capture) to the current vector. */
  replay(buckets: Int32Array, values: Float64Array, from = 0, to = buckets.length): void {
    for (let k = from; k < to; k++) this.accumulate(buckets[k], values[k]);
  }

  /** The canonical key built so far (for tests and inspection). */
  currentKey(): string {
    return decoder.decode(this.buf.subarray(0, this.len));
  }

  /** The summed vector since the last take(), sorted by index; resets. */
  take(arena?: VectorArena): SparseVector {
    const n = this.nTouched;
    if (this.order.length < n) this.order = new Uint32Array(n * 2);
    const order = this.order.subarray(0, n);
    for (let k = 0; k < n; k++) order[k] = this.keys[this.touched[k]];
    order.sort();
    const mask = this.keys.length - 1;
    // Values that cancelled to 0 are absent: count the survivors first.
    let kept = 0;
    for (let k = 0; k < n; k++) {
      const b = order[k];
      let s = hashSlot(b) & mask;
      while (this.keys[s] !== b) s = (s + 1) & mask;
      this.touched[k] = s; // reuse: slot of the k-th smallest bucket
      if (this.vals[s] !== 0) kept++;
    }
    let idx: Uint32Array;
    let val: Float32Array;
    if (arena) {
      ({ idx, val } = arena.alloc(kept));
    } else {
      const buffer = new ArrayBuffer(kept * 8);
      idx = new Uint32Array(buffer, 0, kept);
      val = new Float32Array(buffer, kept * 4, kept);
    }
    let o = 0;
    for (let k = 0; k < n; k++) {
      const s = this.touched[k];
      const v = this.vals[s];
      if (v !== 0) {
        idx[o] = order[k];
        val[o++] = v;
      }
      this.keys[s] = -1;
      this.vals[s] = 0;
    }
    this.nTouched = 0;
    return { idx, val };
  }

  private write(bytes: Uint8Array): void {
    const n = bytes.length;
    if (this.len + n > this.buf.length) this.grow(this.len + n);
    const buf = this.buf;
    let o = this.len;
    for (let k = 0; k < n; k++) buf[o++] = bytes[k];
    this.len = o;
  }

  private grow(need: number): void {
    const b = new Uint8Array(Math.max(need, this.buf.length * 2));
    b.set(this.buf.subarray(0, this.len));
    this.buf = b;
  }

  private accumulate(bucket: number, v: number): void {
    const mask = this.keys.length - 1;
    let s = hashSlot(bucket) & mask;
    for (;;) {
      const k = this.keys[s];
      if (k === bucket) {
        this.vals[s] += v;
        return;
      }
      if (k === -1) break;
      s = (s + 1) & mask;
    }
    this.keys[s] = bucket;
    this.vals[s] = v;
    if (this.nTouched === this.touched.length) {
      const t = new Int32Array(this.touched.length * 2);
      t.set(this.touched);
      this.touched = t;
    }
    this.touched[this.nTouched++] = s;
    if (this.nTouched * 2 > this.keys.length) this.rehash();
  }

  private rehash(): void {
    const oldKeys = this.keys;
    const oldVals = this.vals;
    const oldTouched = this.touched.slice(0, this.nTouched);
    this.keys = new Int32Array(oldKeys.length * 2).fill(-1);
    this.vals = new Float64Array(oldKeys.length * 2);
    const mask = this.keys.length - 1;
    for (let k = 0; k < oldTouched.length; k++) {
      const b = oldKeys[oldTouched[k]];
      let s = hashSlot(b) & mask;
      while (this.keys[s] !== -1) s = (s + 1) & mask;
      this.keys[s] = b;
      this.vals[s] = oldVals[oldTouched[k]];
      this.touched[k] = s;
    }
  }
}

function hashSlot(b: number): number {
  return Math.imul(b, 0x9e3779b1) >>> 7;
}

