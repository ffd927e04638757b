/**
 * MessagePack, the subset sheaf writes and reads: nil, booleans, integers,
 * float64, strings, bin, arrays and maps with string keys. Hand-written so
 * that the bytes are fixed by this file alone (integers in their smallest
 * form, as any encoder picks; floats always float64; typed arrays as `bin`
 * holding little-endian data), and so that reading is strict: extension
 * types, non-string map keys and truncated data are refused with the byte
 * offset, never guessed at.
 *
 * Pure: no node: imports.
 */

const encoder = new TextEncoder();
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;

/** Element types `binOf` writes. */
export type BinElement = 'i8' | 'i16' | 'i32' | 'u8' | 'u16' | 'u32' | 'f32' | 'f64';
const BIN_WIDTH: Record<BinElement, number> = { i8: 1, i16: 2, i32: 4, u8: 1, u16: 2, u32: 4, f32: 4, f64: 8 };

export class MsgpackWriter {
  private buf = new Uint8Array(1 << 16);
  private view = new DataView(this.buf.buffer);
  private len = 0;

  constructor() {
    if (!LITTLE_ENDIAN) throw new Error('sheaf writes little-endian typed data and needs a little-endian host');
  }

  reset(): void {
    this.len = 0;
  }

  get length(): number {
    return this.len;
  }

  /** A copy of the bytes written since reset(). */
  bytes(): Uint8Array {
    return this.buf.slice(0, this.len);
  }

  /** A view of the bytes written since reset() (valid until the next write). */
  written(): Uint8Array {
    return this.buf.subarray(0, this.len);
  }

  private ensure(n: number): void {
    if (this.len + n <= this.buf.length) return;
    let size = this.buf.length * 2;
    while (size < this.len + n) size *= 2;
    const b = new Uint8Array(size);
    b.set(this.buf.subarray(0, this.len));
    this.buf = b;
    this.view = new DataView(b.buffer);
  }

  private u8(x: number): void {
    this.buf[this.len++] = x;
  }

  mapHeader(n: number): void {
    this.ensure(5);
    if (n < 16) this.u8(0x80 | n);
    else if (n < 0x10000) { this.u8(0xde); this.view.setUint16(this.len, n); this.len += 2; }
    else { this.u8(0xdf); this.view.setUint32(this.len, n); this.len += 4; }
  }

  arrayHeader(n: number): void {
    this.ensure(5);
    if (n < 16) this.u8(0x90 | n);
    else if (n < 0x10000) { this.u8(0xdc); this.view.setUint16(this.len, n); this.len += 2; }
    else { this.u8(0xdd); this.view.setUint32(this.len, n); this.len += 4; }
  }

  str(s: string): void {
    this.strBytes(encoder.encode(s));
  }

  /** A string given as its UTF-8 bytes (map keys are encoded once, not per record). */
  strBytes(b: Uint8Array): void {
    const n = b.length;
    this.ensure(n + 5);
    if (n < 32) this.u8(0xa0 | n);
    else if (n < 0x100) { this.u8(0xd9); this.u8(n); }
    else if (n < 0x10000) { this.u8(0xda); this.view.setUint16(this.len, n); this.len += 2; }
    else { this.u8(0xdb); this.view.setUint32(this.len, n); this.len += 4; }
    this.buf.set(b, this.len);
    this.len += n;
  }

  nil(): void {
    this.ensure(1);
    this.u8(0xc0);
  }

  bool(b: boolean): void {
    this.ensure(1);
    this.u8(b ? 0xc3 : 0xc2);
  }

