/**
 * One sentence of a shard (format `sheaf-shards/3`) as a MessagePack map, and
 * back. The bytes are fixed here: keys in this order, scores float64, counts
 * as the smallest integer form, vectors as `bin` holding little-endian typed
 * data.
 *
 *   { id: str, pos: int, fold: int | nil, gold: int, len: int, flag: str | nil,
 *     buckets: bin, btype: str, itype: str,
 *     ref: { idx: bin, val: bin, dtype: str, ridx: bin, rval: bin, rdtype: str } | nil,
 *     cands: [ { score: float64, rank: int, matched: int, test: int,
 *                idx: bin, val: bin, dtype: str, ridx: bin, rval: bin, rdtype: str } ] }
 *
 * - `pos`: the record's 0-based position in the input (all dump files in the
 *   order given, records counted whatever their fate), which restores input
 *   order when parts made elsewhere are merged.
 * - `len`: words in the sentence, punctuation included.
 * - `flag`: `"no-candidates"` when the base parser gave none, else nil.
 * - `buckets`: every bucket that some vector of the sentence stores, ascending,
 *   as gaps of type `btype` (gaps.ts: the first value, then differences);
 *   empty without candidates.
 * - `ref`: the reference vector (per bucket, the value most candidates of
 *   the list share) at the buckets where the list varies; nil without
 *   candidates.
 * - per candidate, its vector minus the reference; the absolute vector is
 *   reference + difference.
 * - a vector comes in two parts: `idx`/`val` the integer-valued entries,
 *   `ridx`/`rval` the others (usually a few: the base score, real-valued
 *   shape measures); an index is in at most one part. An index is a position
 *   in `buckets`; each part's positions are ascending, stored as gaps of the
 *   sentence's `itype` (the narrowest type for every part of the sentence).
 *   Values: the narrowest exact type, named by `dtype` / `rdtype` as numpy
 *   spells it (`<i1`, `<i2`, `<i4` for the integer part; `<f4`, `<f8` for
 *   the other).
 *
 * Why positions: the candidates of a list store a few hundred of the list's
 * buckets each; a position in the list's buckets takes one or two bytes
 * where a bucket takes four, and the list's buckets are stored once.
 *
 * Pure: no node: imports.
 */
import { DataError } from '../core/errors.js';
import { isStoredInteger, type StoredVector, type Values } from '../core/sparse-vector.js';
import type { RankingList, ShardCandidate, ShardSentence } from '../records.js';
import { asGapType, GAP_WIDTH, gapCount, gapTypeFor, largestGap, readGaps, writeGaps, type GapType } from './gaps.js';
import { MsgpackError, MsgpackWriter, type BinElement, type Decoded } from './msgpack.js';
import { show } from '../core/show.js';

export const SHARD_FORMAT = 'sheaf-shards/3';

export type ValueType = '<i1' | '<i2' | '<i4' | '<f4' | '<f8';

const encoder = new TextEncoder();
const KEY = Object.fromEntries(
  ['id', 'pos', 'fold', 'gold', 'len', 'flag', 'buckets', 'btype', 'itype', 'ref', 'cands', 'score', 'rank', 'matched', 'test', 'idx', 'val', 'dtype', 'ridx', 'rval', 'rdtype'].map((k) => [k, encoder.encode(k)]),
);
const NO_CANDIDATES = encoder.encode('no-candidates');
const DTYPE = Object.fromEntries((['<i1', '<i2', '<i4', '<f4', '<f8', '<u1', '<u2', '<u4'] as const).map((t) => [t, encoder.encode(t)])) as Record<ValueType | GapType, Uint8Array>;

