/**
 * Corpus PARSEVAL rows. Reference: the PARSEVAL definition (Black et al.
 * 1991) — labeled precision = matched / brackets in the parse, recall =
 * matched / brackets in the gold, F1 their harmonic mean — with corpus
 * figures from summed counts, never averaged sentence figures (common
 * practice, as every published evaluation of the field reports them). The
 * three-sentence example is worked by hand below.
 */
import { describe, expect, it } from 'vitest';
import { baseChoice, F1Table, oracleChoice, sentenceF1, type ScoredSentence } from '../src/core/f1-table.js';

// Sentence 1: gold 10 brackets; rank 0 matches 8 of 10, rank 1 matches 10 of 11.
// Sentence 2: gold 4; rank 0 matches 4 of 4.
// Sentence 3: gold 6; rank 0 matches 2 of 5, rank 1 matches 5 of 6.
const S: ScoredSentence[] = [
  { gold: 10, cands: [{ rank: 0, matched: 8, test: 10 }, { rank: 1, matched: 10, test: 11 }] },
  { gold: 4, cands: [{ rank: 0, matched: 4, test: 4 }] },
  { gold: 6, cands: [{ rank: 0, matched: 2, test: 5 }, { rank: 1, matched: 5, test: 6 }] },
];

describe('F1 table', () => {
  it('gives corpus precision, recall and F1 from summed counts (worked by hand)', () => {
    const t = new F1Table();
    for (const s of S) {
      t.addChoice('base', s, baseChoice(s));
      t.addChoice('oracle', s, oracleChoice(s));
    }
    // Base: matched 8 + 4 + 2 = 14, test 10 + 4 + 5 = 19, gold 20.
    const base = t.row('base');
    expect(base.precision).toBeCloseTo((100 * 14) / 19, 12);
    expect(base.recall).toBeCloseTo((100 * 14) / 20, 12);
    expect(base.f1).toBeCloseTo((200 * 14) / 39, 12);
    expect(base.sentences).toBe(3);
    // The average of sentence F1s, (80 + 100 + 36.36) / 3 = 72.12, is not the corpus F1 (71.79).
    const avg = (100 * S.reduce((a, s) => a + sentenceF1(s.gold, s.cands[0]), 0)) / 3;
    expect(avg).toBeCloseTo(72.12, 2);
    expect(base.f1).toBeCloseTo(71.79, 2);
    // Oracle: sentence 1 rank 1 (F1 20/21 > 16/20), 2 rank 0, 3 rank 1: matched 19, test 21, gold 20.
    const oracle = t.row('oracle');
    expect(oracle.precision).toBeCloseTo((100 * 19) / 21, 12);
    expect(oracle.recall).toBeCloseTo((100 * 19) / 20, 12);
    expect(oracle.f1).toBeCloseTo((200 * 19) / 41, 12);
    expect(t.names()).toEqual(['base', 'oracle']);
  });

  it('breaks oracle ties by the lower base rank, whatever the list order', () => {
    const s: ScoredSentence = { gold: 4, cands: [{ rank: 3, matched: 3, test: 4 }, { rank: 1, matched: 3, test: 4 }, { rank: 0, matched: 2, test: 4 }] };
    expect(s.cands[oracleChoice(s)].rank).toBe(1);
    // Limited to the first two ranks, rank 1 still wins over rank 0.
    expect(s.cands[oracleChoice(s, 2)].rank).toBe(1);
    expect(s.cands[oracleChoice(s, 1)].rank).toBe(0);
  });

  it('counts the gold brackets as missed where a row picks nothing', () => {
    const t = new F1Table();
    const none: ScoredSentence = { gold: 5, cands: [] };
    // A list whose rank 0 was dropped: the base 1-best is a miss, not rank 1.
    const noTop: ScoredSentence = { gold: 5, cands: [{ rank: 1, matched: 5, test: 5 }] };
    expect(baseChoice(none)).toBe(-1);
    expect(baseChoice(noTop)).toBe(-1);
    t.addChoice('base', none, baseChoice(none));
    t.addChoice('base', noTop, baseChoice(noTop));
    expect(t.row('base')).toMatchObject({ recall: 0, sentences: 2 });
    expect(t.sums('base')).toEqual({ matched: 0, gold: 10, test: 0 });
  });

  it('gives sentence F1 1 when neither side has brackets, and 0 for a parse with none of the gold brackets', () => {
    expect(sentenceF1(0, { matched: 0, test: 0 })).toBe(1);
    expect(sentenceF1(3, { matched: 0, test: 2 })).toBe(0);
  });
});
