/**
 * One sentence of a shard (format `sheaf-shards/2`) as a MessagePack map, and
 * back. The bytes are fixed here: keys in this order, scores float64, counts
 * as the smallest integer form, vectors as `bin` holding little-endian typed
 * data.
 *
 *   { id: str, pos: int, fold: int | nil, gold: int, len: int, flag: str | nil,
 *     ref: { idx: bin, val: bin, dtype: str, ridx: bin, rval: bin, rdtype: str } | nil,
 *     cands: [ { score: float64, rank: int, matched: int, test: int,
 *                idx: bin, val: bin, dtype: str, ridx: bin, rval: bin, rdtype: str } ] }
 *
 * - `pos`: the record's 0-based position in the input (all dump files in the
 *   order given, records counted whatever their fate), which restores input
 *   order when parts made elsewhere are merged.
 * - `len`: words in the sentence, punctuation included.
 * - `flag`: `"no-candidates"` when the base parser gave none, else nil.
 * - `ref`: the reference vector (per bucket, the value most candidates of
 *   the list share) at the buckets where the list varies; nil without
 *   candidates.
 * - per candidate, its vector minus the reference; the absolute vector is
 *   reference + difference.
 * - a vector comes in two parts: `idx`/`val` the integer-valued entries,
 *   `ridx`/`rval` the others (usually a few: the base score, real-valued
 *   shape measures); an index is in at most one part. Indices: uint32
 *   little-endian, ascending. Values: the narrowest exact type, named by
 *   `dtype` / `rdtype` as numpy spells it (`<i1`, `<i2`, `<i4` for the
 *   integer part; `<f4`, `<f8` for the other).
 *
 * Pure: no node: imports.
 */
import { DataError } from '../core/errors.js';
import { isStoredInteger, type StoredVector, type Values } from '../core/sparse-vector.js';
import type { ShardCandidate, ShardSentence } from '../records.js';
import { MsgpackWriter, type Decoded } from './msgpack.js';

export const SHARD_FORMAT = 'sheaf-shards/2';

export type ValueType = '<i1' | '<i2' | '<i4' | '<f4' | '<f8';

const encoder = new TextEncoder();
const KEY = Object.fromEntries(
  ['id', 'pos', 'fold', 'gold', 'len', 'flag', 'ref', 'cands', 'score', 'rank', 'matched', 'test', 'idx', 'val', 'dtype', 'ridx', 'rval', 'rdtype'].map((k) => [k, encoder.encode(k)]),
);
const DTYPE = Object.fromEntries((['<i1', '<i2', '<i4', '<f4', '<f8'] as const).map((t) => [t, encoder.encode(t)])) as Record<ValueType, Uint8Array>;