/** The narrowest type that holds every value exactly (`real`: only float types); `n` values from 0. */
export function narrowestType(val: ArrayLike<number>, real = false, n = val.length): ValueType {
  let ints = true;
  let f32 = true;
  let lo = 0;
  let hi = 0;
  for (let k = 0; k < n; k++) {
    const v = val[k];
    if (ints && !Number.isInteger(v)) ints = false;
    if (f32 && Math.fround(v) !== v) f32 = false;
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (real) return f32 ? '<f4' : '<f8';
  if (ints && lo >= -128 && hi <= 127) return '<i1';
  if (ints && lo >= -32768 && hi <= 32767) return '<i2';
  if (ints && lo >= -2147483648 && hi <= 2147483647) return '<i4';
  return f32 ? '<f4' : '<f8';
}

const ELEMENT: Record<ValueType, BinElement> = { '<i1': 'i8', '<i2': 'i16', '<i4': 'i32', '<f4': 'f32', '<f8': 'f64' };

let intPos = new Uint32Array(1024);
let intVal = new Float64Array(1024);
let realPos = new Uint32Array(64);
let realVal = new Float64Array(64);

/** Writes the six keys of a vector: its integer part and its real part, positions as gaps of `it`, values narrowed. */
function writeVector(w: MsgpackWriter, pos: Uint32Array, val: ArrayLike<number>, it: GapType): void {
  const n = pos.length;
  if (intPos.length < n) {
    intPos = new Uint32Array(n * 2);
    intVal = new Float64Array(n * 2);
  }
  let a = 0;
  let b = 0;
  for (let k = 0; k < n; k++) {
    const v = val[k];
    if (isStoredInteger(v)) {
      intPos[a] = pos[k];
      intVal[a++] = v;
    } else {
      if (b === realPos.length) {
        const ri = new Uint32Array(b * 2);
        ri.set(realPos);
        realPos = ri;
        const rv = new Float64Array(b * 2);
        rv.set(realVal);
        realVal = rv;
      }
      realPos[b] = pos[k];
      realVal[b++] = v;
    }
  }
  const ti = narrowestType(intVal, false, a);
  const tr = narrowestType(realVal, true, b);
  w.strBytes(KEY.idx);
  writeGaps(w, intPos, 0, a, it);
  w.strBytes(KEY.val);
  w.binOf(intVal, 0, a, ELEMENT[ti]);
  w.strBytes(KEY.dtype);
  w.strBytes(DTYPE[ti]);
  w.strBytes(KEY.ridx);
  writeGaps(w, realPos, 0, b, it);
  w.strBytes(KEY.rval);
  w.binOf(realVal, 0, b, ELEMENT[tr]);
  w.strBytes(KEY.rdtype);
  w.strBytes(DTYPE[tr]);
}

/** The largest gap between positions within either part of a vector (the integer part, the real part). */
function largestPartGap(pos: Uint32Array, val: ArrayLike<number>): number {
  let max = 0;
  let prevInt = 0;
  let prevReal = 0;
  for (let k = 0, n = pos.length; k < n; k++) {
    const p = pos[k];
    if (isStoredInteger(val[k])) {
      if (p - prevInt > max) max = p - prevInt;
      prevInt = p;
    } else {
      if (p - prevReal > max) max = p - prevReal;
      prevReal = p;
    }
  }
  return max;
}

/** A vector to encode: ascending buckets, their values, and optionally their positions in the sentence's buckets. */
export interface VectorToEncode {
  idx: Uint32Array;
  val: ArrayLike<number>;
  pos?: Uint32Array;
}

/**
 * What the encoder takes: vectors with plain float64 values (narrowed here).
 * `buckets` with every vector's `pos` may come from the caller (the feature
 * extractor numbers them anyway); without them the encoder makes them.
 */
export interface SentenceToEncode {
  id: string;
  pos: number;
  fold: number | null;
  gold: number;
  len: number;
  flag: 'no-candidates' | null;
  buckets?: Uint32Array;
  ref: VectorToEncode | null;
  cands: ({ score: number; rank: number; matched: number; test: number } & VectorToEncode)[];
}

/** The sentence's buckets (every bucket some vector stores, ascending) and each vector's positions in them. */
export function bucketTable(vectors: readonly { idx: Uint32Array }[]): { buckets: Uint32Array; pos: Uint32Array[] } {
  let n = 0;
  for (const v of vectors) n += v.idx.length;
  const all = new Uint32Array(n);
  let o = 0;
  for (const v of vectors) {
    all.set(v.idx, o);
    o += v.idx.length;
  }
  all.sort();
  let u = 0;
  for (let k = 0; k < n; k++) if (k === 0 || all[k] !== all[k - 1]) all[u++] = all[k];
  const buckets = all.slice(0, u);
  const pos = vectors.map((v) => {
    const p = new Uint32Array(v.idx.length);
    let lo = 0;
    for (let k = 0; k < v.idx.length; k++) {
      // Ascending: search only above the previous position.
      let hi = u;
      const x = v.idx[k];
      while (lo < hi) {
        const mid = (lo + hi) >>> 1;
        if (buckets[mid] < x) lo = mid + 1;
        else hi = mid;
      }
      p[k] = lo;
    }
    return p;
  });
  return { buckets, pos };
}

/** Appends one sentence map to `w`. */
export function encodeSentence(w: MsgpackWriter, s: SentenceToEncode): void {
  const vectors: VectorToEncode[] = s.ref === null ? s.cands : [s.ref, ...s.cands];
  let buckets = s.buckets;
  let pos: Uint32Array[];
  if (buckets !== undefined && vectors.every((v) => v.pos !== undefined)) pos = vectors.map((v) => v.pos!);
  else ({ buckets, pos } = bucketTable(vectors));
  let maxGap = 0;
  vectors.forEach((v, k) => {
    const g = largestPartGap(pos[k], v.val);
    if (g > maxGap) maxGap = g;
  });
  const it = gapTypeFor(maxGap);
  const bt = gapTypeFor(largestGap(buckets));
  w.mapHeader(11);
  w.strBytes(KEY.id);
  w.str(s.id);
  w.strBytes(KEY.pos);
  w.int(s.pos);
  w.strBytes(KEY.fold);
  if (s.fold === null) w.nil();
  else w.int(s.fold);
  w.strBytes(KEY.gold);
  w.int(s.gold);
  w.strBytes(KEY.len);
  w.int(s.len);
  w.strBytes(KEY.flag);
  if (s.flag === null) w.nil();
  else w.str(s.flag);
  w.strBytes(KEY.buckets);
  writeGaps(w, buckets, 0, buckets.length, bt);
  w.strBytes(KEY.btype);
  w.strBytes(DTYPE[bt]);
  w.strBytes(KEY.itype);
  w.strBytes(DTYPE[it]);
  let k = 0;
  w.strBytes(KEY.ref);
  if (s.ref === null) w.nil();
  else {
    w.mapHeader(6);
    writeVector(w, pos[k++], s.ref.val, it);
  }
  w.strBytes(KEY.cands);
  w.arrayHeader(s.cands.length);
  for (const c of s.cands) {
    w.mapHeader(10);
    w.strBytes(KEY.score);
    w.float64(c.score);
    w.strBytes(KEY.rank);
    w.int(c.rank);
    w.strBytes(KEY.matched);
    w.int(c.matched);
    w.strBytes(KEY.test);
    w.int(c.test);
    writeVector(w, pos[k++], c.val, it);
  }
}

const WIDTH: Record<ValueType, number> = { '<i1': 1, '<i2': 2, '<i4': 4, '<f4': 4, '<f8': 8 };

/** Little-endian typed data of a bin, as a view when aligned, else a copy. */
function view<T>(bin: Uint8Array, width: number, make: (buffer: ArrayBufferLike, offset: number, length: number) => T): T {
  if (bin.byteOffset % width === 0) return make(bin.buffer, bin.byteOffset, bin.byteLength / width);
  // A copy (new Uint8Array(view) copies; Buffer#slice would not).
  const copy = new Uint8Array(bin);
  return make(copy.buffer, 0, copy.byteLength / width);
}

function valuesOf(bin: Uint8Array, t: ValueType): Values {
  switch (t) {
    case '<i1': return new Int8Array(bin.buffer, bin.byteOffset, bin.byteLength);
    case '<i2': return view(bin, 2, (b, o, n) => new Int16Array(b, o, n));
    case '<i4': return view(bin, 4, (b, o, n) => new Int32Array(b, o, n));
    case '<f4': return view(bin, 4, (b, o, n) => new Float32Array(b, o, n));
    default: return view(bin, 8, (b, o, n) => new Float64Array(b, o, n));
  }
}

type Map_ = { [key: string]: Decoded };

function bad(reason: string): never {
  throw new DataError('bad-shard', reason);
}

function isMap(v: Decoded | undefined): v is Map_ {
  return v !== null && typeof v === 'object' && !Array.isArray(v) && !(v instanceof Uint8Array);
}

function int(m: Map_, key: string, where: string, min = 0): number {
  const v = m[key];
  if (typeof v !== 'number' || !Number.isInteger(v) || v < min) bad(`${where}: expected \`${key}\` to be an integer ≥ ${min}, got ${show(v)}`);
  return v as number;
}

function gapType(m: Map_, key: string, where: string): GapType {
  const t = asGapType(m[key]);
  if (t === null) bad(`${where}: expected \`${key}\` to be one of \`<u1\`, \`<u2\`, \`<u4\`, got ${show(m[key])}`);
  return t as GapType;
}

/** A sentence's buckets, and the type of its vectors' position gaps. */
interface Table {
  buckets: Uint32Array;
  it: GapType;
}

function table(m: Map_, where: string): Table {
  const bt = gapType(m, 'btype', where);
  const it = gapType(m, 'itype', where);
  const bin = m.buckets;
  if (!(bin instanceof Uint8Array)) bad(`${where}: expected \`buckets\` to be bin data`);
  const n = gapCount(bin as Uint8Array, bt);
  const buckets = new Uint32Array(Math.max(n, 0));
  const why = readGaps(bin as Uint8Array, bt, buckets, 0, 2 ** 32);
  if (why !== null) bad(`${where}: \`buckets\`: ${why}`);
  return { buckets, it };
}

function part(m: Map_, where: string, ik: string, vk: string, tk: string, real: boolean, tab: Table): { idx: Uint32Array; val: Values } {
  const idx = m[ik];
  const val = m[vk];
  const t = m[tk];
  if (!(idx instanceof Uint8Array)) bad(`${where}: expected \`${ik}\` to be bin data`);
  const count = gapCount(idx as Uint8Array, tab.it);
  const indices = new Uint32Array(Math.max(count, 0));
  const why = readGaps(idx as Uint8Array, tab.it, indices, 0, tab.buckets.length);
  if (why !== null) bad(`${where}: \`${ik}\` (positions in \`buckets\`): ${why}`);
  const allowed = real ? ['<f4', '<f8'] : ['<i1', '<i2', '<i4'];
  if (typeof t !== 'string' || !allowed.includes(t)) bad(`${where}: expected \`${tk}\` to be one of ${allowed.map((k) => `\`${k}\``).join(', ')}, got ${show(t)}`);
  const width = WIDTH[t as ValueType];
  if (!(val instanceof Uint8Array) || val.byteLength !== count * width) bad(`${where}: expected \`${vk}\` to hold one ${t} value per index`);
  for (let k = 0; k < count; k++) indices[k] = tab.buckets[indices[k]];
  return { idx: indices, val: valuesOf(val as Uint8Array, t as ValueType) };
}

