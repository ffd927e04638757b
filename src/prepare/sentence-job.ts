/**
 * The per-sentence part of `prepare` (runs in a worker, or inline):
 * parse candidates → score against gold → extract + hash features → prune →
 * encode. Pure apart from the pipeline it is built from: no IO, no shared
 * state across sentences except caches that do not change the output.
 */
import { DataError } from '../core/errors.js';
import { createVocabulary } from '../core/interner.js';
import { FeatureExtractor } from '../features/extract-features.js';
import type { Pipeline } from '../pipeline/pipeline.js';
import type { CandidateText } from '../records.js';
import { encodeShard } from '../stages/encode-shard.js';
import { parseCandidates, parseNormalised } from '../stages/parse-candidates.js';
import { scoreCandidates } from '../stages/score-candidates.js';

export interface SentenceJob {
  seq: number;
  id: string;
  fold: number | null;
  gold: string;
  candidates: CandidateText[];
}

export type SentenceResult =
  | { seq: number; bytes: Uint8Array; candidates: number; varying: Uint32Array; empty: boolean }
  | { seq: number; code: string; reason: string };

export interface SentenceProcessor {
  (job: SentenceJob): SentenceResult;
  /** Distinct canonical keys seen so far (only when the pipeline keeps names). */
  seenKeys(): string[];
}

export function createSentenceProcessor(pipeline: Pipeline): SentenceProcessor {
  // A fresh vocabulary now and then keeps interner memory bounded; ids never reach the output.
  let vocab = createVocabulary();
  let jobs = 0;
  const parse = parseCandidates(pipeline.parse);
  const score = scoreCandidates(pipeline.scoring);
  const encode = encodeShard();
  const extractor = new FeatureExtractor({
    templates: pipeline.templates,
    bits: pipeline.hashing.bits,
    seed: pipeline.hashing.seed,
    pseudoConstant: pipeline.hashing.pseudoConstant,
    names: pipeline.hashing.names,
  });

  const processor = (job: SentenceJob): SentenceResult => {
    if (++jobs % 20000 === 0) vocab = createVocabulary();
    try {
      const gold = parseNormalised(job.gold, vocab, pipeline.parse, 'the gold tree');
      const trees = parse(job.candidates, vocab);
      const { gold: goldCount, counts } = score(gold, trees);
      const { vectors, varying } = extractor.sentenceWithVarying(trees.map((tree, rank) => ({ tree, score: job.candidates[rank].score, rank })));
      const bytes = encode({
        id: job.id,
        fold: job.fold,
        gold: goldCount,
        flag: trees.length === 0 ? 'no-candidates' : null,
        cands: trees.map((_, k) => ({
          score: job.candidates[k].score,
          rank: k,
          matched: counts[k].matched,
          test: counts[k].test,
          idx: vectors[k].idx,
          val: vectors[k].val,
        })),
      });
      return { seq: job.seq, bytes, candidates: trees.length, varying, empty: trees.length === 0 };
    } catch (e) {
      if (e instanceof DataError) return { seq: job.seq, code: e.code, reason: e.reason };
      throw e;
    }
  };
  return Object.assign(processor, { seenKeys: () => [...(extractor.names?.keys ?? [])] });
}
