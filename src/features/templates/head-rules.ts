/**
 * `head-rules.v1` — local rules lexicalised with the head word (and,
 * backed off, its POS tag); the head child is marked `*`.
 * Key: `head-rules.v1 w mended VP * VBD NP` ("mended the stove"),
 * `head-rules.v1 t VBD VP * VBD NP`.
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { HEAD_MARK, labelBytes, symbolBytes, tagBytes, wordBytes } from '../pieces.js';

export const headRules: FeatureTemplate = {
  id: 'head-rules.v1',
  summary: 'local rules with the head child marked, lexicalised with the head word and with its tag',
  example: 'head-rules.v1 w mended VP * VBD NP',
  exampleTree: '(S (NP (DT the) (NN warden)) (VP (VBD mended) (NP (DT the) (NN stove))) (. .))',
  options: {
    words: { type: 'boolean', default: true, doc: 'fire the head-word version' },
    tags: { type: 'boolean', default: true, doc: 'fire the head-tag version' },
  },
  configure(options) {
    const w = piece('head-rules.v1 w');
    const t = piece('head-rules.v1 t');
    const kinds: [Uint8Array, boolean][] = [[w, true], [t, false]];
    const on = [options.words as boolean, options.tags as boolean];
    return {
      reach: { depth: 1 },
      node(v, i, sink) {
        if (v.preterminal[i]) return;
        const tree = v.tree;
        const hw = v.headWord[i];
        const hc = v.headChild[i];
        for (let k = 0; k < 2; k++) {
          if (!on[k]) continue;
          sink.begin(kinds[k][0]).add(kinds[k][1] ? wordBytes(v, hw) : tagBytes(v, hw)).add(labelBytes(v, i));
          for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) {
            if (c === hc) sink.add(HEAD_MARK);
            sink.add(symbolBytes(v, c));
          }
          sink.emit();
        }
      },
    };
  },
};