function vector(m: Map_, where: string, tab: Table): StoredVector {
  const a = part(m, where, 'idx', 'val', 'dtype', false, tab);
  const b = part(m, where, 'ridx', 'rval', 'rdtype', true, tab);
  return { idx: a.idx, val: a.val, ridx: b.idx, rval: b.val };
}

/**
 * A decoded map → a checked ShardSentence (typed arrays are views into the
 * decoded bytes where aligned). Throws DataError `bad-shard` naming the field.
 */
export function toShardSentence(raw: Decoded): ShardSentence {
  if (!isMap(raw)) bad('expected a sentence map');
  const id = raw.id;
  if (typeof id !== 'string') bad(`expected \`id\` to be a string, got ${show(id)}`);
  const where = `sentence \`${id}\``;
  const fold = raw.fold === null ? null : int(raw, 'fold', where);
  const flag = raw.flag;
  if (flag !== null && flag !== 'no-candidates') bad(`${where}: expected \`flag\` to be nil or "no-candidates", got ${show(flag)}`);
  const tab = table(raw, where);
  const ref = raw.ref === null ? null : isMap(raw.ref) ? vector(raw.ref, `${where}, ref`, tab) : bad(`${where}: expected \`ref\` to be a map or nil`);
  const list = raw.cands;
  if (!Array.isArray(list)) bad(`${where}: expected \`cands\` to be a list`);
  const cands: ShardCandidate[] = (list as Decoded[]).map((c, k) => {
    const at = `${where}, candidate ${k}`;
    if (!isMap(c)) bad(`${at}: expected a map`);
    const score = c.score;
    if (typeof score !== 'number') bad(`${at}: expected \`score\` to be a number`);
    return { score: score as number, rank: int(c, 'rank', at), matched: int(c, 'matched', at), test: int(c, 'test', at), diff: vector(c, at, tab) };
  });
  if (cands.length > 0 && ref === null) bad(`${where}: expected a \`ref\` vector for a list with candidates`);
  return { id: id as string, pos: int(raw, 'pos', where), fold, gold: int(raw, 'gold', where), len: int(raw, 'len', where), flag: flag as ShardSentence['flag'], ref, cands };
}

