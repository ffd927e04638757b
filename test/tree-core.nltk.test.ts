/**
 * Outside check: nltk's reading of bracketed trees.
 * Reference: nltk.tree.Tree.fromstring / productions() / leaves() /
 * treepositions(), python3-nltk (Debian), via test/fixtures/nltk-trees.json,
 * regenerated in CI by scripts/fixtures/nltk-trees.py.
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { parseTree } from '../src/core/read-brackets.js';
import { productionsOf, spansOf } from '../src/core/tree-views.js';
import { yieldOf } from '../src/core/tree.js';
import { writeTree } from '../src/core/write-brackets.js';
import { BracketSplitter, isSplitError, type TreeText } from '../src/core/split-brackets.js';
import { randomChunks } from './helpers/chunks.js';
import { readFixture } from './helpers/fixtures.js';

interface NltkTree {
  text: string;
  productions: [string, (string | [string])[]][];
  leaves: string[];
  spans: [string, number, number][];
}
const fixture = readFixture<{ library: string; trees: NltkTree[] }>('nltk-trees.json');

describe(`tree reader against ${fixture.library} (Tree.fromstring)`, () => {
  it('has at least 1,000 reference trees', () => {
    expect(fixture.trees.length).toBeGreaterThanOrEqual(1000);
  });

  it('gives nltk\'s productions, leaves and spans for every tree', () => {
    const vocab = createVocabulary();
    let compared = 0;
    for (const ref of fixture.trees) {
      const tree = parseTree(ref.text, vocab);
      const ours = productionsOf(tree).map((p) => [p.lhs, p.rhs.map((s) => (typeof s === 'string' ? s : [s.word]))]);
      expect(ours, ref.text).toEqual(ref.productions);
      expect(yieldOf(tree), ref.text).toEqual(ref.leaves);
      expect(spansOf(tree).map((s) => [s.label, s.start, s.end]), ref.text).toEqual(ref.spans);
      compared++;
    }
    expect(compared).toBe(fixture.trees.length);
  });

  it('round-trips every tree: read → write → read gives the same tree', () => {
    const vocab = createVocabulary();
    for (const ref of fixture.trees) {
      const once = parseTree(ref.text, vocab);
      const text = writeTree(once);
      const twice = parseTree(text, vocab);
      expect(writeTree(twice)).toBe(text);
      expect(productionsOf(twice)).toEqual(productionsOf(once));
      expect(spansOf(twice)).toEqual(spansOf(once));
    }
  });

  it('splits the concatenated trees back apart whatever the chunking', () => {
    const all = fixture.trees.map((t) => t.text).join('\n');
    for (const seed of [1, 2, 3]) {
      const splitter = new BracketSplitter({ columnOneStartsTree: false });
      const out: TreeText[] = [];
      for (const chunk of randomChunks(all, seed, 4000)) {
        for (const item of splitter.push(chunk)) {
          if (isSplitError(item)) throw item.error;
          out.push(item);
        }
      }
      expect(splitter.end()).toEqual([]);
      expect(out.map((t) => t.text)).toEqual(fixture.trees.map((t) => t.text.trim()));
    }
  });
});