  /** Integers in the smallest MessagePack form (as any encoder would pick). */
  int(x: number): void {
    this.ensure(9);
    if (!Number.isSafeInteger(x)) throw new RangeError(`expected a safe integer, got ${x}`);
    if (x >= 0) {
      if (x < 128) this.u8(x);
      else if (x < 0x100) { this.u8(0xcc); this.u8(x); }
      else if (x < 0x10000) { this.u8(0xcd); this.view.setUint16(this.len, x); this.len += 2; }
      else if (x < 0x100000000) { this.u8(0xce); this.view.setUint32(this.len, x); this.len += 4; }
      else { this.u8(0xcf); this.view.setBigUint64(this.len, BigInt(x)); this.len += 8; }
    } else {
      if (x >= -32) this.u8(x & 0xff);
      else if (x >= -128) { this.u8(0xd0); this.view.setInt8(this.len, x); this.len += 1; }
      else if (x >= -32768) { this.u8(0xd1); this.view.setInt16(this.len, x); this.len += 2; }
      else if (x >= -2147483648) { this.u8(0xd2); this.view.setInt32(this.len, x); this.len += 4; }
      else { this.u8(0xd3); this.view.setBigInt64(this.len, BigInt(x)); this.len += 8; }
    }
  }

  float64(x: number): void {
    this.ensure(9);
    this.u8(0xcb);
    this.view.setFloat64(this.len, x);
    this.len += 8;
  }

  bin(data: ArrayBufferView): void {
    const n = data.byteLength;
    this.binHeader(n);
    this.buf.set(new Uint8Array(data.buffer, data.byteOffset, n), this.len);
    this.len += n;
  }

  /**
   * A bin of `n` numbers of `src` from `from` on, as little-endian elements of
   * `type`: the bytes `bin()` writes for the same values in a typed array of
   * that type, without making the typed array (hot: every vector of a shard).
   */
  binOf(src: ArrayLike<number>, from: number, n: number, type: BinElement): void {
    const width = BIN_WIDTH[type];
    this.binHeader(n * width);
    const buf = this.buf;
    const view = this.view;
    let o = this.len;
    const to = from + n;
    switch (type) {
      case 'i8':
      case 'u8':
        for (let k = from; k < to; k++) buf[o++] = src[k];
        break;
      case 'u16':
        for (let k = from; k < to; k++, o += 2) view.setUint16(o, src[k], true);
        break;
      case 'i16':
        for (let k = from; k < to; k++, o += 2) view.setInt16(o, src[k], true);
        break;
      case 'i32':
        for (let k = from; k < to; k++, o += 4) view.setInt32(o, src[k], true);
        break;
      case 'u32':
        for (let k = from; k < to; k++, o += 4) view.setUint32(o, src[k], true);
        break;
      case 'f32':
        for (let k = from; k < to; k++, o += 4) view.setFloat32(o, src[k], true);
        break;
      default:
        for (let k = from; k < to; k++, o += 8) view.setFloat64(o, src[k], true);
    }
    this.len = o;
  }

  /** A bin header for `n` bytes, with room for them. */
  private binHeader(n: number): void {
    this.ensure(n + 5);
    if (n < 0x100) { this.u8(0xc4); this.u8(n); }
    else if (n < 0x10000) { this.u8(0xc5); this.view.setUint16(this.len, n); this.len += 2; }
    else { this.u8(0xc6); this.view.setUint32(this.len, n); this.len += 4; }
  }

  /** Any plain value: null, boolean, number (safe integer or float64), string, Uint8Array (bin), array, object. */
  value(v: unknown): void {
    if (v === null || v === undefined) this.nil();
    else if (typeof v === 'boolean') this.bool(v);
    else if (typeof v === 'number') {
      if (Number.isSafeInteger(v)) this.int(v);
      else this.float64(v);
    } else if (typeof v === 'string') this.str(v);
    else if (ArrayBuffer.isView(v)) this.bin(v);
    else if (Array.isArray(v)) {
      this.arrayHeader(v.length);
      for (const x of v) this.value(x);
    } else if (typeof v === 'object') {
      const keys = Object.keys(v as object);
      this.mapHeader(keys.length);
      for (const k of keys) {
        this.str(k);
        this.value((v as Record<string, unknown>)[k]);
      }
    } else throw new TypeError(`cannot write a ${typeof v} as MessagePack`);
  }
}