/** A ranking list from per-candidate stored vectors. */
export function rankingList(s: { id?: string; gold: number; len: number; cands: readonly { rank: number; matched: number; test: number; diff: StoredVector }[] }): RankingList {
  const m = s.cands.length;
  const start = new Int32Array(m + 1);
  let n = 0;
  s.cands.forEach((c, k) => {
    start[k] = n;
    n += c.diff.idx.length + c.diff.ridx.length;
  });
  start[m] = n;
  const idx = new Uint32Array(n);
  const val = new Float64Array(n);
  s.cands.forEach((c, k) => {
    let o = start[k];
    const { idx: a, val: av, ridx: b, rval: bv } = c.diff;
    for (let j = 0; j < a.length; j++, o++) {
      idx[o] = a[j];
      val[o] = av[j];
    }
    for (let j = 0; j < b.length; j++, o++) {
      idx[o] = b[j];
      val[o] = bv[j];
    }
  });
  return {
    id: s.id ?? '',
    gold: s.gold,
    len: s.len,
    rank: Int32Array.from(s.cands, (c) => c.rank),
    matched: Int32Array.from(s.cands, (c) => c.matched),
    test: Int32Array.from(s.cands, (c) => c.test),
    start,
    idx,
    val,
  };
}

/**
 * The fast path for readers that score lists (train, eval): one sentence
 * record straight into a flat RankingList, without building a map per
 * candidate. Expects exactly the layout encodeSentence writes; on anything
 * else it returns null, and the caller decodes the record the general way
 * (which names the problem). Throws MsgpackError(truncated) when the bytes end
 * inside the record.
 */
