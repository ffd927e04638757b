/**
 * The averaged perceptron for re-ranking (src/train/perceptron.ts).
 * Outside references:
 * - the perceptron convergence theorem (Novikoff 1962; for ranking / structured
 *   outputs, Collins 2002, Theorem 1): on data separable with margin γ by a
 *   unit vector, the number of updates is at most (R/γ)², R the largest norm
 *   of a difference d_target − d_other;
 * - the averaged parameters of Collins (2002, §3.5): the mean of the weight
 *   vector after every example of every pass — compared with the lazy
 *   (O(updates)) computation;
 * - a three-sentence example worked by hand from the update rule.
 */
import { describe, expect, it } from 'vitest';
import { AveragedPerceptron } from '../src/train/perceptron.js';
import { rankingList, type RankingList } from '../src/train/ranking.js';
import { seededRandom } from '../src/core/random.js';
import type { StoredVector } from '../src/core/sparse-vector.js';

/** A dense vector over buckets 0 … n−1 as a stored vector (integer part, or real part for non-integers). */
function stored(x: number[]): StoredVector {
  const ints = x.map((v, b) => [b, v]).filter(([, v]) => v !== 0 && Number.isInteger(v));
  const reals = x.map((v, b) => [b, v]).filter(([, v]) => v !== 0 && !Number.isInteger(v));
  return { idx: Uint32Array.from(ints, ([b]) => b), val: Int32Array.from(ints, ([, v]) => v), ridx: Uint32Array.from(reals, ([b]) => b), rval: Float64Array.from(reals, ([, v]) => v) };
}

/** A list whose candidate `best` has F1 1 and the others lower (gold 10 brackets). */
function list(vectors: number[][], best: number): RankingList {
  return rankingList({ gold: 10, len: 10, cands: vectors.map((v, rank) => ({ rank, matched: rank === best ? 10 : 5, test: 10, diff: stored(v) })) });
}

describe('averaged perceptron', () => {
  it('updates at most (R/γ)² times on separable data (Novikoff 1962; Collins 2002, Theorem 1)', () => {
    const rand = seededRandom(3);
    const D = 12;
    for (const gamma of [0.5, 1, 2]) {
      // A unit separator u; every list's target beats every other candidate by at least γ along u.
      const u = Array.from({ length: D }, () => rand() - 0.5);
      const norm = Math.hypot(...u);
      for (let i = 0; i < D; i++) u[i] /= norm;
      const data: RankingList[] = [];
      let R = 0;
      for (let s = 0; s < 60; s++) {
        const m = 2 + Math.floor(rand() * 3);
        const vs = Array.from({ length: m }, () => Array.from({ length: D }, () => Math.round((rand() - 0.5) * 8)));
        const t = Math.floor(rand() * m);
        const proj = (v: number[]) => v.reduce((a, x, i) => a + x * u[i], 0);
        // Push the target along u until its margin over every other candidate is ≥ γ.
        const need = Math.max(0, ...vs.map((v, c) => (c === t ? 0 : gamma - (proj(vs[t]) - proj(v)))));
        vs[t] = vs[t].map((x, i) => x + need * u[i]);
        for (let c = 0; c < m; c++) if (c !== t) R = Math.max(R, Math.hypot(...vs[t].map((x, i) => x - vs[c][i])));
        data.push(list(vs, t));
      }
      const p = new AveragedPerceptron(D);
      for (let epoch = 0; epoch < 1000; epoch++) {
        const before = p.updates;
        for (const l of data) p.step(l);
        if (p.updates === before) break;
      }
      expect(p.updates).toBeGreaterThan(0);
      expect(p.updates).toBeLessThanOrEqual((R / gamma) ** 2);
      // Converged: one more pass makes no update.
      const before = p.updates;
      for (const l of data) p.step(l);
      expect(p.updates).toBe(before);
    }
  });

  it('averages lazily exactly as the mean of the weights after every step (Collins 2002, §3.5)', () => {
    const rand = seededRandom(9);
    const D = 6;
    const data = Array.from({ length: 25 }, () => {
      const m = 2 + Math.floor(rand() * 3);
      return list(Array.from({ length: m }, () => Array.from({ length: D }, () => (rand() < 0.3 ? 0.5 : Math.round((rand() - 0.5) * 6)))), Math.floor(rand() * m));
    });
    const p = new AveragedPerceptron(D);
    const sum = new Float64Array(D);
    let steps = 0;
    for (let epoch = 0; epoch < 4; epoch++) {
      for (const l of data) {
        p.step(l);
        for (let i = 0; i < D; i++) sum[i] += p.w[i];
        steps++;
      }
    }
    const naive = Array.from(sum, (x) => x / steps);
    const lazy = Array.from(p.averaged());
    lazy.forEach((x, i) => expect(x).toBeCloseTo(naive[i], 12));
    expect(p.steps).toBe(steps);
  });

  it('follows a three-sentence example worked by hand', () => {
    // Dimension 3. Sentence 1: candidates a = (1,0,0), b = (0,1,0), target b.
    // Sentence 2: a = (0,0,1), b = (1,0,0), target a. Sentence 3: a = (0,1,0), b = (0,0,1), target a.
    // Step 1: w = 0, scores tie → pick rank 0 (a), F1(a) < F1(b): w = b − a = (−1, 1, 0).
    // Step 2: scores a = 0, b = −1 → pick a = target: no update. w = (−1, 1, 0).
    // Step 3: scores a = 1, b = 0 → pick a = target: no update.
    // Average over the three steps: w after each step is (−1,1,0) each time → (−1, 1, 0).
    const data = [list([[1, 0, 0], [0, 1, 0]], 1), list([[0, 0, 1], [1, 0, 0]], 0), list([[0, 1, 0], [0, 0, 1]], 0)];
    const p = new AveragedPerceptron(3);
    expect(data.map((l) => p.step(l))).toEqual([true, false, false]);
    expect(Array.from(p.w)).toEqual([-1, 1, 0]);
    expect(Array.from(p.averaged())).toEqual([-1, 1, 0]);
    // A second pass: step 4 (sentence 1) now picks b (score 1 > −1): no update. Mean of four equal vectors.
    expect(p.step(data[0])).toBe(false);
    expect(Array.from(p.averaged())).toEqual([-1, 1, 0]);
  });

  it('updates only buckets the mask keeps, and learns nothing from lists whose candidates all score alike in F1', () => {
    const p = new AveragedPerceptron(3, Uint8Array.of(1, 0, 1));
    p.step(list([[1, 0, 0], [0, 1, 1]], 1));
    expect(Array.from(p.w)).toEqual([-1, 0, 1]);
    const flat: RankingList = rankingList({ gold: 4, len: 4, cands: [{ rank: 0, matched: 2, test: 4, diff: stored([5, 0, 0]) }, { rank: 1, matched: 2, test: 4, diff: stored([0, 5, 0]) }] });
    expect(p.step(flat)).toBe(false);
  });
});
