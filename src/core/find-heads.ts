/**
 * Head finding with the table in head-table.ts. Pure.
 *
 * `headChildren(tree)` gives, for every constituent, the index of its head
 * child (-1 for words); `headWords(tree)` percolates to the head word's node.
 * Both walk the preorder arrays backwards so children are done before parents.
 */
import { COORDINATORS, DEFAULT_RULE, HEAD_TABLE, NP_LIKE, NP_STEPS, type Direction } from './head-table.js';
import type { Tree } from './tree.js';

function labelOf(tree: Tree, node: number): string {
  return tree.isWord[node] ? '' : tree.vocab.labels.name(tree.sym[node]);
}

function scan(children: number[], labels: string[], direction: Direction, wanted: readonly string[]): number {
  for (const w of wanted) {
    if (direction === 'left') {
      for (let k = 0; k < children.length; k++) if (labels[k] === w) return k;
    } else {
      for (let k = children.length - 1; k >= 0; k--) if (labels[k] === w) return k;
    }
  }
  return -1;
}

/** Position (0-based, among the children) of the head child of constituent `node`. */
export function headChildPosition(tree: Tree, node: number): number {
  const children: number[] = [];
  for (let c = node + 1; c < tree.end[node]; c = tree.end[c]) children.push(c);
  if (children.length <= 1) return children.length - 1;
  const labels = children.map((c) => labelOf(tree, c));
  const parent = labelOf(tree, node);
  let h: number;
  if (NP_LIKE.has(parent)) {
    h = -1;
    if (labels[labels.length - 1] === 'POS') h = labels.length - 1;
    for (let s = 0; h < 0 && s < NP_STEPS.length; s++) h = scan(children, labels, NP_STEPS[s].direction, NP_STEPS[s].labels);
    if (h < 0) h = labels.length - 1;
  } else {
    const rule = HEAD_TABLE[parent] ?? DEFAULT_RULE;
    h = scan(children, labels, rule.direction, rule.priority);
    if (h < 0) h = rule.direction === 'left' ? 0 : labels.length - 1;
  }
  if (h >= 2 && COORDINATORS.has(labels[h - 1])) h -= 2;
  return h;
}

/** For every node, the node index of its head child (-1 for words). */
export function headChildren(tree: Tree): Int32Array {
  const out = new Int32Array(tree.size).fill(-1);
  for (let i = 0; i < tree.size; i++) {
    if (tree.isWord[i]) continue;
    const pos = headChildPosition(tree, i);
    let c = i + 1;
    for (let k = 0; k < pos; k++) c = tree.end[c];
    out[i] = c;
  }
  return out;
}

/** For every node, the node index of its head word (words head themselves). */
export function headWords(tree: Tree, children: Int32Array = headChildren(tree)): Int32Array {
  const out = new Int32Array(tree.size);
  for (let i = tree.size - 1; i >= 0; i--) out[i] = tree.isWord[i] ? i : out[children[i]];
  return out;
}
