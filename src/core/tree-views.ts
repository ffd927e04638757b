/**
 * Read-only views of a tree that scoring, features and tests share: spans,
 * productions (local rules) and parent labels.
 */
import { isPreterminal, type Tree } from './tree.js';

export interface Span {
  label: string;
  /** First word index. */
  start: number;
  /** One past the last word index. */
  end: number;
}

/** One span per constituent, in preorder (preterminals included). */
export function spansOf(tree: Tree): Span[] {
  const out: Span[] = [];
  for (let i = 0; i < tree.size; i++) {
    if (tree.isWord[i]) continue;
    out.push({ label: tree.vocab.labels.name(tree.sym[i]), start: tree.start[i], end: tree.stop[i] });
  }
  return out;
}

/** A right-hand-side symbol: a label, or a word (`{ word }`). */
export type RhsSymbol = string | { word: string };

export interface Production {
  lhs: string;
  rhs: RhsSymbol[];
}

/**
 * The local rules of the tree in preorder: one per constituent, its label
 * rewriting to its children's labels (words appear as `{ word }`).
 */
export function productionsOf(tree: Tree): Production[] {
  const { labels, words } = tree.vocab;
  const out: Production[] = [];
  for (let i = 0; i < tree.size; i++) {
    if (tree.isWord[i]) continue;
    const rhs: RhsSymbol[] = [];
    for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) {
      rhs.push(tree.isWord[c] ? { word: words.name(tree.sym[c]) } : labels.name(tree.sym[c]));
    }
    out.push({ lhs: labels.name(tree.sym[i]), rhs });
  }
  return out;
}

/** `S -> NP VP`, with words quoted: `NN -> "warden"`. */
export function formatProduction(p: Production): string {
  return `${p.lhs} -> ${p.rhs.map((s) => (typeof s === 'string' ? s : JSON.stringify(s.word))).join(' ')}`;
}

/** Label of the parent of `node`, or '' for the root. */
export function parentLabel(tree: Tree, node: number): string {
  const p = tree.parent[node];
  return p < 0 ? '' : tree.vocab.labels.name(tree.sym[p]);
}


export { isPreterminal };