export class RankingListDecoder {
  private idx = new Uint32Array(4096);
  private val = new Float64Array(4096);
  private rank = new Int32Array(64);
  private matched = new Int32Array(64);
  private test = new Int32Array(64);
  private start = new Int32Array(65);
  private table = new Uint32Array(4096);
  private nTable = 0;
  private it: GapType = '<u1';
  private b: Uint8Array = new Uint8Array(0);
  private v: DataView = new DataView(new ArrayBuffer(0));
  private o = 0;
  private readonly utf8 = new TextDecoder('utf-8', { fatal: true });
  /** Where the last decoded record ended. */
  end = 0;

  decode(bytes: Uint8Array, at: number): RankingList | null {
    this.b = bytes;
    this.v = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
    this.o = at;
    try {
      return this.sentence();
    } catch (e) {
      if (e instanceof MsgpackError) throw e;
      if (e === MISMATCH) return null;
      throw e;
    }
  }

  private need(n: number): void {
    if (this.o + n > this.b.length) throw new MsgpackError(this.o, 'the data ends inside a record (truncated)', true);
  }

  private byte(): number {
    this.need(1);
    return this.b[this.o++];
  }

  private key(k: Uint8Array): void {
    const n = k.length;
    this.need(n + 1);
    if (this.b[this.o] !== (0xa0 | n)) throw MISMATCH;
    for (let i = 0; i < n; i++) if (this.b[this.o + 1 + i] !== k[i]) throw MISMATCH;
    this.o += n + 1;
  }

  private uint(): number {
    const t = this.byte();
    if (t <= 0x7f) return t;
    const v = this.v;
    switch (t) {
      case 0xcc: this.need(1); return this.b[this.o++];
      case 0xcd: this.need(2); { const x = v.getUint16(this.o); this.o += 2; return x; }
      case 0xce: this.need(4); { const x = v.getUint32(this.o); this.o += 4; return x; }
      case 0xcf: this.need(8); { const x = Number(v.getBigUint64(this.o)); this.o += 8; if (!Number.isSafeInteger(x)) throw MISMATCH; return x; }
    }
    throw MISMATCH;
  }

