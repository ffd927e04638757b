/**
 * `boundary-words.v1` — the words and tags at a constituent's boundaries:
 * its first and last word and tag, and the words just outside it (`<s>` /
 * `</s>` at the sentence ends).
 * Keys: `boundary-words.v1 first-word NP the`, `boundary-words.v1 last-tag NP NNS`,
 * `boundary-words.v1 word-after NP to` ("[two crates] to the hut").
 * `tag-before` / `tag-after` are off by default: they read tags outside the
 * constituent, which makes the feature depend on more than its subtree.
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { BOS, EOS, labelBytes, tagBytes, wordBytes } from '../pieces.js';

const PARTS = ['first-word', 'last-word', 'first-tag', 'last-tag', 'word-before', 'word-after', 'tag-before', 'tag-after'] as const;

export const boundaryWords: FeatureTemplate = {
  id: 'boundary-words.v1',
  summary: 'first and last word and tag of a constituent, and the words just outside it',
  example: 'boundary-words.v1 first-word NP the',
  exampleTree: '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))',
  options: {
    parts: { type: 'strings', default: PARTS.slice(0, 6), choices: PARTS, doc: 'which boundary words and tags to fire' },
  },
  configure(options) {
    const on = PARTS.map((p) => (options.parts as string[]).includes(p));
    const prefixes = PARTS.map((p) => piece(`boundary-words.v1 ${p}`));
    return {
      // First and last tags lie deep in the subtree; tags outside the span are not local at all.
      reach: { depth: 0, edgeTags: on[2] || on[3] },
      local: !on[6] && !on[7],
      node(v, i, sink) {
        if (v.preterminal[i]) return;
        const t = v.tree;
        const words = t.wordNodes;
        const first = words[t.start[i]];
        const last = words[t.stop[i] - 1];
        const before = t.start[i] > 0 ? words[t.start[i] - 1] : -1;
        const after = t.stop[i] < words.length ? words[t.stop[i]] : -1;
        for (let k = 0; k < PARTS.length; k++) {
          if (!on[k]) continue;
          let b: Uint8Array;
          switch (k) {
            case 0: b = wordBytes(v, first); break;
            case 1: b = wordBytes(v, last); break;
            case 2: b = tagBytes(v, first); break;
            case 3: b = tagBytes(v, last); break;
            case 4: b = before < 0 ? BOS : wordBytes(v, before); break;
            case 5: b = after < 0 ? EOS : wordBytes(v, after); break;
            case 6: b = before < 0 ? BOS : tagBytes(v, before); break;
            default: b = after < 0 ? EOS : tagBytes(v, after);
          }
          sink.begin(prefixes[k]).add(labelBytes(v, i)).add(b);
          sink.emit();
        }
      },
    };
  },
};
