/**
 * Outside check: PARSEVAL bracket scoring, worked by hand from the
 * definition of Black et al. (1991), "A procedure for quantitatively
 * comparing the syntactic coverage of English grammars", labeled variant,
 * with the conventions of Collins (1997) (punctuation deleted, ADVP = PRT;
 * recalled from memory) and DESIGN.md's settled details (punctuation decided
 * by the gold tags; a constituent over deleted words only is no bracket).
 * Each case lists the brackets it counts.
 */
import { describe, expect, it } from 'vitest';
import { DataError } from '../src/core/errors.js';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree } from '../src/core/normalise.js';
import { prf, scoreTree, sumCounts, type BracketCounts } from '../src/core/parseval.js';
import { parseTree } from '../src/core/read-brackets.js';

function score(gold: string, test: string): BracketCounts {
  const vocab = createVocabulary();
  return scoreTree(normaliseTree(parseTree(gold, vocab))!, normaliseTree(parseTree(test, vocab))!);
}

const cases: [string, string, string, BracketCounts][] = [
  ['identical trees: S(0,3) NP(0,2) VP(2,3); the final . is deleted',
    '(S (NP (DT the) (NN warden)) (VP (VBD slept)) (. .))',
    '(S (NP (DT the) (NN warden)) (VP (VBD slept)) (. .))', { matched: 3, gold: 3, test: 3 }],
  ['one wrong PP attachment: the test adds NP(3,7)',
    '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))))',
    '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NP (NNS crates)) (PP (TO to) (NP (DT the) (NN hut))))))', { matched: 6, gold: 6, test: 7 }],
  ['label error: ADVP(2,3) against ADJP(2,3)',
    '(S (NP (NN fog)) (VP (VBD lifted) (ADVP (RB early))))',
    '(S (NP (NN fog)) (VP (VBD lifted) (ADJP (JJ early))))', { matched: 3, gold: 4, test: 4 }],
  ['unary chain: gold has NP(0,1) twice, test once; multiset min = 1',
    '(S (NP (NP (NN rope))) (VP (VBD froze)))',
    '(S (NP (NN rope)) (VP (VBD froze)))', { matched: 3, gold: 4, test: 3 }],
  ['punctuation at the edges: a final . inside the VP changes no bracket',
    "(S (`` ``) (NP (NN rope)) (VP (VBD froze)) (. .) ('' ''))",
    "(S (`` ``) (NP (NN rope)) (VP (VBD froze) (. .)) ('' ''))", { matched: 3, gold: 3, test: 3 }],
  ['punctuation is decided by the gold tags: a comma tagged NN by the test is still deleted',
    '(S (NP (NN stove)) (, ,) (VP (VBD smoked)))',
    '(S (NP (NN stove) (NN ,)) (VP (VBD smoked)))', { matched: 3, gold: 3, test: 3 }],
  ['empty elements and the NP they leave empty are deleted before scoring',
    '(S (NP-SBJ-1 (DT the) (NN ledger)) (VP (VBD was) (VP (VBN signed) (NP (-NONE- *-1)))))',
    '(S (NP (DT the) (NN ledger)) (VP (VBD was) (VP (VBN signed))))', { matched: 4, gold: 4, test: 4 }],
  ['function tags are stripped: NP-SBJ = NP, PP-TMP = PP',
    '(S (NP-SBJ (NN fog)) (VP (VBD lifted) (PP-TMP (IN at) (NP (NN dawn)))))',
    '(S (NP (NN fog)) (VP (VBD lifted) (PP (IN at) (NP (NN dawn)))))', { matched: 5, gold: 5, test: 5 }],
  ['ADVP and PRT count as one label',
    '(S (NP (NN crew)) (VP (VBD packed) (PRT (RP up))))',
    '(S (NP (NN crew)) (VP (VBD packed) (ADVP (RB up))))', { matched: 4, gold: 4, test: 4 }],
  ['an unlabeled outer wrapper is not a bracket',
    '( (S (NP (NN rope)) (VP (VBD froze))) )',
    '(S (NP (NN rope)) (VP (VBD froze)))', { matched: 3, gold: 3, test: 3 }],
  ['a root labeled TOP or ROOT is not a bracket',
    '(TOP (S (NP (NN rope)) (VP (VBD froze))))',
    '(ROOT (S (NP (NN rope)) (VP (VBD froze))))', { matched: 3, gold: 3, test: 3 }],
  ['a constituent over punctuation only is not a bracket',
    '(S (NP (NN rope)) (VP (VBD froze)) (. .))',
    '(S (NP (NN rope)) (VP (VBD froze)) (X (. .)))', { matched: 3, gold: 3, test: 3 }],
  ['different bracketing: only S(0,4) matches',
    '(S (NP (DT the) (JJ old) (NN rope)) (VP (VBD snapped)))',
    '(S (NP (DT the) (JJ old)) (VP (VBN rope) (VBD snapped)))', { matched: 1, gold: 3, test: 3 }],
  ['preterminals are not brackets: a tagging error alone costs nothing',
    '(S (NP (NN rope)) (VP (VBD froze)))',
    '(S (NP (VB rope)) (VP (VBN froze)))', { matched: 3, gold: 3, test: 3 }],
];

describe('PARSEVAL bracket counts (Black et al. 1991; Collins 1997 conventions)', () => {
  it('has at least 12 worked examples', () => expect(cases.length).toBeGreaterThanOrEqual(12));

  for (const [what, gold, test, want] of cases) {
    it(what, () => expect(score(gold, test)).toEqual(want));
  }

  it('F1 is 2·matched / (gold + test); precision and recall as percentages', () => {
    const r = prf({ matched: 6, gold: 6, test: 7 });
    expect(r.precision).toBeCloseTo((100 * 6) / 7, 10);
    expect(r.recall).toBe(100);
    expect(r.f1).toBeCloseTo((200 * 6) / 13, 10);
  });

  it('corpus F1 comes from summed counts, not an average of sentence F1s', () => {
    const a = score(cases[1][1], cases[1][2]);
    const b = score(cases[12][1], cases[12][2]);
    const corpus = prf(sumCounts([a, b])).f1;
    expect(corpus).toBeCloseTo((200 * 7) / 19, 10);
    expect(corpus).not.toBeCloseTo((prf(a).f1 + prf(b).f1) / 2, 3);
  });

  it('refuses candidates whose words differ, naming the first difference', () => {
    try {
      score('(S (NP (NN rope)) (VP (VBD froze)))', '(S (NP (NN rope)) (VP (VBD snapped)))');
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(DataError);
      expect((e as DataError).code).toBe('yield-mismatch');
      expect((e as DataError).message).toContain('word 2: gold `froze`, candidate `snapped`');
    }
    expect(() => score('(S (NP (NN rope)) (VP (VBD froze)))', '(S (NP (NN rope)))')).toThrow(/gold has 2 words, the candidate 1/);
  });
});
