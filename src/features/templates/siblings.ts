/**
 * `siblings.v1` — label n-grams of adjacent children inside one local tree,
 * with their side of the head: L (all left of the head), R (all right), H
 * (the n-gram holds the head, marked `*`). The child list is padded with
 * `<s>` and `</s>`.
 * Key: `siblings.v1 NP L <s> DT` and `siblings.v1 NP H JJ * NN` ("the old
 * kettle").
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { BOS, EOS, HEAD, HEAD_MARK, LEFT, RIGHT, labelBytes, symbolBytes } from '../pieces.js';

export const siblings: FeatureTemplate = {
  id: 'siblings.v1',
  summary: 'n-grams of adjacent child labels in a local tree, by side of the head',
  example: 'siblings.v1 NP H JJ * NN',
  exampleTree: '(S (NP (DT the) (JJ old) (NN kettle)) (VP (VBD leaked)) (. .))',
  options: {
    n: { type: 'integer', default: 2, min: 2, max: 3, doc: 'n-gram length' },
  },
  configure(options) {
    const prefix = piece('siblings.v1');
    const n = options.n as number;
    let kids = new Int32Array(32);
    return {
      reach: { depth: 1 },
      node(v, p, sink) {
        if (v.preterminal[p]) return;
        const t = v.tree;
        // Padded child list: -1 = <s>, -2 = </s>.
        let k = 0;
        const need = t.end[p] - p + 2;
        if (kids.length < need) kids = new Int32Array(need * 2);
        kids[k++] = -1;
        for (let c = p + 1; c < t.end[p]; c = t.end[c]) kids[k++] = c;
        kids[k++] = -2;
        const h = v.headChild[p];
        for (let s = 0; s + n <= k; s++) {
          let hasHead = false;
          let allLeft = true;
          for (let j = s; j < s + n; j++) {
            const c = kids[j];
            if (c === h) hasHead = true;
            if (c === -2 || (c >= 0 && c > h)) allLeft = false;
          }
          sink.begin(prefix).add(labelBytes(v, p)).add(hasHead ? HEAD : allLeft ? LEFT : RIGHT);
          for (let j = s; j < s + n; j++) {
            const c = kids[j];
            if (c === h) sink.add(HEAD_MARK);
            sink.add(c === -1 ? BOS : c === -2 ? EOS : symbolBytes(v, c));
          }
          sink.emit();
        }
      },
    };
  },
};
