/**
 * `ancestors.v1` — rules annotated with their parent's (and grandparent's)
 * label. Fired at the ancestor, so every feature depends only on the subtree
 * it fires in.
 * Keys: `ancestors.v1 p VP NP CD NNS` (an NP → CD NNS under a VP: "carried
 * [two crates]"), `ancestors.v1 gp S VP NP CD NNS`.
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureSink } from '../../core/feature-sink.js';
import type { CandidateView, FeatureTemplate } from '../template.js';
import { labelBytes, symbolBytes } from '../pieces.js';

function addRule(v: CandidateView, c: number, sink: FeatureSink): void {
  const t = v.tree;
  sink.add(labelBytes(v, c));
  for (let d = c + 1; d < t.end[c]; d = t.end[d]) sink.add(symbolBytes(v, d));
}

export const ancestors: FeatureTemplate = {
  id: 'ancestors.v1',
  summary: 'local rules with the parent label, and with parent and grandparent labels',
  example: 'ancestors.v1 gp S VP NP CD NNS',
  exampleTree: '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))',
  options: {
    grandparent: { type: 'boolean', default: true, doc: 'also fire rules with parent and grandparent labels' },
  },
  configure(options) {
    const p = piece('ancestors.v1 p');
    const gp = piece('ancestors.v1 gp');
    const grand = options.grandparent as boolean;
    return {
      reach: { depth: 3 },
      node(v, g, sink) {
        const t = v.tree;
        if (v.preterminal[g]) return;
        for (let c = g + 1; c < t.end[g]; c = t.end[c]) {
          if (t.isWord[c] || v.preterminal[c]) continue;
          sink.begin(p).add(labelBytes(v, g));
          addRule(v, c, sink);
          sink.emit();
          if (!grand) continue;
          for (let d = c + 1; d < t.end[c]; d = t.end[d]) {
            if (t.isWord[d] || v.preterminal[d]) continue;
            sink.begin(gp).add(labelBytes(v, g)).add(labelBytes(v, c));
            addRule(v, d, sink);
            sink.emit();
          }
        }
      },
    };
  },
};
