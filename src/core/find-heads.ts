/**
 * Head finding with the table in head-table.ts. Pure.
 *
 * `headChildren(tree)` gives, for every constituent, the node index of its
 * head child (-1 for words); `headWords(tree)` percolates to the head word's
 * node. Rules are compiled per vocabulary to label ids, so the hot path
 * compares integers and allocates one small scratch array per tree.
 */
import { COORDINATORS, DEFAULT_RULE, HEAD_TABLE, NP_LIKE, NP_STEPS, type Direction } from './head-table.js';
import type { Vocabulary } from './interner.js';
import type { Tree } from './tree.js';

interface CompiledStep {
  direction: Direction;
  ids: Int32Array;
}

interface CompiledRule {
  /** NP-like: the last-child-POS test, then the steps, then the last child. */
  np: boolean;
  steps: CompiledStep[];
  /** Fallback when no step matches: first (left) or last (right) child. */
  fallback: Direction;
}

/** Compiles the table to the label ids of one vocabulary (ids are stable per vocabulary). */
class CompiledTable {
  private readonly rules: (CompiledRule | undefined)[] = [];
  readonly posId: number;
  private readonly coordIds: Set<number>;

  constructor(private readonly vocab: Vocabulary) {
    this.posId = vocab.labels.intern('POS');
    this.coordIds = new Set([...COORDINATORS].map((l) => vocab.labels.intern(l)));
  }

  isCoordinator(id: number): boolean {
    return this.coordIds.has(id);
  }

  rule(labelId: number): CompiledRule {
    let r = this.rules[labelId];
    if (r === undefined) {
      const name = this.vocab.labels.name(labelId);
      const ids = (labels: readonly string[]) => Int32Array.from(labels, (l) => this.vocab.labels.intern(l));
      if (NP_LIKE.has(name)) {
        r = { np: true, steps: NP_STEPS.map((s) => ({ direction: s.direction, ids: ids(s.labels) })), fallback: 'right' };
      } else {
        const rule = HEAD_TABLE[name] ?? DEFAULT_RULE;
        r = { np: false, steps: [{ direction: rule.direction, ids: ids(rule.priority) }], fallback: rule.direction };
      }
      this.rules[labelId] = r;
    }
    return r;
  }
}

const tables = new WeakMap<Vocabulary, CompiledTable>();

function tableFor(vocab: Vocabulary): CompiledTable {
  let t = tables.get(vocab);
  if (!t) {
    t = new CompiledTable(vocab);
    tables.set(vocab, t);
  }
  return t;
}

/** Label id of a child for matching: words match nothing (-1). */
function childLabel(tree: Tree, c: number): number {
  return tree.isWord[c] ? -1 : tree.sym[c];
}

function scan(tree: Tree, kids: Int32Array, n: number, step: CompiledStep): number {
  const ids = step.ids;
  for (let w = 0; w < ids.length; w++) {
    const want = ids[w];
    if (step.direction === 'left') {
      for (let k = 0; k < n; k++) if (childLabel(tree, kids[k]) === want) return k;
    } else {
      for (let k = n - 1; k >= 0; k--) if (childLabel(tree, kids[k]) === want) return k;
    }
  }
  return -1;
}

let scratch = new Int32Array(64);

/** Position (0-based, among the children) of the head child of constituent `node`. */
export function headChildPosition(tree: Tree, node: number): number {
  let n = 0;
  for (let c = node + 1; c < tree.end[node]; c = tree.end[c]) {
    if (n === scratch.length) {
      const s = new Int32Array(n * 2);
      s.set(scratch);
      scratch = s;
    }
    scratch[n++] = c;
  }
  if (n <= 1) return n - 1;
  const table = tableFor(tree.vocab);
  const rule = table.rule(tree.sym[node]);
  let h = -1;
  if (rule.np && childLabel(tree, scratch[n - 1]) === table.posId) h = n - 1;
  for (let s = 0; h < 0 && s < rule.steps.length; s++) h = scan(tree, scratch, n, rule.steps[s]);
  if (h < 0) h = rule.fallback === 'left' ? 0 : n - 1;
  if (h >= 2 && table.isCoordinator(childLabel(tree, scratch[h - 1]))) h -= 2;
  return h;
}

/** The node index of the head child of constituent `node`. */
export function headChildNode(tree: Tree, node: number): number {
  const pos = headChildPosition(tree, node);
  let c = node + 1;
  for (let k = 0; k < pos; k++) c = tree.end[c];
  return c;
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
