/**
 * Pseudo-constant pruning (common practice for n-best re-rankers): within one
 * sentence, a feature whose value is the same in every candidate cannot
 * change the ranking, so it is dropped. Absent means value 0, so a feature
 * present in some candidates only is kept.
 *
 * Hot path: one open-addressing table over bucket indices per sentence
 * (reused), no Map, one buffer per pruned vector.
 */
import { VectorArena, type SparseVector } from '../core/feature-sink.js';

let slots = new Int32Array(1 << 14).fill(-1);
let counts = new Int32Array(1 << 14);
let values = new Float32Array(1 << 14);
let varies = new Uint8Array(1 << 14);
let used = new Int32Array(1 << 13);
/** Slot of every (vector, entry) in order, so later passes need no lookups. */
let slotAt = new Int32Array(1 << 14);

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

export function pruneConstant(vectors: readonly SparseVector[], arena?: VectorArena): SparseVector[] {
  return pruneSentence(vectors, true, arena).vectors;
}

/**
 * Prunes (when `prune`) and lists the sentence's varying buckets: those left
 * in any vector, each once, in no particular order (for the per-shard
 * count arrays).
 */
export function pruneSentence(vectors: readonly SparseVector[], prune: boolean, arena = new VectorArena()): { vectors: SparseVector[]; varying: Uint32Array } {
  const k = vectors.length;
  if (k === 0) return { vectors: [], varying: new Uint32Array(0) };
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
  if (slotAt.length < total) slotAt = new Int32Array(total * 2);
  let nUsed = 0;
  let at = 0;
  for (const v of vectors) {
    for (let j = 0; j < v.idx.length; j++) {
      const s = slotOf(v.idx[j]);
      slotAt[at++] = s;
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
  const constant = (s: number) => prune && counts[s] === k && !varies[s];
  at = 0;
  const out = vectors.map((v) => {
    const base = at;
    at += v.idx.length;
    let keep = 0;
    for (let j = 0; j < v.idx.length; j++) if (!constant(slotAt[base + j])) keep++;
    if (keep === v.idx.length) return v;
    const { idx, val } = arena.alloc(keep);
    let o = 0;
    for (let j = 0; j < v.idx.length; j++) {
      if (constant(slotAt[base + j])) continue;
      idx[o] = v.idx[j];
      val[o++] = v.val[j];
    }
    return { idx, val };
  });
  let nVarying = 0;
  for (let u = 0; u < nUsed; u++) if (!constant(used[u])) nVarying++;
  const varying = new Uint32Array(nVarying);
  for (let u = 0, o = 0; u < nUsed; u++) if (!constant(used[u])) varying[o++] = slots[used[u]];
  // Clear only the slots this sentence used (by slot: clearing by lookup would break probe chains).
  for (let u = 0; u < nUsed; u++) slots[used[u]] = -1;
  return { vectors: out, varying };
}
