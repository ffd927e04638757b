/**
 * `edges.v1` — the words and tags at the edges of a constituent, and the
 * words just outside it (`<s>` / `</s>` at the sentence ends).
 * Keys: `edges.v1 first-word NP the`, `edges.v1 last-tag NP NNS`,
 * `edges.v1 after-word PP to` ("[two crates] to the hut").
 * `before-tag` / `after-tag` are off by default: they read tags outside the
 * constituent, which makes the feature depend on more than its subtree.
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { BOS, EOS, labelBytes, tagBytes, wordBytes } from '../pieces.js';

const PARTS = ['first-word', 'last-word', 'first-tag', 'last-tag', 'before-word', 'after-word', 'before-tag', 'after-tag'] as const;

export const edges: FeatureTemplate = {
  id: 'edges.v1',
  summary: 'edge words and tags of a constituent and the words just outside it',
  example: 'edges.v1 first-word NP the',
  options: {
    parts: { type: 'strings', default: PARTS.slice(0, 6), choices: PARTS, doc: 'which edges to fire' },
  },
  configure(options) {
    const on = PARTS.map((p) => (options.parts as string[]).includes(p));
    const prefixes = PARTS.map((p) => piece(`edges.v1 ${p}`));
    return {
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
