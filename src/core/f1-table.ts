/**
 * Base 1-best and oracle F1 over scored sentences (corpus F1 from summed
 * bracket counts). The oracle picks, per sentence, the candidate with the
 * best sentence F1 (ties: the better base rank), as is common practice.
 * A sentence with no candidates counts its gold brackets as missed.
 */
import { prf, type BracketCounts } from './parseval.js';

export interface ScoredSentence {
  gold: number;
  cands: readonly { matched: number; test: number }[];
}

export interface F1Row {
  precision: number;
  recall: number;
  f1: number;
  sentences: number;
}

export class F1Table {
  private readonly base: BracketCounts = { matched: 0, gold: 0, test: 0 };
  private readonly oracle: BracketCounts = { matched: 0, gold: 0, test: 0 };
  private sentences = 0;

  add(s: ScoredSentence): void {
    this.sentences++;
    this.base.gold += s.gold;
    this.oracle.gold += s.gold;
    if (s.cands.length === 0) return;
    this.base.matched += s.cands[0].matched;
    this.base.test += s.cands[0].test;
    let best = 0;
    let bestF = -1;
    s.cands.forEach((c, k) => {
      const f = s.gold + c.test === 0 ? 1 : (2 * c.matched) / (s.gold + c.test);
      if (f > bestF) {
        bestF = f;
        best = k;
      }
    });
    this.oracle.matched += s.cands[best].matched;
    this.oracle.test += s.cands[best].test;
  }

  rows(): { base: F1Row; oracle: F1Row } {
    return { base: { ...prf(this.base), sentences: this.sentences }, oracle: { ...prf(this.oracle), sentences: this.sentences } };
  }
}
