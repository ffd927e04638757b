/**
 * The job module of `rerank`'s worker threads: the gold-free chain (parse →
 * extract → hash) from the model's pipeline, then each list's candidates
 * scored with the model's weights and the best picked (ties to the lower
 * base rank). Candidates whose trees do not parse are left out and named;
 * a list that cannot be featurised falls back to its base 1-best when that
 * parses, and says why.
 */
import { DataError } from '../core/errors.js';
import { dot, splitParts } from '../core/sparse-vector.js';
import { rebuildPipeline } from '../pipeline/pipeline.js';
import type { JobHandler } from '../pool/ordered-pool.js';
import { createFeaturiser } from '../prepare/sentence-chain.js';
import type { CandidateText, PipelineConfig } from '../records.js';
import { JobTrees } from '../stages/parse-candidates.js';
import { pick, rankingList, scores } from '../train/ranking.js';

export interface RerankInit {
  config: PipelineConfig;
  files: Record<string, Uint8Array>;
  weights: Float32Array;
}

export interface RerankJob {
  candidates: CandidateText[];
}

export type RerankResult =
  /** Re-ranked among the candidates whose trees parse; `skipped`: the others (base rank, why). */
  | { rank: number; score: number; skipped: { rank: number; why: string }[] }
  /** Not re-ranked: the base 1-best (rank 0) when it parses, else none (-1), and why. */
  | { rank: number; score: null; why: string };

export function createJobHandler(init: RerankInit): JobHandler<RerankJob, RerankResult> {
  const pipeline = rebuildPipeline(init.config, init.files);
  const featurise = createFeaturiser(pipeline);
  const w = init.weights;
  const trees = new JobTrees();
  const run = (job: RerankJob): RerankResult => {
    trees.next();
    if (job.candidates.length === 0) return { rank: -1, score: null, why: 'the list has no candidates' };
    const parsed = featurise.parseUsable(job.candidates, trees.vocab, trees.builder);
    // Candidates whose trees do not parse are left out; the others are re-ranked (their base ranks kept).
    const skipped = parsed.unparsable.map((d) => ({ rank: d.rank, why: d.reason }));
    if (parsed.trees.length === 0) return { rank: -1, score: null, why: `no candidate tree of the ${job.candidates.length} parses; the first: ${parsed.unparsable[0].reason}` };
    try {
      const vectors = featurise.vectors(parsed.trees, job.candidates, parsed.ranks);
      // Scored exactly as eval scores stored lists (the same parts, the same sums), so both pick alike.
      const list = rankingList({ gold: 0, len: 0, cands: vectors.diffs.map((d, k) => ({ rank: parsed.ranks[k], matched: 0, test: 0, diff: splitParts(d) })) });
      const s = scores(list, w);
      const best = pick(list, s);
      // The reported score is the whole candidate's: w · reference + w · difference.
      return { rank: parsed.ranks[best], score: dot(splitParts(vectors.ref!), w) + s[best], skipped };
    } catch (e) {
      if (!(e instanceof DataError)) throw e;
      return { rank: parsed.ranks[0] === 0 ? 0 : -1, score: null, why: e.reason };
    }
  };
  return { run: (jobs) => ({ results: jobs.map(run), transfer: [] }) };
}
