/**
 * The direct path: each candidate's whole vector, built from every node and
 * whole-tree feature and summed per bucket (float64, then rounded to
 * float32), followed by dropping the features whose value is the same in
 * every candidate of the list. Simple and slow: kept as the test oracle (and
 * the benchmark's floor) for the difference path in extract-vectors.ts.
 */
import { FeatureSink } from '../core/feature-sink.js';
import { SparseAccumulator } from '../core/sparse-accumulator.js';
import type { SparseVector } from '../core/sparse-vector.js';
import { candidateView } from './candidate-view.js';
import type { CandidateInput } from './extract-vectors.js';
import type { ConfiguredTemplate } from './template.js';

export interface DirectOptions {
  templates: readonly ConfiguredTemplate[];
  bits: number;
  seed: number;
  dropUniform?: boolean;
}

/** One candidate's whole vector (float32 values, zeros dropped). */
export function directVector(options: DirectOptions, cand: CandidateInput, sink = new FeatureSink(options.bits, options.seed), acc = new SparseAccumulator()): SparseVector {
  const view = candidateView(cand.tree, cand.score, cand.rank);
  const t = view.tree;
  sink.clear();
  for (let i = 0; i < t.size; i++) {
    if (t.isWord[i]) continue;
    for (const tpl of options.templates) tpl.node?.(view, i, sink);
  }
  for (const tpl of options.templates) tpl.tree?.(view, sink);
  acc.clear();
  acc.addAll(sink.buckets, sink.values, 0, sink.length);
  const v = acc.take(Math.fround);
  acc.clear();
  return v;
}

/** Every candidate's vector, with the features that are the same in all of them dropped (unless `dropUniform` is false). */
export function directVectors(options: DirectOptions, cands: readonly CandidateInput[]): SparseVector[] {
  const sink = new FeatureSink(options.bits, options.seed);
  const acc = new SparseAccumulator();
  const vectors = cands.map((c) => directVector(options, c, sink, acc));
  if (options.dropUniform === false || vectors.length === 0) return vectors;
  // A bucket is uniform when every candidate has it, with one value.
  const seen = new Map<number, { count: number; value: number; same: boolean }>();
  for (const v of vectors) {
    for (let k = 0; k < v.idx.length; k++) {
      const s = seen.get(v.idx[k]);
      if (!s) seen.set(v.idx[k], { count: 1, value: v.val[k], same: true });
      else {
        s.count++;
        if (s.value !== v.val[k]) s.same = false;
      }
    }
  }
  const uniform = (b: number) => {
    const s = seen.get(b)!;
    return s.count === vectors.length && s.same;
  };
  return vectors.map((v) => {
    const keep = [...v.idx.keys()].filter((k) => !uniform(v.idx[k]));
    return { idx: Uint32Array.from(keep, (k) => v.idx[k]), val: Float64Array.from(keep, (k) => v.val[k]) };
  });
}
