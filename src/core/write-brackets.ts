/**
 * Writes a tree back to bracketed text on one line: `(S (NP (NN warden)) ...)`.
 * read → write → read gives the same tree (an unlabeled root with several
 * children is written as `( ...)`).
 */
import type { Tree } from './tree.js';

export function writeTree(tree: Tree, node = 0): string {
  const parts: string[] = [];
  const { labels, words } = tree.vocab;
  const stop = tree.end[node];
  // Ends of the constituents still open, innermost last.
  const open: number[] = [];
  for (let i = node; i < stop; i++) {
    while (open.length > 0 && open[open.length - 1] <= i) {
      parts.push(')');
      open.pop();
    }
    if (i !== node) parts.push(' ');
    if (tree.isWord[i]) {
      parts.push(words.name(tree.sym[i]));
    } else {
      parts.push('(', labels.name(tree.sym[i]));
      open.push(tree.end[i]);
    }
  }
  for (let k = 0; k < open.length; k++) parts.push(')');
  return parts.join('');
}
