/**
 * Trees built into an arena (core/tree.ts, TreeArena) are the trees built
 * without one: same arrays, same bracketed text, also when the slab fills
 * up mid-list (the earlier trees keep the old slab) and after a reset.
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree } from '../src/core/normalise.js';
import { parseTree } from '../src/core/read-brackets.js';
import { TreeArena, TreeBuilder, type Tree } from '../src/core/tree.js';
import { writeTree } from '../src/core/write-brackets.js';

const arrays = (t: Tree) => [t.size, ...[t.sym, t.isWord, t.end, t.parent, t.start, t.stop, t.wordNodes].map((a) => Array.from(a))];

/** A right-branching tree of n words: 2n + 1 nodes. */
function chain(n: number): string {
  let s = '';
  for (let k = 0; k < n; k++) s += `(X (W w${k}) `;
  return `( (S ${s}${')'.repeat(n)}))`;
}

describe('tree arena', () => {
  it('gives the trees a builder of their own gives, across a full slab and a reset', () => {
    const vocab = createVocabulary();
    const plain = new TreeBuilder(vocab);
    const arena = new TreeArena();
    const pooled = new TreeBuilder(vocab, arena);
    // Trees of 3 to 30,000 nodes: the big ones do not fit the first slab (65,536 elements, 7 per node).
    const texts = [chain(1), '(TOP (S (NP-SBJ (DT the) (NN porter)) (VP (VBD left) (NP (-NONE- *))) (. .)))', chain(5000), chain(40), chain(15000), chain(2)];
    for (let round = 0; round < 2; round++) {
      arena.reset();
      const ours = texts.map((t) => normaliseTree(parseTree(t, vocab, { builder: pooled }), {}, pooled)!);
      const theirs = texts.map((t) => normaliseTree(parseTree(t, vocab, { builder: plain }), {}, plain)!);
      // Compared after every tree of the round is built: a later tree must not overwrite an earlier one.
      ours.forEach((t, k) => {
        expect(arrays(t), `tree ${k}, round ${round}`).toEqual(arrays(theirs[k]));
        expect(writeTree(t)).toBe(writeTree(theirs[k]));
      });
      // Pooled trees share slabs; plain ones each own a buffer.
      expect(ours[0].sym.buffer).toBe(ours[1].sym.buffer);
      expect(theirs[0].sym.buffer).not.toBe(theirs[1].sym.buffer);
    }
  });
});
