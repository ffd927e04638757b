/** Computes once per candidate what the templates share (heads, heights). */
import { headChildren, headWords } from '../core/find-heads.js';
import type { Tree } from '../core/tree.js';
import type { CandidateView } from './template.js';

export function candidateView(tree: Tree, score = 0, rank = 0): CandidateView {
  const n = tree.size;
  const headChild = headChildren(tree);
  const headWord = headWords(tree, headChild);
  const preterminal = new Uint8Array(n);
  const height = new Int32Array(n);
  for (let i = n - 1; i >= 0; i--) {
    if (tree.isWord[i]) continue;
    let pre = 1;
    let h = 0;
    for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) {
      if (!tree.isWord[c]) pre = 0;
      if (height[c] > h) h = height[c];
    }
    preterminal[i] = pre;
    height[i] = h + 1;
  }
  return { tree, headChild, headWord, preterminal, height, score, rank };
}