/** Why a byte sequence is not the MessagePack we write. */
export class MsgpackError extends Error {
  constructor(readonly offset: number, readonly reason: string, readonly truncated = false) {
    super(`at byte ${offset}: ${reason}`);
    this.name = 'MsgpackError';
  }
}

/** A decoded value: maps come out as objects without a prototype, bins as views into the input. */
export type Decoded = null | boolean | number | string | Uint8Array | Decoded[] | { [key: string]: Decoded };

const decoder = new TextDecoder('utf-8', { fatal: true });

/**
 * Decodes one value at a time from a byte buffer. `decode()` returns the next
 * value; `offset` says where the reader stands, so a stream reader can keep
 * the undecoded tail of a chunk. Throws `MsgpackError` on bad or truncated
 * data (a truncated value leaves `offset` where that value started).
 */
export class MsgpackReader {
  offset = 0;
  private bytes: Uint8Array;
  private view: DataView;
  private readonly keyCache = new Map<number, string>();

  constructor(bytes: Uint8Array, private readonly maxDepth = 64) {
    this.bytes = bytes;
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  }

  /** Goes on reading from new bytes (offset 0), keeping the key cache. */
  load(bytes: Uint8Array): void {
    this.bytes = bytes;
    this.view = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    this.offset = 0;
  }

  get done(): boolean {
    return this.offset >= this.bytes.length;
  }

  /** The next whole value, or throws (offset unchanged on truncation). */
  decode(): Decoded {
    const start = this.offset;
    try {
      return this.value(0);
    } catch (e) {
      this.offset = start;
      throw e;
    }
  }

  private need(n: number): void {
    if (this.offset + n > this.bytes.length) throw new MsgpackError(this.offset, `expected ${n} more byte(s), the data ends (truncated)`, true);
  }

  private value(depth: number): Decoded {
    if (depth > this.maxDepth) throw new MsgpackError(this.offset, `expected at most ${this.maxDepth} levels of nesting`);
    this.need(1);
    const at = this.offset;
    const b = this.bytes[this.offset++];
    const v = this.view;
    if (b <= 0x7f) return b;
    if (b >= 0xe0) return b - 0x100;
    if ((b & 0xf0) === 0x80) return this.map(b & 0x0f, depth);
    if ((b & 0xf0) === 0x90) return this.array(b & 0x0f, depth);
    if ((b & 0xe0) === 0xa0) return this.str(b & 0x1f);
    switch (b) {
      case 0xc0: return null;
      case 0xc2: return false;
      case 0xc3: return true;
      case 0xc4: this.need(1); return this.bin(this.bytes[this.offset++]);
      case 0xc5: this.need(2); { const n = v.getUint16(this.offset); this.offset += 2; return this.bin(n); }
      case 0xc6: this.need(4); { const n = v.getUint32(this.offset); this.offset += 4; return this.bin(n); }
      case 0xca: this.need(4); { const x = v.getFloat32(this.offset); this.offset += 4; return x; }
      case 0xcb: this.need(8); { const x = v.getFloat64(this.offset); this.offset += 8; return x; }
      case 0xcc: this.need(1); return this.bytes[this.offset++];
      case 0xcd: this.need(2); { const x = v.getUint16(this.offset); this.offset += 2; return x; }
      case 0xce: this.need(4); { const x = v.getUint32(this.offset); this.offset += 4; return x; }
      case 0xcf: this.need(8); { const x = v.getBigUint64(this.offset); this.offset += 8; return this.safe(x, at); }
      case 0xd0: this.need(1); { const x = v.getInt8(this.offset); this.offset += 1; return x; }
      case 0xd1: this.need(2); { const x = v.getInt16(this.offset); this.offset += 2; return x; }
      case 0xd2: this.need(4); { const x = v.getInt32(this.offset); this.offset += 4; return x; }
      case 0xd3: this.need(8); { const x = v.getBigInt64(this.offset); this.offset += 8; return this.safe(x, at); }
      case 0xd9: this.need(1); return this.str(this.bytes[this.offset++]);
      case 0xda: this.need(2); { const n = v.getUint16(this.offset); this.offset += 2; return this.str(n); }
      case 0xdb: this.need(4); { const n = v.getUint32(this.offset); this.offset += 4; return this.str(n); }
      case 0xdc: this.need(2); { const n = v.getUint16(this.offset); this.offset += 2; return this.array(n, depth); }
      case 0xdd: this.need(4); { const n = v.getUint32(this.offset); this.offset += 4; return this.array(n, depth); }
      case 0xde: this.need(2); { const n = v.getUint16(this.offset); this.offset += 2; return this.map(n, depth); }
      case 0xdf: this.need(4); { const n = v.getUint32(this.offset); this.offset += 4; return this.map(n, depth); }
    }
    if (b === 0xc1) throw new MsgpackError(at, 'expected a MessagePack value, got the never-used byte 0xc1');
    throw new MsgpackError(at, `expected no MessagePack extension types in sheaf data, got type byte 0x${b.toString(16)}`);
  }

