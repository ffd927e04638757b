/**
 * `coordination.v1` — parallelism of coordinated constituents. At every
 * constituent with a coordinator child (CC, CONJP), for each pair of
 * adjacent conjuncts (children other than coordinators and punctuation):
 * whether they share their label, their sequence of child labels, the
 * bucketed difference of their lengths and of their depths, and the label
 * pair itself.
 * Keys ("checked [the stoves] and [the lamps]"): `coordination.v1 label NP same`,
 * `coordination.v1 kids NP same`, `coordination.v1 len NP 0`,
 * `coordination.v1 depth NP 0`, `coordination.v1 pair NP NP NP`.
 */
import { piece } from '../../core/feature-sink.js';
import type { CandidateView, FeatureTemplate } from '../template.js';
import { PUNCTUATION_OPTION } from '../options.js';
import { DIFF, SAME, diffBucket, labelBytes } from '../pieces.js';

function sameChildLabels(v: CandidateView, a: number, b: number): boolean {
  const t = v.tree;
  let x = a + 1;
  let y = b + 1;
  while (x < t.end[a] && y < t.end[b]) {
    if (t.isWord[x] !== t.isWord[y] || t.sym[x] !== t.sym[y]) return false;
    x = t.end[x];
    y = t.end[y];
  }
  return x >= t.end[a] && y >= t.end[b];
}

export const coordination: FeatureTemplate = {
  id: 'coordination.v1',
  summary: 'parallelism of adjacent conjuncts: label, child labels, length and depth differences',
  example: 'coordination.v1 kids NP same',
  exampleTree: '(S (NP (DT the) (NN warden)) (VP (VBD checked) (NP (NP (DT the) (NNS stoves)) (CC and) (NP (DT the) (NNS lamps)))) (. .))',
  options: {
    coordinators: { type: 'strings', default: ['CC', 'CONJP'], doc: 'labels of coordinators' },
    punctuation: PUNCTUATION_OPTION,
  },
  configure(options) {
    const coord = new Set(options.coordinators as string[]);
    const punct = new Set(options.punctuation as string[]);
    const [label, kids, len, depth, pair] = ['label', 'kids', 'len', 'depth', 'pair'].map((k) => piece(`coordination.v1 ${k}`));
    const conjuncts: number[] = [];
    return {
      reach: { depth: 2 },
      node(v, p, sink) {
        if (v.preterminal[p]) return;
        const t = v.tree;
        const labels = t.vocab.labels;
        let hasCoordinator = false;
        conjuncts.length = 0;
        for (let c = p + 1; c < t.end[p]; c = t.end[c]) {
          if (t.isWord[c]) continue;
          const name = labels.name(t.sym[c]);
          if (coord.has(name)) hasCoordinator = true;
          else if (!punct.has(name)) conjuncts.push(c);
        }
        if (!hasCoordinator || conjuncts.length < 2) return;
        for (let k = 0; k + 1 < conjuncts.length; k++) {
          const a = conjuncts[k];
          const b = conjuncts[k + 1];
          sink.begin(label).add(labelBytes(v, p)).add(t.sym[a] === t.sym[b] ? SAME : DIFF);
          sink.emit();
          sink.begin(kids).add(labelBytes(v, p)).add(sameChildLabels(v, a, b) ? SAME : DIFF);
          sink.emit();
          sink.begin(len).add(labelBytes(v, p)).add(diffBucket(Math.abs((t.stop[a] - t.start[a]) - (t.stop[b] - t.start[b]))));
          sink.emit();
          sink.begin(depth).add(labelBytes(v, p)).add(diffBucket(Math.abs(v.height[a] - v.height[b])));
          sink.emit();
          sink.begin(pair).add(labelBytes(v, p)).add(labelBytes(v, a)).add(labelBytes(v, b));
          sink.emit();
        }
      },
    };
  },
};
