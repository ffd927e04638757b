/**
 * Corpus PARSEVAL rows from per-sentence choices: each named row (base,
 * oracle, re-ranked, a length bucket …) sums the bracket counts of the
 * candidate it picks per sentence and reports precision, recall and F1 from
 * the sums (never an average of sentence F1s). A sentence where a row picks
 * nothing (no candidates, or no base 1-best) counts its gold brackets as
 * missed.
 */
import { prf, type BracketCounts } from './parseval.js';

export interface ScoredCandidate {
  /** 0-based rank in the base model's list. */
  rank: number;
  matched: number;
  test: number;
}

export interface ScoredSentence {
  gold: number;
  cands: readonly ScoredCandidate[];
}

export interface F1Row {
  precision: number;
  recall: number;
  f1: number;
  sentences: number;
}

/** Sentence F1 of a candidate as a fraction (1 when neither side has brackets). */
export function sentenceF1(gold: number, c: { matched: number; test: number }): number {
  return gold + c.test === 0 ? 1 : (2 * c.matched) / (gold + c.test);
}

/** The base model's 1-best: the candidate of rank 0, or null when there is none. */
export function baseChoice(s: ScoredSentence): number {
  for (let k = 0; k < s.cands.length; k++) if (s.cands[k].rank === 0) return k;
  return -1;
}

/** The oracle: the candidate with the best sentence F1, ties to the lower base rank (-1 without candidates). */
export function oracleChoice(s: ScoredSentence, depth = Infinity): number {
  let best = -1;
  let bestF = -1;
  for (let k = 0; k < s.cands.length; k++) {
    const c = s.cands[k];
    if (c.rank >= depth) continue;
    const f = sentenceF1(s.gold, c);
    if (f > bestF || (f === bestF && c.rank < s.cands[best].rank)) {
      bestF = f;
      best = k;
    }
  }
  return best;
}

export class F1Table {
  private readonly counts = new Map<string, BracketCounts & { sentences: number }>();

  /** Adds one sentence to row `name`: the chosen candidate's counts, or null (gold brackets missed). */
  add(name: string, gold: number, chosen: { matched: number; test: number } | null): void {
    let c = this.counts.get(name);
    if (!c) {
      c = { matched: 0, gold: 0, test: 0, sentences: 0 };
      this.counts.set(name, c);
    }
    c.sentences++;
    c.gold += gold;
    if (chosen) {
      c.matched += chosen.matched;
      c.test += chosen.test;
    }
  }

  /** Adds a sentence to `name` with the candidate at index `k` (-1: none). */
  addChoice(name: string, s: ScoredSentence, k: number): void {
    this.add(name, s.gold, k >= 0 ? s.cands[k] : null);
  }

  has(name: string): boolean {
    return this.counts.has(name);
  }

  row(name: string): F1Row {
    const c = this.counts.get(name) ?? { matched: 0, gold: 0, test: 0, sentences: 0 };
    return { ...prf(c), sentences: c.sentences };
  }

  /** Summed bracket counts of a row. */
  sums(name: string): BracketCounts {
    const c = this.counts.get(name) ?? { matched: 0, gold: 0, test: 0 };
    return { matched: c.matched, gold: c.gold, test: c.test };
  }

  names(): string[] {
    return [...this.counts.keys()];
  }
}
