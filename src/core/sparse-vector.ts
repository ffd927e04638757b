/**
 * Sparse vectors over the hash space: ascending unique bucket indices with a
 * value each.
 *
 * Stored vectors (shards) come in two parts, each sorted by index, an index
 * in at most one: integer values in the narrowest integer type that holds
 * them, and the few real values (the base model's score, real-valued shape
 * measures) as float32 or float64. Most differences are small integers, so
 * the split keeps them one byte each.
 */
export type Values = Int8Array | Int16Array | Int32Array | Float32Array | Float64Array;

export interface SparseVector {
  /** Bucket indices, ascending, unique. */
  idx: Uint32Array;
  /** Values, one per index. */
  val: Float64Array;
}

export interface StoredVector {
  /** Indices of the integer-valued entries, ascending. */
  idx: Uint32Array;
  val: Values;
  /** Indices of the other entries, ascending. */
  ridx: Uint32Array;
  rval: Values;
}

/** Both parts of a stored vector as one sorted vector. */
export function joinParts(v: StoredVector): SparseVector {
  const n = v.idx.length;
  const r = v.ridx.length;
  const idx = new Uint32Array(n + r);
  const val = new Float64Array(n + r);
  let i = 0;
  let j = 0;
  let o = 0;
  while (i < n || j < r) {
    if (j >= r || (i < n && v.idx[i] < v.ridx[j])) {
      idx[o] = v.idx[i];
      val[o++] = v.val[i++];
    } else {
      idx[o] = v.ridx[j];
      val[o++] = v.rval[j++];
    }
  }
  return { idx, val };
}

/** Splits a vector into its stored parts (values as float64; the encoder narrows them). */
export function splitParts(v: SparseVector): { idx: Uint32Array; val: Float64Array; ridx: Uint32Array; rval: Float64Array } {
  let ints = 0;
  for (let k = 0; k < v.val.length; k++) if (isStoredInteger(v.val[k])) ints++;
  const idx = new Uint32Array(ints);
  const val = new Float64Array(ints);
  const ridx = new Uint32Array(v.val.length - ints);
  const rval = new Float64Array(v.val.length - ints);
  for (let k = 0, a = 0, b = 0; k < v.val.length; k++) {
    if (isStoredInteger(v.val[k])) {
      idx[a] = v.idx[k];
      val[a++] = v.val[k];
    } else {
      ridx[b] = v.idx[k];
      rval[b++] = v.val[k];
    }
  }
  return { idx, val, ridx, rval };
}

/** Integers that the integer part holds (int32 range). */
export function isStoredInteger(x: number): boolean {
  return Number.isInteger(x) && x >= -2147483648 && x <= 2147483647;
}

/**
 * reference + difference, as a feature vector: float32 values (the values
 * every feature has), zeros dropped, sorted by index.
 */
export function addVectors(a: StoredVector, b: StoredVector): SparseVector {
  const x = joinParts(a);
  const y = joinParts(b);
  const na = x.idx.length;
  const nb = y.idx.length;
  const idx = new Uint32Array(na + nb);
  const val = new Float64Array(na + nb);
  let i = 0;
  let j = 0;
  let o = 0;
  while (i < na || j < nb) {
    let bucket: number;
    let v: number;
    if (j >= nb || (i < na && x.idx[i] < y.idx[j])) {
      bucket = x.idx[i];
      v = x.val[i++];
    } else if (i >= na || y.idx[j] < x.idx[i]) {
      bucket = y.idx[j];
      v = y.val[j++];
    } else {
      bucket = x.idx[i];
      v = x.val[i++] + y.val[j++];
    }
    v = Math.fround(v);
    if (v !== 0) {
      idx[o] = bucket;
      val[o++] = v;
    }
  }
  return { idx: idx.slice(0, o), val: val.slice(0, o) };
}

/** Entries stored in both parts. */
export function storedLength(v: StoredVector): number {
  return v.idx.length + v.ridx.length;
}

/** The dot product of a stored vector with a dense weight array. */
export function dot(v: StoredVector, w: Float32Array | Float64Array): number {
  let s = 0;
  const { idx, val, ridx, rval } = v;
  for (let k = 0; k < idx.length; k++) s += w[idx[k]] * val[k];
  for (let k = 0; k < ridx.length; k++) s += w[ridx[k]] * rval[k];
  return s;
}
