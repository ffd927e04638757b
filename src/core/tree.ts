/**
 * The compact tree: nodes in preorder, stored as parallel typed arrays.
 *
 * Why arrays: the prepare stage reads ~100k trees/s per core; an object per
 * node would make the garbage collector the bottleneck. Preorder with a
 * subtree `end` index gives child iteration without child lists:
 *
 *     for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) { ... }
 *
 * A node is either a constituent (`isWord[i] === 0`, `sym[i]` a label id) or a
 * word (`isWord[i] === 1`, `sym[i]` a word id, no children). A preterminal is
 * a constituent whose children are all words. Spans count words:
 * node i covers words `start[i] .. stop[i] - 1`.
 */
import type { Vocabulary } from './interner.js';

export interface Tree {
  readonly vocab: Vocabulary;
  /** Number of nodes (constituents and words). */
  readonly size: number;
  /** Label id for constituents, word id for words (both from `vocab`). */
  readonly sym: Int32Array;
  /** 1 for a word node, 0 for a constituent. */
  readonly isWord: Int32Array;
  /** Preorder index one past the node's last descendant. */
  readonly end: Int32Array;
  /** Parent node index, -1 for the root. */
  readonly parent: Int32Array;
  /** First word index covered. */
  readonly start: Int32Array;
  /** One past the last word index covered. */
  readonly stop: Int32Array;
  /** Node index of each word, in sentence order. */
  readonly wordNodes: Int32Array;
}



/** True for a constituent whose children are all words (a POS node). */
export function isPreterminal(tree: Tree, node: number): boolean {
  if (tree.isWord[node]) return false;
  const e = tree.end[node];
  if (e === node + 1) return false;
  for (let c = node + 1; c < e; c = tree.end[c]) if (!tree.isWord[c]) return false;
  return true;
}


/** The sentence's words as strings. */
export function yieldOf(tree: Tree): string[] {
  const out: string[] = new Array(tree.wordNodes.length);
  for (let k = 0; k < tree.wordNodes.length; k++) out[k] = tree.vocab.words.name(tree.sym[tree.wordNodes[k]]);
  return out;
}

/** POS tag (parent label) of each word, in sentence order. */
export function tagsOf(tree: Tree): string[] {
  const out: string[] = new Array(tree.wordNodes.length);
  for (let k = 0; k < tree.wordNodes.length; k++) {
    const p = tree.parent[tree.wordNodes[k]];
    out[k] = p < 0 ? '' : tree.vocab.labels.name(tree.sym[p]);
  }
  return out;
}

/**
 * Builds trees node by node in preorder. Reuses its scratch arrays across
 * trees (one builder per reader), then copies out exact-size arrays.
 */
export class TreeBuilder {
  private cap = 256;
  private sym = new Int32Array(this.cap);
  private isWord = new Int32Array(this.cap);
  private end = new Int32Array(this.cap);
  private parent = new Int32Array(this.cap);
  private start = new Int32Array(this.cap);
  private stop = new Int32Array(this.cap);
  private words = new Int32Array(this.cap);
  private stack = new Int32Array(64);
  private n = 0;
  private nWords = 0;
  private depth = 0;

  /** `arena`: where finished trees live (see TreeArena); without one each tree gets a buffer of its own. */
  constructor(readonly vocab: Vocabulary, readonly arena: TreeArena | null = null) {}

  reset(): void {
    this.n = 0;
    this.nWords = 0;
    this.depth = 0;
  }

  get nodeCount(): number {
    return this.n;
  }

  get openCount(): number {
    return this.depth;
  }

  /** The innermost open constituent, or -1. */
  get current(): number {
    return this.depth > 0 ? this.stack[this.depth - 1] : -1;
  }

  /** Label id of an open or closed constituent of the tree being built. */
  labelOf(node: number): number {
    return this.sym[node];
  }

  /** Number of direct children the node `node` has so far (for validation). */
  hasChildren(node: number): boolean {
    return this.n > node + 1;
  }

  private grow(): void {
    const cap = this.cap * 2;
    const g32 = (a: Int32Array) => { const b = new Int32Array(cap); b.set(a); return b; };
    this.sym = g32(this.sym);
    this.end = g32(this.end);
    this.parent = g32(this.parent);
    this.start = g32(this.start);
    this.stop = g32(this.stop);
    this.words = g32(this.words);
    this.isWord = g32(this.isWord);
    this.cap = cap;
  }

