/**
 * Markovised binarisation (Klein & Manning 2003, "Accurate unlexicalized
 * parsing", §2: vertical order v, horizontal order h) of a normalised tree,
 * and the symbols it makes.
 *
 * A node X with children C1 … Cn (n ≥ 3) becomes right-branching:
 *   X → C1 @1,  @1 → C2 @2,  …,  @(n-2) → C(n-1) Cn
 * where @k is an intermediate symbol for X that remembers X's annotation and
 * the base labels of the last h children already generated (C1 … Ck; all of
 * them when h is Infinity, which makes the product of the pieces' relative
 * frequencies telescope to the relative frequency of X → C1 … Cn).
 * Phrasal symbols carry their v - 1 nearest ancestors' labels (parent
 * annotation when v = 2); tags are not annotated, so the lexicon is not split.
 * A virtual top symbol sits over the root: TOP → root.
 *
 * De-binarisation is the inverse: drop intermediate symbols (their children
 * join the parent's), print base labels only, drop TOP (grammar.ts,
 * TreeTextWriter).
 */
import { DataError } from '../core/errors.js';
import type { Tree } from '../core/tree.js';

export const KIND_REAL = 0;
export const KIND_INTERMEDIATE = 1;
export const KIND_TOP = 2;

/** What identifies a grammar symbol. `null` in `ctx` is the virtual top. */
export interface SymbolSpec {
  kind: number;
  /** Base label (what is printed); null for TOP. */
  base: string | null;
  /** Ancestors' base labels, nearest first (v - 1 of them at most). */
  ctx: (string | null)[];
  /** Intermediates only: base labels of the last h children already generated. */
  sibs: string[];
}

/** An unambiguous text key of a symbol (labels never contain whitespace, but JSON needs no such promise). */
export function symbolKey(s: SymbolSpec): string {
  return JSON.stringify([s.kind, s.base, s.ctx, s.sibs]);
}

/**
 * A binarised tree in preorder. `sym[i]` is a symbol id, or -1 - k for the
 * k-th word; `kids[i]` is 0 (word), 1 or 2; `size[i]` counts the nodes of
 * i's subtree; `owner[i]` is the node of the original tree whose local rule
 * the binarised node's rule is part of (-1 for TOP and words).
 */
export interface BinTree {
  sym: number[];
  kids: number[];
  size: number[];
  owner: number[];
}

export interface BinariseOptions {
  horizontal: number;
  vertical: number;
}

/**
 * Binarises `tree`, resolving every symbol through `resolve` (which returns
 * an id, or -1 when the symbol is unknown; then the result is null).
 * Throws DataError for trees the PCFG cannot represent: a constituent with
 * both words and constituents as children, or a tag over several words.
 */
export function binariseTree(tree: Tree, options: BinariseOptions, resolve: (s: SymbolSpec) => number): BinTree | null {
  const labels = tree.vocab.labels;
  const out: BinTree = { sym: [], kids: [], size: [], owner: [] };
  const v1 = options.vertical - 1;
  const h = options.horizontal;
  let missing = false;
  const get = (s: SymbolSpec): number => {
    const id = resolve(s);
    if (id < 0) missing = true;
    return id;
  };
  const push = (sym: number, kids: number, owner: number): number => {
    out.sym.push(sym);
    out.kids.push(kids);
    out.size.push(1);
    out.owner.push(owner);
    return out.sym.length - 1;
  };
  const close = (at: number): void => {
    out.size[at] = out.sym.length - at;
  };

  // Returns nothing; appends node i's binarised subtree. `ctx`: i's ancestors, nearest first (already cut to v - 1).
  const visit = (i: number, ctx: (string | null)[]): void => {
    const base = labels.name(tree.sym[i]);
    const kidsOf: number[] = [];
    let words = 0;
    for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) {
      kidsOf.push(c);
      if (tree.isWord[c]) words++;
    }
    if (words > 0) {
      if (words !== kidsOf.length || words > 1) {
        throw new DataError('bad-field', words === kidsOf.length
          ? `expected one word under the tag \`${base}\`, got ${words}; the PCFG has one word per tag`
          : `expected the constituent \`${base}\` to hold either words or constituents, not both`);
      }
      const at = push(get({ kind: KIND_REAL, base, ctx: [], sibs: [] }), 1, i);
      push(-1 - tree.start[kidsOf[0]], 0, -1);
      close(at);
      return;
    }
    const self: SymbolSpec = { kind: KIND_REAL, base, ctx, sibs: [] };
    const childCtx = v1 > 0 ? [base, ...ctx].slice(0, v1) : [];
    const n = kidsOf.length;
    const at = push(get(self), Math.min(n, 2), i);
    if (n <= 2) {
      for (const c of kidsOf) visit(c, childCtx);
      close(at);
      return;
    }
    // X → C1 @1; @k → C(k+1) @(k+1); @(n-2) → C(n-1) Cn.
    const opened = [at];
    const done: string[] = [];
    for (let k = 0; k < n - 2; k++) {
      visit(kidsOf[k], childCtx);
      done.push(labels.name(tree.sym[kidsOf[k]]));
      const sibs = h === Infinity ? done.slice() : done.slice(Math.max(0, done.length - h));
      opened.push(push(get({ kind: KIND_INTERMEDIATE, base, ctx, sibs }), 2, i));
    }
    visit(kidsOf[n - 2], childCtx);
    visit(kidsOf[n - 1], childCtx);
    for (let k = opened.length - 1; k >= 0; k--) close(opened[k]);
  };

  if (tree.size === 0 || tree.isWord[0]) throw new DataError('empty-tree', 'expected a tree with a labelled root');
  const top = push(get({ kind: KIND_TOP, base: null, ctx: [], sibs: [] }), 1, -1);
  visit(0, v1 > 0 ? [null] : []);
  close(top);
  return missing ? null : out;
}