  private strLen(): number {
    const t = this.byte();
    if ((t & 0xe0) === 0xa0) return t & 0x1f;
    if (t === 0xd9) { this.need(1); return this.b[this.o++]; }
    if (t === 0xda) { this.need(2); const n = this.v.getUint16(this.o); this.o += 2; return n; }
    if (t === 0xdb) { this.need(4); const n = this.v.getUint32(this.o); this.o += 4; return n; }
    throw MISMATCH;
  }

  private binLen(): number {
    const t = this.byte();
    if (t === 0xc4) { this.need(1); return this.b[this.o++]; }
    if (t === 0xc5) { this.need(2); const n = this.v.getUint16(this.o); this.o += 2; return n; }
    if (t === 0xc6) { this.need(4); const n = this.v.getUint32(this.o); this.o += 4; return n; }
    throw MISMATCH;
  }

  /** A dtype string: its width and whether it is a float. */
  private dtype(real: boolean): ValueType {
    const n = this.strLen();
    this.need(n);
    if (n !== 3 || this.b[this.o] !== 0x3c /* < */) throw MISMATCH;
    const k = this.b[this.o + 1];
    const w = this.b[this.o + 2];
    this.o += 3;
    if (!real && k === 0x69 /* i */ && (w === 0x31 || w === 0x32 || w === 0x34)) return w === 0x31 ? '<i1' : w === 0x32 ? '<i2' : '<i4';
    if (real && k === 0x66 /* f */ && (w === 0x34 || w === 0x38)) return w === 0x34 ? '<f4' : '<f8';
    throw MISMATCH;
  }

  private grow(n: number): void {
    if (n <= this.idx.length) return;
    let size = this.idx.length * 2;
    while (size < n) size *= 2;
    const i = new Uint32Array(size);
    i.set(this.idx);
    this.idx = i;
    const v = new Float64Array(size);
    v.set(this.val);
    this.val = v;
  }

  /** A gap type string (`<u1`, `<u2`, `<u4`). */
  private gapType(): GapType {
    const n = this.strLen();
    this.need(n);
    if (n !== 3 || this.b[this.o] !== 0x3c /* < */ || this.b[this.o + 1] !== 0x75 /* u */) throw MISMATCH;
    const w = this.b[this.o + 2];
    this.o += 3;
    if (w === 0x31) return '<u1';
    if (w === 0x32) return '<u2';
    if (w === 0x34) return '<u4';
    throw MISMATCH;
  }

  /** The sentence's buckets (a bin of gaps of type bt) into `table`. */
  private readTable(bin: Uint8Array, bt: GapType): void {
    const n = gapCount(bin, bt);
    if (n < 0) throw MISMATCH;
    if (this.table.length < n) this.table = new Uint32Array(Math.max(n, 2 * this.table.length));
    if (readGaps(bin, bt, this.table, 0, 2 ** 32) !== null) throw MISMATCH;
    this.nTable = n;
  }

  /** One part (positions bin, values bin, dtype) appended at `n` as buckets; returns the new length. */
  private part(n: number, ik: Uint8Array, vk: Uint8Array, tk: Uint8Array, real: boolean): number {
    const width = GAP_WIDTH[this.it];
    this.key(ik);
    const ib = this.binLen();
    if (ib % width !== 0) throw MISMATCH;
    this.need(ib);
    const iAt = this.o;
    this.o += ib;
    this.key(vk);
    const vb = this.binLen();
    this.need(vb);
    const vAt = this.o;
    this.o += vb;
    this.key(tk);
    const t = this.dtype(real);
    const count = ib / width;
    if (vb !== count * WIDTH[t]) throw MISMATCH;
    this.grow(n + count);
    const v = this.v;
    const b = this.b;
    const idx = this.idx;
    const val = this.val;
    const table = this.table;
    const size = this.nTable;
    let p = 0;
    for (let k = 0; k < count; k++) {
      const g = width === 1 ? b[iAt + k] : width === 2 ? v.getUint16(iAt + 2 * k, true) : v.getUint32(iAt + 4 * k, true);
      if (k > 0 && g === 0) throw MISMATCH;
      p += g;
      if (p >= size) throw MISMATCH;
      idx[n + k] = table[p];
    }
    switch (t) {
      case '<i1': for (let k = 0; k < count; k++) val[n + k] = v.getInt8(vAt + k); break;
      case '<i2': for (let k = 0; k < count; k++) val[n + k] = v.getInt16(vAt + 2 * k, true); break;
      case '<i4': for (let k = 0; k < count; k++) val[n + k] = v.getInt32(vAt + 4 * k, true); break;
      case '<f4': for (let k = 0; k < count; k++) val[n + k] = v.getFloat32(vAt + 4 * k, true); break;
      default: for (let k = 0; k < count; k++) val[n + k] = v.getFloat64(vAt + 8 * k, true);
    }
    return n + count;
  }