/** The narrowest type that holds every value exactly (`real`: only float types). */
export function narrowestType(val: ArrayLike<number>, real = false): ValueType {
  let ints = true;
  let f32 = true;
  let lo = 0;
  let hi = 0;
  for (let k = 0; k < val.length; k++) {
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

function typed(val: ArrayLike<number>, t: ValueType): Values {
  switch (t) {
    case '<i1': return Int8Array.from(val);
    case '<i2': return Int16Array.from(val);
    case '<i4': return Int32Array.from(val);
    case '<f4': return Float32Array.from(val);
    default: return Float64Array.from(val);
  }
}

let intIdx = new Uint32Array(1024);
let intVal = new Float64Array(1024);
let realIdx = new Uint32Array(64);
let realVal = new Float64Array(64);

/** Writes the six keys of a vector: its integer part and its real part, each narrowed. */
function writeVector(w: MsgpackWriter, idx: Uint32Array, val: ArrayLike<number>): void {
  const n = idx.length;
  if (intIdx.length < n) {
    intIdx = new Uint32Array(n * 2);
    intVal = new Float64Array(n * 2);
  }
  let a = 0;
  let b = 0;
  for (let k = 0; k < n; k++) {
    const v = val[k];
    if (isStoredInteger(v)) {
      intIdx[a] = idx[k];
      intVal[a++] = v;
    } else {
      if (b === realIdx.length) {
        const ri = new Uint32Array(b * 2);
        ri.set(realIdx);
        realIdx = ri;
        const rv = new Float64Array(b * 2);
        rv.set(realVal);
        realVal = rv;
      }
      realIdx[b] = idx[k];
      realVal[b++] = v;
    }
  }
  const ti = narrowestType(intVal.subarray(0, a));
  const tr = narrowestType(realVal.subarray(0, b), true);
  w.strBytes(KEY.idx);
  w.bin(intIdx.subarray(0, a));
  w.strBytes(KEY.val);
  w.bin(typed(intVal.subarray(0, a), ti));
  w.strBytes(KEY.dtype);
  w.strBytes(DTYPE[ti]);
  w.strBytes(KEY.ridx);
  w.bin(realIdx.subarray(0, b));
  w.strBytes(KEY.rval);
  w.bin(typed(realVal.subarray(0, b), tr));
  w.strBytes(KEY.rdtype);
  w.strBytes(DTYPE[tr]);
}

/** What the encoder takes: vectors with plain float64 values (narrowed here). */
export interface SentenceToEncode {
  id: string;
  pos: number;
  fold: number | null;
  gold: number;
  len: number;
  flag: 'no-candidates' | null;
  ref: { idx: Uint32Array; val: ArrayLike<number> } | null;
  cands: { score: number; rank: number; matched: number; test: number; idx: Uint32Array; val: ArrayLike<number> }[];
}

/** Appends one sentence map to `w`. */
export function encodeSentence(w: MsgpackWriter, s: SentenceToEncode): void {
  w.mapHeader(8);
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
  w.strBytes(KEY.ref);
  if (s.ref === null) w.nil();
  else {
    w.mapHeader(6);
    writeVector(w, s.ref.idx, s.ref.val);
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
    writeVector(w, c.idx, c.val);
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
  if (typeof v !== 'number' || !Number.isInteger(v) || v < min) bad(`${where}: expected \`${key}\` to be an integer ≥ ${min}, got ${JSON.stringify(v)}`);
  return v as number;
}

function part(m: Map_, where: string, ik: string, vk: string, tk: string, real: boolean): { idx: Uint32Array; val: Values } {
  const idx = m[ik];
  const val = m[vk];
  const t = m[tk];
  if (!(idx instanceof Uint8Array) || idx.byteLength % 4 !== 0) bad(`${where}: expected \`${ik}\` to be bin data of uint32 values`);
  const allowed = real ? ['<f4', '<f8'] : ['<i1', '<i2', '<i4'];
  if (typeof t !== 'string' || !allowed.includes(t)) bad(`${where}: expected \`${tk}\` to be one of ${allowed.map((k) => `\`${k}\``).join(', ')}, got ${JSON.stringify(t)}`);
  const width = WIDTH[t as ValueType];
  if (!(val instanceof Uint8Array) || val.byteLength !== (idx as Uint8Array).byteLength / 4 * width) bad(`${where}: expected \`${vk}\` to hold one ${t} value per index`);
  const indices = view(idx as Uint8Array, 4, (b, o, n) => new Uint32Array(b, o, n));
  for (let k = 1; k < indices.length; k++) if (indices[k] <= indices[k - 1]) bad(`${where}: expected \`${ik}\` in ascending order, got ${indices[k - 1]} before ${indices[k]}`);
  return { idx: indices, val: valuesOf(val as Uint8Array, t as ValueType) };
}

function vector(m: Map_, where: string): StoredVector {
  const a = part(m, where, 'idx', 'val', 'dtype', false);
  const b = part(m, where, 'ridx', 'rval', 'rdtype', true);
  return { idx: a.idx, val: a.val, ridx: b.idx, rval: b.val };
}

/**
 * A decoded map → a checked ShardSentence (typed arrays are views into the
 * decoded bytes where aligned). Throws DataError `bad-shard` naming the field.
 */
export function toShardSentence(raw: Decoded): ShardSentence {
  if (!isMap(raw)) bad('expected a sentence map');
  const id = raw.id;
  if (typeof id !== 'string') bad(`expected \`id\` to be a string, got ${JSON.stringify(id)}`);
  const where = `sentence \`${id}\``;
  const fold = raw.fold === null ? null : int(raw, 'fold', where);
  const flag = raw.flag;
  if (flag !== null && flag !== 'no-candidates') bad(`${where}: expected \`flag\` to be nil or "no-candidates", got ${JSON.stringify(flag)}`);
  const ref = raw.ref === null ? null : isMap(raw.ref) ? vector(raw.ref, `${where}, ref`) : bad(`${where}: expected \`ref\` to be a map or nil`);
  const list = raw.cands;
  if (!Array.isArray(list)) bad(`${where}: expected \`cands\` to be a list`);
  const cands: ShardCandidate[] = (list as Decoded[]).map((c, k) => {
    const at = `${where}, candidate ${k}`;
    if (!isMap(c)) bad(`${at}: expected a map`);
    const score = c.score;
    if (typeof score !== 'number') bad(`${at}: expected \`score\` to be a number`);
    return { score: score as number, rank: int(c, 'rank', at), matched: int(c, 'matched', at), test: int(c, 'test', at), diff: vector(c, at) };
  });
  if (cands.length > 0 && ref === null) bad(`${where}: expected a \`ref\` vector for a list with candidates`);
  return { id: id as string, pos: int(raw, 'pos', where), fold, gold: int(raw, 'gold', where), len: int(raw, 'len', where), flag: flag as ShardSentence['flag'], ref, cands };
}
