/**
 * Pseudo-constant pruning (common practice for n-best re-rankers): within one
 * sentence, a feature whose value is the same in every candidate cannot
 * change the ranking, so it is dropped. Absent means value 0, so a feature
 * present in some candidates only is kept.
 */
import type { SparseVector } from '../core/feature-sink.js';

export function pruneConstant(vectors: readonly SparseVector[]): SparseVector[] {
  const k = vectors.length;
  if (k === 0) return [];
  // For each index: in how many candidates it occurs, and whether with one value.
  const count = new Map<number, number>();
  const value = new Map<number, number>();
  const varies = new Set<number>();
  for (const v of vectors) {
    for (let j = 0; j < v.idx.length; j++) {
      const i = v.idx[j];
      const c = count.get(i);
      if (c === undefined) {
        count.set(i, 1);
        value.set(i, v.val[j]);
      } else {
        count.set(i, c + 1);
        if (value.get(i) !== v.val[j]) varies.add(i);
      }
    }
  }
  const constant = (i: number) => count.get(i) === k && !varies.has(i);
  return vectors.map((v) => {
    let keep = 0;
    for (let j = 0; j < v.idx.length; j++) if (!constant(v.idx[j])) keep++;
    if (keep === v.idx.length) return v;
    const idx = new Uint32Array(keep);
    const val = new Float32Array(keep);
    let o = 0;
    for (let j = 0; j < v.idx.length; j++) {
      if (constant(v.idx[j])) continue;
      idx[o] = v.idx[j];
      val[o++] = v.val[j];
    }
    return { idx, val };
  });
}

/**
 * Adds 1 to `counts[i]` for every index i that occurs in the sentence's
 * (pruned) vectors: in how many sentences each bucket varies. Per-shard
 * arrays of these counts add up across shards (the count cut-off's input).
 */
export function countVarying(vectors: readonly SparseVector[], counts: Uint32Array): void {
  const seen = new Set<number>();
  for (const v of vectors) for (let j = 0; j < v.idx.length; j++) seen.add(v.idx[j]);
  for (const i of seen) counts[i]++;
}
