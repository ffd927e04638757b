/**
 * Builds feature keys as UTF-8 bytes, hashes them (signed MurmurHash3 x86_32,
 * scikit-learn FeatureHasher's rule) and logs each emitted (bucket, signed
 * value, template) triple. Summing is someone else's job (SparseAccumulator):
 * the extractor replays logged features many times, per shared subtree.
 *
 * Hot path: a key is written into one reused byte buffer from pre-encoded
 * pieces (template prefixes, interned labels and words), never built as a JS
 * string; the canonical key string is only decoded when names are kept.
 * The canonical key is the pieces joined by single spaces, so a user can
 * rebuild any key in Python and get the same bucket and sign.
 */
import { murmur3 } from './murmur3.js';
import type { NameBook } from './name-book.js';

const SPACE = 32;
const decoder = new TextDecoder();
const encoder = new TextEncoder();

/** Encodes a constant key piece once (template prefixes, fixed words). */
export function piece(text: string): Uint8Array {
  return encoder.encode(text);
}

export class FeatureSink {
  private buf = new Uint8Array(512);
  private len = 0;
  private readonly mask: number;
  // The log: parallel arrays, grown by doubling; cleared by clear().
  private logBuckets = new Int32Array(1024);
  private logValues = new Float64Array(1024);
  private logTemplates = new Uint8Array(1024);
  private n = 0;
  /** Index of the template now emitting (set by the caller; logged with each feature). */
  template = 0;

  constructor(readonly bits: number, readonly seed: number, readonly names: NameBook | null = null) {
    if (!Number.isInteger(bits) || bits < 1 || bits > 31) throw new RangeError(`expected hash bits from 1 to 31, got ${bits}`);
    this.mask = (2 ** bits - 1) | 0;
  }

  /** Starts a key with its (pre-encoded) prefix, normally the template id and kind. */
  begin(prefix: Uint8Array): this {
    this.len = 0;
    const n = prefix.length;
    if (n > this.buf.length) this.grow(n);
    const buf = this.buf;
    for (let k = 0; k < n; k++) buf[k] = prefix[k];
    this.len = n;
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

  /** Hashes the key built so far and logs `value` (times its sign) at its bucket. */
  emit(value = 1): void {
    const h = murmur3(this.buf, this.len, this.seed);
    const bucket = Math.abs(h) & this.mask; // = bucketOf(h, bits)
    if (this.names) this.names.add(bucket, decoder.decode(this.buf.subarray(0, this.len)));
    if (this.n === this.logBuckets.length) this.growLog();
    this.logBuckets[this.n] = bucket;
    this.logValues[this.n] = h >= 0 ? value : -value;
    this.logTemplates[this.n++] = this.template;
  }

  /** The canonical key built so far (for tests and inspection). */
  currentKey(): string {
    return decoder.decode(this.buf.subarray(0, this.len));
  }

  /** Features logged since the last clear(). */
  get length(): number {
    return this.n;
  }

  /** Log arrays (valid up to `length`, until the next emit or clear). */
  get buckets(): Int32Array {
    return this.logBuckets;
  }

  get values(): Float64Array {
    return this.logValues;
  }

  get templates(): Uint8Array {
    return this.logTemplates;
  }

  clear(): void {
    this.n = 0;
  }

  private grow(need: number): void {
    const b = new Uint8Array(Math.max(need, this.buf.length * 2));
    b.set(this.buf.subarray(0, this.len));
    this.buf = b;
  }

  private growLog(): void {
    const size = this.logBuckets.length * 2;
    const b = new Int32Array(size);
    b.set(this.logBuckets);
    this.logBuckets = b;
    const v = new Float64Array(size);
    v.set(this.logValues);
    this.logValues = v;
    const t = new Uint8Array(size);
    t.set(this.logTemplates);
    this.logTemplates = t;
  }
}
