/**
 * Synthetic n-best lists for tests: each gold tree is varied by seeded random
 * edits (relabel a phrase, flatten one, group two adjacent siblings) into
 * distinct candidates with noisy scores that loosely prefer fewer edits;
 * about three lists in ten miss the gold tree. The words never change, so
 * every candidate aligns with its gold tree. (Test input only: the demo uses
 * the embedded parser's real k-best lists.)
 */
import type { Vocabulary } from '../../src/core/interner.js';
import { parseTree } from '../../src/core/read-brackets.js';
import type { Tree } from '../../src/core/tree.js';
import { seededRandom } from '../../src/core/random.js';

type Node = { label: string; kids: (Node | string)[] };

function toNodes(tree: Tree, i = 0): Node | string {
  if (tree.isWord[i]) return tree.vocab.words.name(tree.sym[i]);
  const kids: (Node | string)[] = [];
  for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) kids.push(toNodes(tree, c));
  return { label: tree.vocab.labels.name(tree.sym[i]), kids };
}

function write(n: Node | string): string {
  return typeof n === 'string' ? n : `(${n.label} ${n.kids.map(write).join(' ')})`;
}

const isPhrase = (n: Node | string): n is Node => typeof n !== 'string' && n.kids.some((k) => typeof k !== 'string');
const LABELS = ['NP', 'VP', 'PP', 'S', 'SBAR', 'ADJP', 'ADVP'];

export { seededRandom };

function phrases(n: Node, out: { node: Node; parent: Node | null }[] = [], parent: Node | null = null) {
  if (!isPhrase(n)) return out;
  out.push({ node: n, parent });
  for (const k of n.kids) if (typeof k !== 'string') phrases(k, out, n);
  return out;
}

function edit(root: Node, rand: () => number): void {
  const all = phrases(root);
  const pick = all[Math.floor(rand() * all.length)];
  const r = rand();
  if (r < 0.35 && pick.parent) {
    pick.node.label = LABELS[Math.floor(rand() * LABELS.length)];
  } else if (r < 0.65 && pick.parent) {
    // flatten: the node's children take its place
    const p = pick.parent;
    const at = p.kids.indexOf(pick.node);
    p.kids.splice(at, 1, ...pick.node.kids);
  } else if (pick.node.kids.length >= 3) {
    // group two adjacent children under a new phrase
    const at = Math.floor(rand() * (pick.node.kids.length - 1));
    const pair = pick.node.kids.splice(at, 2);
    pick.node.kids.splice(at, 0, { label: LABELS[Math.floor(rand() * LABELS.length)], kids: pair });
  }
}

/** Up to `k` distinct candidates for `gold` (gold itself included at a random rank), best score first. */
export function syntheticCandidates(gold: Tree, k: number, rand: () => number, vocab: Vocabulary): { tree: string; score: number }[] {
  const seen = new Set<string>();
  const out: { tree: string; score: number; edits: number }[] = [];
  const goldText = write(toNodes(gold));
  // Like a real base parser, the list sometimes misses the gold tree.
  const withGold = rand() < 0.7;
  for (let attempt = withGold ? 0 : 1; out.length < k && attempt < k * 6; attempt++) {
    const edits = attempt === 0 ? 0 : 1 + Math.floor(rand() * 3);
    const root = toNodes(parseTree(goldText, vocab)) as Node;
    for (let e = 0; e < edits; e++) edit(root, rand);
    const text = write(root);
    if (seen.has(text)) continue;
    seen.add(text);
    out.push({ tree: text, score: -(20 + 0.9 * gold.wordNodes.length + 1.0 * edits + 5 * rand()), edits });
  }
  out.sort((a, b) => b.score - a.score);
  return out.map((c) => ({ tree: c.tree, score: Math.round(c.score * 1000) / 1000 }));
}
