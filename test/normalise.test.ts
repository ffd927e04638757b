/**
 * Normalisation: function tags and co-indices stripped, empty elements and
 * the constituents they leave empty deleted. The conventions are those of
 * the Penn Treebank II bracketing guidelines (Bies et al., 1995: function
 * tags as `-TAG` suffixes, co-indices `-N` / `=N`, empty elements as
 * `-NONE-`); the expected trees are worked by hand from them.
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree, stripFunctionTags } from '../src/core/normalise.js';
import { parseTree } from '../src/core/read-brackets.js';
import { writeTree } from '../src/core/write-brackets.js';

function norm(text: string, opts = {}): string | null {
  const vocab = createVocabulary();
  const t = normaliseTree(parseTree(text, vocab), opts);
  return t ? writeTree(t) : null;
}

describe('stripFunctionTags', () => {
  it.each([
    ['NP-SBJ-1', 'NP'],
    ['PP-LOC', 'PP'],
    ['S-TPC-2', 'S'],
    ['NP=2', 'NP'],
    ['WHNP-3', 'WHNP'],
    ['-NONE-', '-NONE-'],
    ['-LRB-', '-LRB-'],
    ['-RRB-', '-RRB-'],
    ['PRP$', 'PRP$'],
    ['NP', 'NP'],
  ])('%s → %s', (label, want) => {
    expect(stripFunctionTags(label)).toBe(want);
  });
});

describe('normaliseTree', () => {
  it('deletes a trace and the NP it leaves empty', () => {
    expect(norm('(S (NP-SBJ (NN warden)) (VP (VBD logged) (NP (-NONE- *T*-1))))')).toBe('(S (NP (NN warden)) (VP (VBD logged)))');
  });
  it('deletes nested empties up to the first constituent with a word', () => {
    expect(norm('(S (S (NP (-NONE- *)) (VP (-NONE- *?*))) (VP (VBD froze)))')).toBe('(S (VP (VBD froze)))');
  });
  it('keeps bracket escapes as labels and words', () => {
    expect(norm('(PRN (-LRB- -LRB-) (NN rope) (-RRB- -RRB-))')).toBe('(PRN (-LRB- -LRB-) (NN rope) (-RRB- -RRB-))');
  });
  it('returns null for a tree of empty elements only', () => {
    expect(norm('(S (-NONE- *))')).toBeNull();
  });
  it('can keep tags and empties when asked', () => {
    const text = '(S (NP-SBJ (-NONE- *)) (VP (VBD froze)))';
    expect(norm(text, { stripTags: false, dropEmpty: false })).toBe(text);
  });
  it('keeps spans consistent after deletion', () => {
    const vocab = createVocabulary();
    const t = normaliseTree(parseTree('(S (NP (-NONE- *)) (NP (DT the) (NN hut)) (VP (VBD stood)))', vocab))!;
    expect(Array.from(t.start)).toEqual([0, 0, 0, 0, 1, 1, 2, 2, 2]);
    expect(Array.from(t.stop)).toEqual([3, 2, 1, 1, 2, 2, 3, 3, 3]);
  });
});

describe('tree views: parent labels, POS tags, productions as text', async () => {
  const { parentLabel, formatProduction, productionsOf } = await import('../src/core/tree-views.js');
  const { tagsOf } = await import('../src/core/tree.js');
  it('names each node\'s parent, each word\'s tag, and prints rules with quoted words', () => {
    const vocab = createVocabulary();
    const t = parseTree('(S (NP (NN rope)) (VP (VBD froze)))', vocab);
    expect(Array.from({ length: t.size }, (_, i) => parentLabel(t, i))).toEqual(['', 'S', 'NP', 'NN', 'S', 'VP', 'VBD']);
    expect(tagsOf(t)).toEqual(['NN', 'VBD']);
    expect(productionsOf(t).map(formatProduction)).toEqual(['S -> NP VP', 'NP -> NN', 'NN -> "rope"', 'VP -> VBD', 'VBD -> "froze"']);
  });
});
