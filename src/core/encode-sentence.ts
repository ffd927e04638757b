/**
 * Encodes one sentence record as a MessagePack map (the shard format of
 * DESIGN.md). Hand-written rather than a general encoder so that the bytes
 * are fixed by this file alone: keys in a fixed order, scores always float64,
 * counts as the smallest integer form, typed arrays as `bin` holding
 * little-endian data (uint32 indices, float32 values).
 *
 * Map: { id: str, fold: int | nil, gold: int, flag: str | nil,
 *        cands: [ { score: float64, rank: int, matched: int, test: int,
 *                   idx: bin(uint32 LE), val: bin(float32 LE) } ] }
 * `flag` is `"no-candidates"` when the base parser gave none (kept so that
 * corpus recall stays honest), nil otherwise.
 */

export interface EncodedCandidate {
  score: number;
  rank: number;
  matched: number;
  test: number;
  idx: Uint32Array;
  val: Float32Array;
}

export interface SentenceRecord {
  id: string;
  fold: number | null;
  gold: number;
  flag: string | null;
  cands: EncodedCandidate[];
}

const encoder = new TextEncoder();
const LITTLE_ENDIAN = new Uint8Array(Uint32Array.of(1).buffer)[0] === 1;

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

  /** A copy of the bytes written since reset(). */
  bytes(): Uint8Array {
    return this.buf.slice(0, this.len);
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
    this.ensure(n + 5);
    if (n < 0x100) { this.u8(0xc4); this.u8(n); }
    else if (n < 0x10000) { this.u8(0xc5); this.view.setUint16(this.len, n); this.len += 2; }
    else { this.u8(0xc6); this.view.setUint32(this.len, n); this.len += 4; }
    this.buf.set(new Uint8Array(data.buffer, data.byteOffset, n), this.len);
    this.len += n;
  }
}

const KEY = Object.fromEntries(
  ['id', 'fold', 'gold', 'flag', 'cands', 'score', 'rank', 'matched', 'test', 'idx', 'val'].map((k) => [k, encoder.encode(k)]),
);

/** Appends one sentence map to `w`. */
export function encodeSentence(w: MsgpackWriter, s: SentenceRecord): void {
  w.mapHeader(5);
  w.strBytes(KEY.id);
  w.str(s.id);
  w.strBytes(KEY.fold);
  if (s.fold === null) w.nil();
  else w.int(s.fold);
  w.strBytes(KEY.gold);
  w.int(s.gold);
  w.strBytes(KEY.flag);
  if (s.flag === null) w.nil();
  else w.str(s.flag);
  w.strBytes(KEY.cands);
  w.arrayHeader(s.cands.length);
  for (const c of s.cands) {
    w.mapHeader(6);
    w.strBytes(KEY.score);
    w.float64(c.score);
    w.strBytes(KEY.rank);
    w.int(c.rank);
    w.strBytes(KEY.matched);
    w.int(c.matched);
    w.strBytes(KEY.test);
    w.int(c.test);
    w.strBytes(KEY.idx);
    w.bin(c.idx);
    w.strBytes(KEY.val);
    w.bin(c.val);
  }
}
