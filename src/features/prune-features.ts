/**
 * Pseudo-constant pruning (common practice for n-best re-rankers): within one
 * sentence, a feature whose value is the same in every candidate cannot
 * change the ranking, so it is dropped. Absent means value 0, so a feature
 * present in some candidates only is kept.
 *
 * Hot path: one open-addressing table over bucket indices per sentence
 * (reused), no Map, one buffer per pruned vector.
 */
import type { SparseVector } from '../core/feature-sink.js';

let slots = new Int32Array(1 << 14).fill(-1);
let counts = new Int32Array(1 << 14);
let values = new Float32Array(1 << 14);
let varies = new Uint8Array(1 << 14);
let used = new Int32Array(1 << 13);

function slotHash(b: number): number {
  return Math.imul(b, 0x9e3779b1) >>> 7;
}

/** Slot of bucket b in the table, claiming it if new. */
function slotOf(b: number): number {
  const mask = slots.length - 1;
  let s = slotHash(b) & mask;
  while (slots[s] !== -1 && slots[s] !== b) s = (s + 1) & mask;
  return s;
}

export function pruneConstant(vectors: readonly SparseVector[]): SparseVector[] {
  const k = vectors.length;
  if (k === 0) return [];
  let total = 0;
  for (const v of vectors) total += v.idx.length;
  if (total * 2 > slots.length) {
    let size = slots.length;
    while (total * 2 > size) size *= 2;
    slots = new Int32Array(size).fill(-1);
    counts = new Int32Array(size);
    values = new Float32Array(size);
    varies = new Uint8Array(size);
  }
  if (used.length < total) used = new Int32Array(total * 2);
  let nUsed = 0;
  for (const v of vectors) {
    for (let j = 0; j < v.idx.length; j++) {
      const s = slotOf(v.idx[j]);
      if (slots[s] === -1) {
        slots[s] = v.idx[j];
        used[nUsed++] = s;
        counts[s] = 1;
        values[s] = v.val[j];
        varies[s] = 0;
      } else {
        counts[s]++;
        if (values[s] !== v.val[j]) varies[s] = 1;
      }
    }
  }
  const out = vectors.map((v) => {
    let keep = 0;
    for (let j = 0; j < v.idx.length; j++) {
      const s = slotOf(v.idx[j]);
      if (counts[s] !== k || varies[s]) keep++;
    }
    if (keep === v.idx.length) return v;
    const buffer = new ArrayBuffer(keep * 8);
    const idx = new Uint32Array(buffer, 0, keep);
    const val = new Float32Array(buffer, keep * 4, keep);
    let o = 0;
    for (let j = 0; j < v.idx.length; j++) {
      const s = slotOf(v.idx[j]);
      if (counts[s] === k && !varies[s]) continue;
      idx[o] = v.idx[j];
      val[o++] = v.val[j];
    }
    return { idx, val };
  });
  // Clear only the slots this sentence used (by slot: clearing by lookup would break probe chains).
  for (let u = 0; u < nUsed; u++) slots[used[u]] = -1;
  return out;
}

/**
 * Adds 1 to `counts[i]` for every index i that occurs in the sentence's
 * (pruned) vectors: in how many sentences each bucket varies. Per-shard
 * arrays of these counts add up across shards (the count cut-off's input).
 */
export function countVarying(vectors: readonly SparseVector[], into: Uint32Array): void {
  // Marks via the high bit would need a second pass; a small Set per
  // sentence is cheap next to extraction (vectors are already pruned).
  const seen = new Set<number>();
  for (const v of vectors) for (let j = 0; j < v.idx.length; j++) seen.add(v.idx[j]);
  for (const i of seen) into[i]++;
}
