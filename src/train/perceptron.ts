/**
 * The averaged perceptron for re-ranking (Collins 2002, "Discriminative
 * training methods for hidden Markov models", §2–3; the averaging of Freund &
 * Schapire 1999, "Large margin classification using the perceptron
 * algorithm"). Per list, in a given order: the target is a candidate with the
 * best F1 (ties to the lower base rank); if the model's choice has a lower F1,
 * w ← w + (d_target − d_choice). The averaged weights are the mean of w over
 * every step (one step per list seen).
 *
 * Averaging without O(dimension) work per step (the "lazy update" trick,
 * as written out by Daumé III, "A Course in Machine Learning", §4.7): with
 * w_s the weights after step s and Δ_j the update made at step j,
 * (1/c) Σ_{s≤c} w_s = Σ_j Δ_j (c − j + 1)/c = w − u/c where u = Σ_j (j − 1)·Δ_j.
 * So each update also adds (j − 1)·Δ to u, and the average after c steps is
 * w − u/c: Collins's average of the weights after every example. Only buckets
 * allowed by the mask (the count cut-off) are ever updated. Pure.
 */
import { f1s, pick, scores, target, type RankingList } from './ranking.js';

export class AveragedPerceptron {
  readonly w: Float64Array;
  private readonly u: Float64Array;
  /** Steps taken (lists seen). */
  steps = 0;
  /** Updates made. */
  updates = 0;
  private scratch = new Float64Array(64);

  /** `mask[b]` = 1 where bucket b may get a weight (null: every bucket). */
  constructor(readonly dimension: number, readonly mask: Uint8Array | null = null) {
    this.w = new Float64Array(dimension);
    this.u = new Float64Array(dimension);
  }

  /** One list: predict, update on a mistake. Returns whether it updated. */
  step(list: RankingList): boolean {
    const m = list.rank.length;
    if (m === 0) return false;
    try {
      return this.learn(list, m);
    } finally {
      this.steps++;
    }
  }

  private learn(list: RankingList, m: number): boolean {
    const f = f1s(list);
    const t = target(list, f);
    if (t < 0) return false;
    if (this.scratch.length < m) this.scratch = new Float64Array(m * 2);
    const s = scores(list, this.w, this.scratch);
    const p = pick(list, s);
    if (f[p] >= f[t]) return false;
    this.add(list, t, 1);
    this.add(list, p, -1);
    this.updates++;
    return true;
  }

  private add(list: RankingList, cand: number, sign: number): void {
    const { w, u, mask } = this;
    // Steps completed before this one: j − 1 for the j-th step.
    const c = this.steps;
    const { start, idx, val } = list;
    for (let k = start[cand]; k < start[cand + 1]; k++) {
      const b = idx[k];
      if (mask && !mask[b]) continue;
      const d = sign * val[k];
      w[b] += d;
      u[b] += c * d;
    }
  }

  /** The average of w over every step so far: w − u / steps (w itself before any step). */
  averaged(out = new Float64Array(this.dimension)): Float64Array {
    const { w, u } = this;
    const c = this.steps;
    if (c === 0) {
      out.set(w);
      return out;
    }
    for (let b = 0; b < w.length; b++) out[b] = w[b] - u[b] / c;
    return out;
  }
}
