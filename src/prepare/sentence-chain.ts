/**
 * The per-sentence chain of `prepare`, in two parts:
 * - gold-free: parse candidates → extract + hash features (as differences
 *   from the reference candidate) — what re-ranking new lists also needs;
 * - scoring: parse the gold tree → PARSEVAL counts of every candidate
 *   (a candidate whose tree does not parse or whose words differ from the
 *   gold's is dropped and reported,
 *   the others kept with their base ranks);
 * then encode (+ compress) the shard record. Pure apart from the pipeline it
 * is built from: no IO, no state across sentences except caches that do not
 * change the output.
 */
import { DataError } from '../core/errors.js';
import type { Tree } from '../core/tree.js';
import type { SentenceVectors, VectorExtractor } from '../features/extract-vectors.js';
import type { Pipeline } from '../pipeline/pipeline.js';
import type { CandidateText, DroppedCandidate, SentenceJob, SentenceResult } from '../records.js';
import { encodeShard } from '../stages/encode-shard.js';
import { extractFeatures } from '../stages/extract-features.js';
import { JobTrees, parseNormalised, parseUsableCandidates } from '../stages/parse-candidates.js';
import { scoreOrDrop } from '../stages/score-candidates.js';

/** parse → extract → hash, for one list: no gold needed. */
export function createFeaturiser(pipeline: Pipeline) {
  const extractor = extractFeatures(pipeline.templates, pipeline.hashing);
  return {
    extractor,
    /** The list's trees that parse, with their base ranks; the others as dropped candidates. */
    parseUsable: parseUsableCandidates(pipeline.parse),
    /** Vectors of some of a list's trees; `ranks` are their base ranks (positions in the list). */
    vectors(trees: readonly Tree[], candidates: readonly CandidateText[], ranks: readonly number[]): SentenceVectors {
      return extractor.sentence(trees.map((tree, j) => ({ tree, score: candidates[ranks[j]].score, rank: ranks[j] })));
    },
  };
}

export interface SentenceChain {
  run(job: SentenceJob): SentenceResult;
  /** The extractor (its `work` counters feed the benchmark). */
  extractor: VectorExtractor;
  /** Distinct canonical keys seen so far (only when the pipeline keeps names). */
  seenKeys(): string[];
}

export function createSentenceChain(pipeline: Pipeline): SentenceChain {
  const lists = new JobTrees();
  const featurise = createFeaturiser(pipeline);
  const score = scoreOrDrop(pipeline.scoring);
  const encode = encodeShard(pipeline.encode);

  const run = (job: SentenceJob): SentenceResult => {
    lists.next();
    const { vocab, builder } = lists;
    try {
      const gold = parseNormalised(job.gold, vocab, pipeline.parse, 'the gold tree', builder);
      // A candidate whose tree does not parse, or whose words differ from the gold's, is dropped, not the
      // list; ranks stay the base parser's.
      const parsed = featurise.parseUsable(job.candidates, vocab, builder);
      const { gold: goldCount, kept, counts, dropped: mismatched } = score(gold, parsed.trees, parsed.ranks);
      const dropped = mergeByRank(parsed.unparsable, mismatched);
      // No usable candidate at all: the list and the gold sentence disagree (a wrong join, a re-tokenised
      // input) or the dump is garbled, not one bad candidate. The list is refused whole.
      if (job.candidates.length > 0 && kept.length === 0) {
        const n = dropped.length;
        const first = `the first: ${dropped[0].reason}`;
        if (parsed.unparsable.length === 0) return { pos: job.pos, code: 'yield-mismatch', reason: `the words of every candidate (${n}) differ from the gold tree's; ${first}` };
        if (mismatched.length === 0) return { pos: job.pos, code: dropped[0].code, reason: `no candidate tree of the ${n} parses; ${first}` };
        return { pos: job.pos, code: 'yield-mismatch', reason: `no candidate of the ${n} is usable: ${parsed.unparsable.length} do not parse, the words of ${mismatched.length} differ from the gold tree's; ${first}` };
      }
      const gone = new Set(mismatched.map((d) => d.rank));
      const trees = gone.size === 0 ? parsed.trees : parsed.trees.filter((_, k) => !gone.has(parsed.ranks[k]));
      const vectors = featurise.vectors(trees, job.candidates, kept);
      const { bytes, rawBytes } = encode({
        id: job.id,
        pos: job.pos,
        fold: job.fold,
        gold: goldCount,
        len: gold.wordNodes.length,
        flag: trees.length === 0 ? 'no-candidates' : null,
        buckets: vectors.buckets,
        ref: vectors.ref,
        cands: trees.map((_, k) => ({
          score: job.candidates[kept[k]].score,
          rank: kept[k],
          matched: counts[k].matched,
          test: counts[k].test,
          idx: vectors.diffs[k].idx,
          val: vectors.diffs[k].val,
          pos: vectors.diffs[k].pos,
        })),
      });
      return { pos: job.pos, bytes, rawBytes, candidates: trees.length, dropped, varying: vectors.varying, templateCounts: vectors.templateCounts };
    } catch (e) {
      if (e instanceof DataError) return { pos: job.pos, code: e.code, reason: e.reason };
      throw e;
    }
  };
  return { run, extractor: featurise.extractor, seenKeys: () => [...(featurise.extractor.names?.keys ?? [])] };
}

/** Two lists of dropped candidates, each in rank order, as one in rank order. */
function mergeByRank(a: DroppedCandidate[], b: DroppedCandidate[]): DroppedCandidate[] {
  if (a.length === 0) return b;
  if (b.length === 0) return a;
  return [...a, ...b].sort((x, y) => x.rank - y.rank);
}
