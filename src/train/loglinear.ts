/**
 * The log-linear re-ranker: the conditional likelihood of the best
 * candidates of each list (the estimator of Johnson et al. 1999, "Estimators
 * for stochastic unification-based grammars", with several best parses per
 * sentence), written from the definition: for a list with candidate
 * scores s_c = w·d_c and B the candidates of best F1,
 *   loss = log Σ_c exp(s_c) − log Σ_{c∈B} exp(s_c),
 * summed over lists (lists whose candidates all have one F1 teach nothing and
 * are skipped), plus (λ/2)‖w‖². Gradient: Σ_lists Σ_c (p_c − q_c) d_c + λw,
 * with p the softmax over all candidates and q the softmax over B (0 outside
 * B). Weights live in a compact space of the kept buckets (`index` maps a
 * bucket to its coordinate, −1 for buckets cut off). Pure.
 */
import { f1s, type RankingList } from './ranking.js';

export class LoglinearObjective {
  value = 0;
  lists = 0;
  private s = new Float64Array(64);
  private p = new Float64Array(64);

  constructor(readonly index: Int32Array, readonly l2: number) {}

  /** Starts a pass: clears the gradient. */
  begin(g: Float64Array): void {
    g.fill(0);
    this.value = 0;
    this.lists = 0;
  }

  /** Adds one list's loss to `value` and its gradient to g, at weights x (compact). */
  add(list: RankingList, x: Float64Array, g: Float64Array): void {
    const m = list.rank.length;
    if (m < 2) return;
    const f = f1s(list);
    let bestF = -Infinity;
    let varies = false;
    for (let c = 0; c < m; c++) {
      if (f[c] > bestF) bestF = f[c];
      if (f[c] !== f[0]) varies = true;
    }
    if (!varies) return;
    if (this.s.length < m) {
      this.s = new Float64Array(m * 2);
      this.p = new Float64Array(m * 2);
    }
    const s = this.s;
    const index = this.index;
    let max = -Infinity;
    const { start, idx, val } = list;
    for (let c = 0; c < m; c++) {
      let v = 0;
      for (let k = start[c]; k < start[c + 1]; k++) {
        const j = index[idx[k]];
        if (j >= 0) v += x[j] * val[k];
      }
      s[c] = v;
      if (v > max) max = v;
    }
    // log-sum-exp over all and over the best, stably.
    let z = 0;
    let zb = 0;
    for (let c = 0; c < m; c++) {
      const e = Math.exp(s[c] - max);
      z += e;
      if (f[c] === bestF) zb += e;
    }
    this.value += Math.log(z) - Math.log(zb);
    this.lists++;
    const p = this.p;
    for (let c = 0; c < m; c++) {
      const e = Math.exp(s[c] - max);
      p[c] = e / z - (f[c] === bestF ? e / zb : 0);
    }
    for (let c = 0; c < m; c++) {
      const coef = p[c];
      if (coef === 0) continue;
      for (let k = start[c]; k < start[c + 1]; k++) {
        const j = index[idx[k]];
        if (j >= 0) g[j] += coef * val[k];
      }
    }
  }

  /** Ends a pass: adds the penalty; returns the objective. */
  end(x: Float64Array, g: Float64Array): number {
    let sq = 0;
    for (let j = 0; j < x.length; j++) {
      sq += x[j] * x[j];
      g[j] += this.l2 * x[j];
    }
    this.value += (this.l2 / 2) * sq;
    return this.value;
  }
}
