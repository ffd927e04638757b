/**
 * The registered prepare stages, in the order a pipeline must list them.
 * Each stage file (src/stages/) declares its options and the record fields it
 * needs and adds.
 */
import { alignGoldSpec } from '../stages/align-gold.js';
import { encodeShardSpec } from '../stages/encode-shard.js';
import { extractFeaturesSpec } from '../stages/extract-features.js';
import { hashFeaturesSpec } from '../stages/hash-features.js';
import { parseCandidatesSpec } from '../stages/parse-candidates.js';
import { readNbestSpec } from '../stages/read-nbest.js';
import { scoreCandidatesSpec } from '../stages/score-candidates.js';
import type { StageSpec } from '../stages/stage.js';
import { writeShardsSpec } from '../stages/write-shards.js';

export type { StageSpec };

export const STAGES: readonly StageSpec[] = [
  readNbestSpec,
  parseCandidatesSpec,
  alignGoldSpec,
  scoreCandidatesSpec,
  extractFeaturesSpec,
  hashFeaturesSpec,
  encodeShardSpec,
  writeShardsSpec,
];
