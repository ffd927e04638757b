/**
 * `rules.v1` — local rules. Fires once per constituent that is not a
 * preterminal: its label rewriting to its children's labels.
 * Key: `rules.v1 VP VBD NP PP`  (the porter "carried [two crates] [to the hut]").
 * Option `lexical`: also the preterminal rules, `rules.v1 NN stove`.
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { labelBytes, symbolBytes } from '../pieces.js';

export const rules: FeatureTemplate = {
  id: 'rules.v1',
  summary: 'local rules: a constituent\'s label and its children\'s labels',
  example: 'rules.v1 VP VBD NP PP',
  exampleTree: '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))',
  options: {
    lexical: { type: 'boolean', default: false, doc: 'also fire preterminal → word rules' },
  },
  configure(options) {
    const prefix = piece('rules.v1');
    const lexical = options.lexical as boolean;
    return {
      reach: { depth: 1 },
      node(v, i, sink) {
        if (v.preterminal[i] && !lexical) return;
        sink.begin(prefix).add(labelBytes(v, i));
        const t = v.tree;
        for (let c = i + 1; c < t.end[i]; c = t.end[c]) sink.add(symbolBytes(v, c));
        sink.emit();
      },
    };
  },
};
