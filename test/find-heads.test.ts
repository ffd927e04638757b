/**
 * Outside check: worked examples of the head-percolation table of Collins
 * (1999), "Head-Driven Statistical Models for Natural Language Parsing", PhD
 * thesis, appendix A, with the coordination rule as restated by Bikel (2004),
 * "Intricacies of Collins' Parsing Model", Computational Linguistics 30(4).
 * Each expected head is worked out by hand from the table's rule for the
 * root label (the rule is named beside each case). The table's priority lists
 * are checked against a public reproduction; its directions are from memory.
 */
import { describe, expect, it } from 'vitest';
import { headChildren, headWords } from '../src/core/find-heads.js';
import { createVocabulary } from '../src/core/interner.js';
import { parseTree } from '../src/core/read-brackets.js';

const cases: [string, string, string][] = [
  // [rule applied, tree, expected head word of the root]
  ['S left: TO IN VP … → VP', '(S (NP (DT the) (NN warden)) (VP (VBD mended) (NP (DT the) (NN stove))) (. .))', 'mended'],
  ['VP left: … MD before VP', '(VP (MD will) (VP (VB carry) (NP (NNS ropes))))', 'will'],
  ['VP left: TO first', '(VP (TO to) (VP (VB log) (NP (NN it))))', 'to'],
  ['NP rule 1: last child POS', '(NP (NP (DT the) (NN porter)) (POS \'s))', "'s"],
  ['NP rule 2: rightmost of NN NNP NNPS NNS NX POS JJR', '(NP (DT the) (JJ old) (NN kettle) (NN lid))', 'lid'],
  ['NP rule 3: leftmost NP', '(NP (NP (DT the) (NN rope)) (PP (IN of) (NP (NN hemp))))', 'rope'],
  ['NP rule 5: CD', '(NP (DT the) (CD two))', 'two'],
  ['NP rule 6: JJ JJS RB QP', '(NP (DT the) (JJ last))', 'last'],
  ['NP rule 7: last child', '(NP (DT all) (DT these))', 'these'],
  ['NP rule 4: $ ADJP PRN (right to left)', '(NP ($ $) (CD 5))', '$'],
  ['NP rule 3 with coordinated NPs: first conjunct', '(NP (NP (NNS ropes)) (CC and) (NP (NNS crates)))', 'ropes'],
  ['NP rule 2 then coordination: NNS after CC moves two left', '(NP (NNS ropes) (CC and) (NNS crates))', 'ropes'],
  ['PP right: IN', '(PP (IN of) (NP (NN hemp)))', 'of'],
  ['PP right: the rightmost IN', '(PP (IN because) (IN of) (NP (NN fog)))', 'of'],
  ['ADJP left: … JJ', '(ADJP (RB very) (JJ cold))', 'cold'],
  ['ADVP right: rightmost RB', '(ADVP (RB far) (RB up))', 'up'],
  ['SBAR left: IN', '(SBAR (IN that) (S (NP (PRP it)) (VP (VBD froze))))', 'that'],
  ['SBAR left: WHNP first', '(SBAR (WHNP (WDT which)) (S (VP (VBD broke))))', 'which'],
  ['QP left: $ IN NNS NN JJ RB … (RB before CD)', '(QP (RB about) (CD ten))', 'about'],
  ['S left: no VP, ADJP', '(S (NP (NN fog)) (ADJP (JJ thick)))', 'thick'],
  ['VP left: leftmost VP of a coordination', '(VP (VP (VBD mended) (NP (NN rope))) (CC and) (VP (VBD logged) (NP (PRP it))))', 'mended'],
  ['UCP right, no list: last child, then coordination', '(UCP (JJ dry) (CC and) (NN rope))', 'dry'],
  ['CONJP right: CC RB IN → rightmost RB', '(CONJP (RB as) (RB well) (IN as))', 'well'],
  ['WHNP left: WDT', '(WHNP (WDT which) (NN rope))', 'which'],
  ['SINV left: VBZ', '(SINV (ADVP (RB here)) (VBZ is) (NP (DT the) (NN key)))', 'is'],
  ['SQ left: VBZ VBD VBP VB MD', '(SQ (MD can) (NP (PRP you)) (VP (VB carry) (NP (PRP it))))', 'can'],
  ['PRN left, no list: first child', '(PRN (-LRB- -LRB-) (NP (NN see)) (-RRB- -RRB-))', '-LRB-'],
  ['PRT right: RP', '(PRT (RP up))', 'up'],
  ['WHADVP right: WRB', '(WHADVP (WRB where))', 'where'],
  ['SBARQ left: SQ', '(SBARQ (WHNP (WP who)) (SQ (VBD left)) (. ?))', 'left'],
];

describe('head finder against the Collins (1999) table', () => {
  it('has at least 20 worked examples', () => {
    expect(cases.length).toBeGreaterThanOrEqual(20);
  });

  for (const [rule, text, head] of cases) {
    it(`${rule}: ${text} → ${head}`, () => {
      const vocab = createVocabulary();
      const tree = parseTree(text, vocab);
      const hw = headWords(tree);
      expect(vocab.words.name(tree.sym[hw[0]])).toBe(head);
    });
  }

  it('heads every constituent by one of its own children and every word by itself', () => {
    const vocab = createVocabulary();
    const tree = parseTree(cases[0][1], vocab);
    const hc = headChildren(tree);
    for (let i = 0; i < tree.size; i++) {
      if (tree.isWord[i]) expect(hc[i]).toBe(-1);
      else expect(tree.parent[hc[i]]).toBe(i);
    }
  });
});
