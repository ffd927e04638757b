/**
 * `span-shape.v1` — constituent label × length bucket, and × position in
 * the sentence (`all`, `initial`, `final`, `inner`).
 * Keys: `span-shape.v1 len PP 3`, `span-shape.v1 pos SBAR 7-9 final`
 * ("the stove smoked because the wet firewood lay in the shed": `final`
 * means the span ends the sentence, punctuation included).
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { labelBytes, lengthBucket } from '../pieces.js';

export const spanShape: FeatureTemplate = {
  id: 'span-shape.v1',
  summary: 'constituent label by span length bucket, and by position in the sentence',
  example: 'span-shape.v1 pos SBAR 7-9 final',
  exampleTree: '(S (NP (DT the) (NN stove)) (VP (VBD smoked) (SBAR (IN because) (S (NP (DT the) (JJ wet) (NN firewood)) (VP (VBD lay) (PP (IN in) (NP (DT the) (NN shed))))))))',
  options: {
    position: { type: 'boolean', default: true, doc: 'also fire label × length × position' },
  },
  configure(options) {
    const len = piece('span-shape.v1 len');
    const pos = piece('span-shape.v1 pos');
    const where = [piece('inner'), piece('initial'), piece('final'), piece('all')];
    const withPos = options.position as boolean;
    return {
      reach: { depth: 0 },
      node(v, i, sink) {
        if (v.preterminal[i]) return;
        const t = v.tree;
        const n = t.wordNodes.length;
        const b = lengthBucket(t.stop[i] - t.start[i]);
        sink.begin(len).add(labelBytes(v, i)).add(b);
        sink.emit();
        if (!withPos) return;
        const w = (t.start[i] === 0 ? 1 : 0) + (t.stop[i] === n ? 2 : 0);
        sink.begin(pos).add(labelBytes(v, i)).add(b).add(where[w]);
        sink.emit();
      },
    };
  },
};
