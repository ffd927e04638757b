/**
 * Sparse vectors over the hash space: ascending unique bucket indices with a
 * value each. Values may come in any numeric typed array (shards store the
 * narrowest exact type).
 */
export type Values = Int8Array | Int16Array | Int32Array | Float32Array | Float64Array;

export interface SparseVector {
  /** Bucket indices, ascending, unique. */
  idx: Uint32Array;
  /** Values, one per index. */
  val: Float64Array;
}

/** Any stored vector: indices plus values of whatever stored type. */
export interface StoredVector {
  idx: Uint32Array;
  val: Values;
}

/**
 * reference + difference, as a feature vector: float32 values (the values
 * every feature has), zeros dropped. Both inputs sorted by index.
 */
export function addVectors(a: StoredVector, b: StoredVector): SparseVector {
  const na = a.idx.length;
  const nb = b.idx.length;
  const idx = new Uint32Array(na + nb);
  const val = new Float64Array(na + nb);
  let i = 0;
  let j = 0;
  let o = 0;
  while (i < na || j < nb) {
    let bucket: number;
    let v: number;
    if (j >= nb || (i < na && a.idx[i] < b.idx[j])) {
      bucket = a.idx[i];
      v = a.val[i++];
    } else if (i >= na || b.idx[j] < a.idx[i]) {
      bucket = b.idx[j];
      v = b.val[j++];
    } else {
      bucket = a.idx[i];
      v = a.val[i++] + b.val[j++];
    }
    v = Math.fround(v);
    if (v !== 0) {
      idx[o] = bucket;
      val[o++] = v;
    }
  }
  return { idx: idx.slice(0, o), val: val.slice(0, o) };
}

/** The dot product of a stored vector with a dense weight array. */
export function dot(v: StoredVector, w: Float32Array | Float64Array): number {
  let s = 0;
  const idx = v.idx;
  const val = v.val;
  for (let k = 0; k < idx.length; k++) s += w[idx[k]] * val[k];
  return s;
}
