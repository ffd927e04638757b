/** Stage `score-candidates.v1`: PARSEVAL counts of each candidate against gold. */
import { DataError } from '../core/errors.js';
import { SentenceScorer, type BracketCounts, type ScoringOptions } from '../core/parseval.js';
import type { Tree } from '../core/tree.js';

export function scoreCandidates(options: ScoringOptions) {
  return (gold: Tree, candidates: readonly Tree[]): { gold: number; counts: BracketCounts[] } => {
    const scorer = new SentenceScorer(gold, options);
    const counts = candidates.map((c, k) => {
      try {
        return scorer.score(c);
      } catch (e) {
        if (e instanceof DataError) throw new DataError(e.code, `candidate ${k}: ${e.reason}`);
        throw e;
      }
    });
    return { gold: scorer.goldBrackets, counts };
  };
}