  /** Opens a constituent labelled with label id `label`; returns its index. */
  open(label: number): number {
    if (this.n === this.cap) this.grow();
    const i = this.n++;
    this.sym[i] = label;
    this.isWord[i] = 0;
    this.parent[i] = this.current;
    this.start[i] = this.nWords;
    if (this.depth === this.stack.length) {
      const s = new Int32Array(this.stack.length * 2);
      s.set(this.stack);
      this.stack = s;
    }
    this.stack[this.depth++] = i;
    return i;
  }

  /** Adds a word (word id `word`) under the current constituent. */
  word(word: number): number {
    if (this.n === this.cap) this.grow();
    const i = this.n++;
    this.sym[i] = word;
    this.isWord[i] = 1;
    this.parent[i] = this.current;
    this.end[i] = i + 1;
    this.start[i] = this.nWords;
    this.stop[i] = this.nWords + 1;
    this.words[this.nWords++] = i;
    return i;
  }

  /** Closes the current constituent; returns its index. */
  close(): number {
    const i = this.stack[--this.depth];
    this.end[i] = this.n;
    this.stop[i] = this.nWords;
    return i;
  }

  /**
   * Copies out the finished tree. All constituents must be closed.
   * One buffer holds every array (views into it): one allocation per tree
   * instead of seven, which is most of the reading cost otherwise.
   */
  finish(): Tree {
    const n = this.n;
    const w = this.nWords;
    const { data, at } = treeRoom(this.arena, 6 * n + w);
    data.set(this.sym.subarray(0, n), at);
    data.set(this.isWord.subarray(0, n), at + n);
    data.set(this.end.subarray(0, n), at + 2 * n);
    data.set(this.parent.subarray(0, n), at + 3 * n);
    data.set(this.start.subarray(0, n), at + 4 * n);
    data.set(this.stop.subarray(0, n), at + 5 * n);
    data.set(this.words.subarray(0, w), at + 6 * n);
    return treeFromData(this.vocab, data, n, w, at);
  }
}

/**
 * Memory for trees that die together: the trees of one n-best list and its
 * gold tree, say. Trees taken from an arena are views into one slab instead
 * of a buffer each (a typed array of its own costs an allocation outside the
 * JS heap, which was most of building a tree). reset() hands the slab out
 * again: call it only when no tree taken since the last reset is used any
 * more (the per-sentence chain does, before each list).
 */
export class TreeArena {
  private slab = new Int32Array(1 << 16);
  private used = 0;

  reset(): void {
    this.used = 0;
  }

  /** `n` elements: the slab and where they start in it. */
  take(n: number): { data: Int32Array; at: number } {
    if (this.used + n > this.slab.length) {
      // Trees already taken keep the old slab alive; the new one serves from here on.
      this.slab = new Int32Array(Math.max(2 * this.slab.length, n));
      this.used = 0;
    }
    const at = this.used;
    this.used += n;
    return { data: this.slab, at };
  }
}

/** Room for a tree of `n` elements: from the arena, or a buffer of its own without one. */
export function treeRoom(arena: TreeArena | null, n: number): { data: Int32Array; at: number } {
  return arena ? arena.take(n) : { data: new Int32Array(n), at: 0 };
}

/** A tree over one buffer laid out as built by TreeBuilder.finish, from `at`. */
export function treeFromData(vocab: Vocabulary, data: Int32Array, n: number, w: number, at = 0): Tree {
  return {
    vocab,
    size: n,
    sym: data.subarray(at, at + n),
    isWord: data.subarray(at + n, at + 2 * n),
    end: data.subarray(at + 2 * n, at + 3 * n),
    parent: data.subarray(at + 3 * n, at + 4 * n),
    start: data.subarray(at + 4 * n, at + 5 * n),
    stop: data.subarray(at + 5 * n, at + 6 * n),
    wordNodes: data.subarray(at + 6 * n, at + 6 * n + w),
  };
}


const scratchBuilders = new WeakMap<Vocabulary, TreeBuilder>();

/**
 * A reusable builder for `vocab`. Safe because building is synchronous and
 * finish() copies out: no two trees are ever built on it at once.
 */
export function scratchBuilder(vocab: Vocabulary): TreeBuilder {
  let b = scratchBuilders.get(vocab);
  if (!b) {
    b = new TreeBuilder(vocab);
    scratchBuilders.set(vocab, b);
  }
  return b;
}
