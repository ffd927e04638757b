/** Stage `score-candidates.v1`: PARSEVAL counts of each candidate against gold. */
import { DataError } from '../core/errors.js';
import { DEFAULT_SCORING, SentenceScorer, type BracketCounts, type ScoringOptions } from '../core/parseval.js';
import type { Tree } from '../core/tree.js';
import type { DroppedCandidate } from '../records.js';
import type { StageSpec } from './stage.js';

export const scoreCandidatesSpec: StageSpec = {
  id: 'score-candidates.v1',
  summary: 'PARSEVAL bracket counts of each candidate against gold',
  needs: ['gold', 'candidates'],
  adds: ['counts'],
  options: {
    punctuation: { type: 'strings', default: DEFAULT_SCORING.punctuation, doc: 'POS tags (of the gold tree) whose words are deleted' },
    equivalent: { type: 'string-groups', default: DEFAULT_SCORING.equivalent, doc: 'labels that count as one' },
    rootLabels: { type: 'strings', default: DEFAULT_SCORING.rootLabels, doc: 'root labels that are not brackets' },
    labeled: { type: 'boolean', default: true, doc: 'score labels (false: spans only)' },
  },
};

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


/**
 * The same, keeping the list when some candidates' words differ from the
 * gold's: those are dropped (with why), the others scored. `ranks` are the
 * candidates' base ranks (default: their positions); `kept` holds those of
 * the scored candidates, in order.
 */
export function scoreOrDrop(options: ScoringOptions) {
  return (gold: Tree, candidates: readonly Tree[], ranks?: readonly number[]): { gold: number; kept: number[]; counts: BracketCounts[]; dropped: DroppedCandidate[] } => {
    const scorer = new SentenceScorer(gold, options);
    const kept: number[] = [];
    const counts: BracketCounts[] = [];
    const dropped: DroppedCandidate[] = [];
    candidates.forEach((c, k) => {
      const rank = ranks ? ranks[k] : k;
      try {
        counts.push(scorer.score(c));
        kept.push(rank);
      } catch (e) {
        if (!(e instanceof DataError) || e.code !== 'yield-mismatch') throw e;
        dropped.push({ rank, code: e.code, reason: `candidate ${rank}: ${e.reason}` });
      }
    });
    return { gold: scorer.goldBrackets, kept, counts, dropped };
  };
}
