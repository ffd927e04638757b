/**
 * `head-deps.v1` — head-word dependencies: for every non-head child of a
 * constituent, (parent label, head child label, dependent label, direction,
 * head word, dependent's head word), and versions backed off to POS tags.
 * Keys ("the porter carried two crates"):
 *   `head-deps.v1 ww VP VBD NP R carried crates`
 *   `head-deps.v1 tt VP VBD NP R VBD NNS`
 *   `head-deps.v1 wt VP VBD NP R carried NNS`
 *   `head-deps.v1 tw VP VBD NP R VBD crates`
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { PUNCTUATION_OPTION } from '../options.js';
import { LEFT, RIGHT, labelBytes, tagBytes, wordBytes } from '../pieces.js';

const KINDS = ['ww', 'tt', 'wt', 'tw'] as const;

export const headDeps: FeatureTemplate = {
  id: 'head-deps.v1',
  summary: 'head-word dependencies between a head child and each sibling, with tag back-offs',
  example: 'head-deps.v1 ww VP VBD NP R carried crates',
  exampleTree: '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))',
  options: {
    kinds: { type: 'strings', default: KINDS, choices: KINDS, doc: 'ww: words; tt: tags; wt / tw: head word or tag with dependent tag or word' },
    punctuation: PUNCTUATION_OPTION,
  },
  configure(options) {
    const on = KINDS.map((k) => (options.kinds as string[]).includes(k));
    const prefixes = KINDS.map((k) => piece(`head-deps.v1 ${k}`));
    const punct = new Set(options.punctuation as string[]);
    return {
      reach: { depth: 1 },
      node(v, p, sink) {
        if (v.preterminal[p]) return;
        const t = v.tree;
        const h = v.headChild[p];
        const hw = v.headWord[p];
        for (let d = p + 1; d < t.end[p]; d = t.end[d]) {
          if (d === h || t.isWord[d]) continue;
          if (punct.has(t.vocab.labels.name(t.sym[d]))) continue;
          const dw = v.headWord[d];
          const dir = d < h ? LEFT : RIGHT;
          for (let k = 0; k < 4; k++) {
            if (!on[k]) continue;
            sink.begin(prefixes[k]).add(labelBytes(v, p)).add(labelBytes(v, h)).add(labelBytes(v, d)).add(dir);
            sink.add(k === 0 || k === 2 ? wordBytes(v, hw) : tagBytes(v, hw));
            sink.add(k === 0 || k === 3 ? wordBytes(v, dw) : tagBytes(v, dw));
            sink.emit();
          }
        }
      },
    };
  },
};
