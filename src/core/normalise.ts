/**
 * Normalisation used by scoring and features (the defaults DESIGN.md fixes):
 * - function tags and co-index suffixes are stripped: `NP-SBJ-1` → `NP`,
 *   `PP-LOC=2` → `PP`; labels that start with `-` (`-NONE-`, `-LRB-`,
 *   `-RRB-`) stay whole;
 * - empty elements (words under `-NONE-`) are deleted, and so is every
 *   constituent left without words.
 */
import type { Vocabulary } from './interner.js';
import { scratchBuilder, type TreeBuilder, type Tree } from './tree.js';

/** `NP-SBJ-1` → `NP`; `-NONE-` → `-NONE-`. Pure string form of the rule. */
export function stripFunctionTags(label: string): string {
  if (label.length === 0 || label.charCodeAt(0) === 45 /* - */) return label;
  for (let i = 1; i < label.length; i++) {
    const c = label.charCodeAt(i);
    if (c === 45 /* - */ || c === 61 /* = */) return label.slice(0, i);
  }
  return label;
}

export interface NormaliseOptions {
  /** Strip function tags and co-indices (default true). */
  stripTags?: boolean;
  /** Delete `-NONE-` elements and the constituents they leave empty (default true). */
  dropEmpty?: boolean;
  /** Label of empty elements (default `-NONE-`). */
  emptyLabel?: string;
}

/** Caches the stripped form of each label id (one per vocabulary). */
const stripCache = new WeakMap<Vocabulary, Int32Array>();

function strippedId(vocab: Vocabulary, id: number): number {
  let cache = stripCache.get(vocab);
  if (!cache || cache.length <= id) {
    const bigger = new Int32Array(Math.max(64, vocab.labels.size * 2, id + 1)).fill(-1);
    if (cache) bigger.set(cache);
    cache = bigger;
    stripCache.set(vocab, cache);
  }
  let s = cache[id];
  if (s < 0) {
    s = vocab.labels.intern(stripFunctionTags(vocab.labels.name(id)));
    // intern may have grown the label table; the cache is indexed by old ids only.
    cache[id] = s;
  }
  return s;
}

/**
 * Returns the normalised tree: the input itself when nothing changes, else a
 * new tree (the input is never changed). Returns null when nothing is left
 * (a tree of empty elements only).
 */
export function normaliseTree(tree: Tree, options: NormaliseOptions = {}, builder?: TreeBuilder): Tree | null {
  const stripTags = options.stripTags ?? true;
  const dropEmpty = options.dropEmpty ?? true;
  const vocab = tree.vocab;
  const noneId = dropEmpty ? vocab.labels.lookup(options.emptyLabel ?? '-NONE-') : -1;
  const n = tree.size;
  // Most trees (every parser output) have nothing to strip or drop: then the tree itself is the answer.
  let unchanged = true;
  for (let i = 0; i < n && unchanged; i++) {
    if (tree.isWord[i]) continue;
    const id = tree.sym[i];
    if (id === noneId || (stripTags && strippedId(vocab, id) !== id)) unchanged = false;
  }
  if (unchanged) return tree;
  // Keep a node iff it is a kept word or a constituent with a kept word below.
  const keep = new Uint8Array(n);
  for (let i = n - 1; i >= 0; i--) {
    if (tree.isWord[i]) {
      const p = tree.parent[i];
      keep[i] = p >= 0 && tree.sym[p] === noneId ? 0 : 1;
    } else {
      for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) {
        if (keep[c]) {
          keep[i] = 1;
          break;
        }
      }
    }
  }
  if (!keep[0]) return null;
  const b = builder && builder.vocab === vocab ? builder : scratchBuilder(vocab);
  b.reset();
  const ends: number[] = [];
  for (let i = 0; i < n; i++) {
    while (ends.length > 0 && ends[ends.length - 1] <= i) {
      ends.pop();
      b.close();
    }
    if (!keep[i]) {
      i = tree.end[i] - 1; // skip the subtree
      continue;
    }
    if (tree.isWord[i]) {
      b.word(tree.sym[i]);
    } else {
      b.open(stripTags ? strippedId(vocab, tree.sym[i]) : tree.sym[i]);
      ends.push(tree.end[i]);
    }
  }
  while (ends.length > 0) {
    ends.pop();
    b.close();
  }
  return b.finish();
}
