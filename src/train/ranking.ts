/**
 * A list to rank, as the trainers see it: per candidate its base rank,
 * PARSEVAL counts and its vector relative to the list's reference (a ranking
 * only needs differences between candidates, so the reference itself is never
 * read). Pure.
 */
import { sentenceF1 } from '../core/f1-table.js';
import type { StoredVector } from '../core/sparse-vector.js';

export interface RankingList {
  gold: number;
  /** Words (for reports by length). */
  len: number;
  cands: { rank: number; matched: number; test: number; diff: StoredVector }[];
}

/** The model score of every candidate: w · difference (the reference adds the same to all). */
export function scores(list: RankingList, w: Float64Array | Float32Array, out = new Float64Array(list.cands.length)): Float64Array {
  for (let c = 0; c < list.cands.length; c++) {
    const { idx, val, ridx, rval } = list.cands[c].diff;
    let s = 0;
    for (let k = 0; k < idx.length; k++) s += w[idx[k]] * val[k];
    for (let k = 0; k < ridx.length; k++) s += w[ridx[k]] * rval[k];
    out[c] = s;
  }
  return out;
}

/** The candidate a model picks: the highest score, ties to the lower base rank (-1 for an empty list). */
export function pick(list: RankingList, s: Float64Array): number {
  let best = -1;
  for (let c = 0; c < list.cands.length; c++) {
    if (best < 0 || s[c] > s[best] || (s[c] === s[best] && list.cands[c].rank < list.cands[best].rank)) best = c;
  }
  return best;
}

/** Sentence F1 of every candidate. */
export function f1s(list: RankingList): Float64Array {
  return Float64Array.from(list.cands, (c) => sentenceF1(list.gold, c));
}

/**
 * The training target: a candidate with the best F1, ties to the lower base
 * rank; -1 when every candidate has the same F1 (nothing to learn there).
 */
export function target(list: RankingList, f: Float64Array = f1s(list)): number {
  let best = -1;
  let varies = false;
  for (let c = 0; c < list.cands.length; c++) {
    if (c > 0 && f[c] !== f[0]) varies = true;
    if (best < 0 || f[c] > f[best] || (f[c] === f[best] && list.cands[c].rank < list.cands[best].rank)) best = c;
  }
  return varies ? best : -1;
}
