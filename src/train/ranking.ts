/**
 * Ranking lists (records.ts, RankingList) as the trainers, eval and rerank
 * score them: w · (candidate − reference) per candidate (the reference adds
 * the same to every candidate, so it is never read), the model's pick (ties to
 * the lower base rank), the base 1-best, the oracle, the training target.
 * One summation order everywhere (integer part, then real part), so train,
 * eval and rerank always pick alike. Pure.
 */
import { sentenceF1 } from '../core/f1-table.js';
import type { RankingList } from '../records.js';

export type { RankingList };
export { rankingList } from '../formats/shard-record.js';

export function size(list: RankingList): number {
  return list.rank.length;
}

/** The model score of every candidate: w · difference. */
export function scores(list: RankingList, w: Float64Array | Float32Array, out = new Float64Array(list.rank.length)): Float64Array {
  const { start, idx, val } = list;
  for (let c = 0; c < list.rank.length; c++) {
    let s = 0;
    for (let k = start[c]; k < start[c + 1]; k++) s += w[idx[k]] * val[k];
    out[c] = s;
  }
  return out;
}

/** The candidate a model picks: the highest score, ties to the lower base rank (-1 for an empty list). */
export function pick(list: RankingList, s: Float64Array): number {
  let best = -1;
  const rank = list.rank;
  for (let c = 0; c < rank.length; c++) {
    if (best < 0 || s[c] > s[best] || (s[c] === s[best] && rank[c] < rank[best])) best = c;
  }
  return best;
}

/** Sentence F1 of every candidate. */
export function f1s(list: RankingList): Float64Array {
  const out = new Float64Array(list.rank.length);
  for (let c = 0; c < out.length; c++) out[c] = sentenceF1(list.gold, { matched: list.matched[c], test: list.test[c] });
  return out;
}

/**
 * The training target: a candidate with the best F1, ties to the lower base
 * rank; -1 when every candidate has the same F1 (nothing to learn there).
 */
export function target(list: RankingList, f: Float64Array = f1s(list)): number {
  let best = -1;
  let varies = false;
  const rank = list.rank;
  for (let c = 0; c < rank.length; c++) {
    if (c > 0 && f[c] !== f[0]) varies = true;
    if (best < 0 || f[c] > f[best] || (f[c] === f[best] && rank[c] < rank[best])) best = c;
  }
  return varies ? best : -1;
}

/** The candidates as the F1 table takes them. */
export function scored(list: RankingList): { gold: number; cands: { rank: number; matched: number; test: number }[] } {
  return { gold: list.gold, cands: Array.from(list.rank, (rank, c) => ({ rank, matched: list.matched[c], test: list.test[c] })) };
}