  private safe(x: bigint, at: number): number {
    const n = Number(x);
    if (!Number.isSafeInteger(n)) throw new MsgpackError(at, `expected an integer within ±2^53, got ${x}`);
    return n;
  }

  private bin(n: number): Uint8Array {
    this.need(n);
    const b = this.bytes.subarray(this.offset, this.offset + n);
    this.offset += n;
    return b;
  }

  private str(n: number): string {
    this.need(n);
    const at = this.offset;
    this.offset += n;
    try {
      return decoder.decode(this.bytes.subarray(at, at + n));
    } catch {
      throw new MsgpackError(at, 'expected a UTF-8 string');
    }
  }

  private array(n: number, depth: number): Decoded[] {
    // Each element takes at least one byte: refuse counts the data cannot hold before allocating.
    this.need(n);
    const out: Decoded[] = new Array(n);
    for (let k = 0; k < n; k++) out[k] = this.value(depth + 1);
    return out;
  }

  private map(n: number, depth: number): { [key: string]: Decoded } {
    this.need(2 * n);
    const out = Object.create(null) as { [key: string]: Decoded };
    for (let k = 0; k < n; k++) {
      const key = this.key();
      out[key] = this.value(depth + 1);
    }
    return out;
  }

  /**
   * Map keys are strings. Short ones (fixstr: record fields) are decoded once
   * per distinct key; longer ones (a file path keying pipeline-files) each time.
   */
  private key(): string {
    this.need(1);
    const at = this.offset;
    const b = this.bytes[this.offset];
    if ((b & 0xe0) !== 0xa0) {
      if (b !== 0xd9 && b !== 0xda && b !== 0xdb) throw new MsgpackError(at, 'expected a map key that is a string');
      const k = this.value(0);
      return k as string;
    }
    const n = b & 0x1f;
    this.offset++;
    this.need(n);
    let h = n;
    for (let k = 0; k < n; k++) h = Math.imul(h ^ this.bytes[this.offset + k], 0x01000193);
    const cached = this.keyCache.get(h);
    if (cached !== undefined && cached.length === n && sameAscii(cached, this.bytes, this.offset)) {
      this.offset += n;
      return cached;
    }
    const s = this.str(n);
    if (/^[\x20-\x7e]*$/.test(s)) this.keyCache.set(h, s);
    return s;
  }
}

function sameAscii(s: string, b: Uint8Array, at: number): boolean {
  for (let k = 0; k < s.length; k++) if (s.charCodeAt(k) !== b[at + k]) return false;
  return true;
}

/** Decodes every value of a byte buffer (a sequence of maps, say). */
export function decodeAll(bytes: Uint8Array): Decoded[] {
  const r = new MsgpackReader(bytes);
  const out: Decoded[] = [];
  while (!r.done) out.push(r.decode());
  return out;
}