  private sentence(): RankingList {
    if (this.byte() !== 0x8b) throw MISMATCH;
    this.key(KEY.id);
    const idLen = this.strLen();
    this.need(idLen);
    let id: string;
    try {
      id = this.utf8.decode(this.b.subarray(this.o, this.o + idLen));
    } catch {
      throw MISMATCH;
    }
    this.o += idLen;
    this.key(KEY.pos);
    this.uint();
    this.key(KEY.fold);
    this.need(1);
    if (this.b[this.o] === 0xc0) this.o++;
    else this.uint();
    this.key(KEY.gold);
    const gold = this.uint();
    this.key(KEY.len);
    const len = this.uint();
    this.key(KEY.flag);
    this.need(1);
    if (this.b[this.o] === 0xc0) this.o++;
    else this.key(NO_CANDIDATES); // the only flag there is; anything else is the general decoder's to name
    this.key(KEY.buckets);
    const tb = this.binLen();
    this.need(tb);
    const tAt = this.o;
    this.o += tb;
    this.key(KEY.btype);
    this.readTable(this.b.subarray(tAt, tAt + tb), this.gapType());
    this.key(KEY.itype);
    this.it = this.gapType();
    this.key(KEY.ref);
    this.need(1);
    const hasRef = this.b[this.o] !== 0xc0;
    if (!hasRef) this.o++;
    else {
      // The reference is not needed to rank: step over it, checking its shape.
      if (this.byte() !== 0x86) throw MISMATCH;
      this.part(0, KEY.idx, KEY.val, KEY.dtype, false);
      this.part(0, KEY.ridx, KEY.rval, KEY.rdtype, true);
    }
    this.key(KEY.cands);
    const t = this.byte();
    let m: number;
    if ((t & 0xf0) === 0x90) m = t & 0x0f;
    else if (t === 0xdc) { this.need(2); m = this.v.getUint16(this.o); this.o += 2; }
    else if (t === 0xdd) { this.need(4); m = this.v.getUint32(this.o); this.o += 4; }
    else throw MISMATCH;
    // A list with candidates has a reference (the general decoder says so).
    if (m > 0 && !hasRef) throw MISMATCH;
    if (this.rank.length < m) {
      this.rank = new Int32Array(m * 2);
      this.matched = new Int32Array(m * 2);
      this.test = new Int32Array(m * 2);
      this.start = new Int32Array(m * 2 + 1);
    }
    let n = 0;
    for (let c = 0; c < m; c++) {
      if (this.byte() !== 0x8a) throw MISMATCH;
      this.key(KEY.score);
      if (this.byte() !== 0xcb) throw MISMATCH;
      this.need(8);
      this.o += 8;
      this.key(KEY.rank);
      this.rank[c] = this.uint();
      this.key(KEY.matched);
      this.matched[c] = this.uint();
      this.key(KEY.test);
      this.test[c] = this.uint();
      this.start[c] = n;
      n = this.part(n, KEY.idx, KEY.val, KEY.dtype, false);
      n = this.part(n, KEY.ridx, KEY.rval, KEY.rdtype, true);
    }
    this.start[m] = n;
    this.end = this.o;
    return {
      id, gold, len,
      rank: this.rank.slice(0, m),
      matched: this.matched.slice(0, m),
      test: this.test.slice(0, m),
      start: this.start.slice(0, m + 1),
      idx: this.idx.slice(0, n),
      val: this.val.slice(0, n),
    };
  }
}

/** Thrown inside the fast path when the record is not laid out as expected. */
const MISMATCH = new Error('not the expected layout');
