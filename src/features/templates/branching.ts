/**
 * `branching.v1` — real-valued shape measures of the whole tree:
 * `right-spine` (constituents on the path from the root through the last
 * non-punctuation child), `depth-max` and `depth-mean` (constituents above a
 * word), `nodes-per-word` (phrasal constituents / words).
 * Key: `branching.v1 right-spine` with value 4 for "(S (NP …) (VP (VBD
 * carried) (NP …) (PP (TO to) (NP …))) (. .))".
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { PUNCTUATION_OPTION } from '../options.js';

const MEASURES = ['right-spine', 'depth-max', 'depth-mean', 'nodes-per-word'] as const;

export const branching: FeatureTemplate = {
  id: 'branching.v1',
  summary: 'right-branching and depth measures of the whole tree (real-valued)',
  example: 'branching.v1 right-spine',
  exampleTree: '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))',
  options: {
    measures: { type: 'strings', default: MEASURES, choices: MEASURES, doc: 'which measures to fire' },
    punctuation: PUNCTUATION_OPTION,
  },
  configure(options) {
    const on = MEASURES.map((m) => (options.measures as string[]).includes(m));
    const keys = MEASURES.map((m) => piece(`branching.v1 ${m}`));
    const punct = new Set(options.punctuation as string[]);
    return {
      tree(v, sink) {
        const t = v.tree;
        const labels = t.vocab.labels;
        // right spine
        let spine = 0;
        let node = 0;
        while (node >= 0 && !t.isWord[node] && !v.preterminal[node]) {
          spine++;
          let next = -1;
          for (let c = node + 1; c < t.end[node]; c = t.end[c]) {
            if (t.isWord[c]) continue;
            if (v.preterminal[c] && punct.has(labels.name(t.sym[c]))) continue;
            next = c;
          }
          node = next;
        }
        // depths of words (constituents above, preterminal included)
        let max = 0;
        let sum = 0;
        let phrasal = 0;
        for (let i = 0; i < t.size; i++) if (!t.isWord[i] && !v.preterminal[i]) phrasal++;
        for (let k = 0; k < t.wordNodes.length; k++) {
          let d = 0;
          for (let p = t.parent[t.wordNodes[k]]; p >= 0; p = t.parent[p]) d++;
          if (d > max) max = d;
          sum += d;
        }
        const n = Math.max(1, t.wordNodes.length);
        const values = [spine, max, sum / n, phrasal / n];
        for (let k = 0; k < MEASURES.length; k++) {
          if (!on[k]) continue;
          sink.begin(keys[k]);
          sink.emit(values[k]);
        }
      },
    };
  },
};
