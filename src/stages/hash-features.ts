/**
 * Stage `hash-features.v2`: signed feature hashing (MurmurHash3 x86_32 of the
 * key's UTF-8 bytes, scikit-learn FeatureHasher's rule) into 2^bits buckets,
 * and which features a list keeps. Runs inside the extraction loop
 * (stages/extract-features.ts, core/feature-sink.ts).
 * v2: the option that drops features with the same value in every candidate
 * of a list is `dropUniform` (and the shards store differences).
 */
import type { StageSpec } from './stage.js';

export const hashFeaturesSpec: StageSpec = {
  id: 'hash-features.v2',
  summary: 'signed feature hashing (MurmurHash3 x86_32, scikit-learn FeatureHasher rule); drop features equal in every candidate of a list',
  needs: ['features'],
  adds: ['vectors'],
  options: {
    bits: { type: 'integer', default: 20, min: 1, max: 31, doc: 'hash space: 2^bits buckets' },
    seed: { type: 'integer', default: 0, min: 0, max: 4294967295, doc: 'MurmurHash3 seed (scikit-learn uses 0)' },
    dropUniform: { type: 'boolean', default: true, doc: 'drop features whose value is the same in every candidate of a list (they cannot change its ranking)' },
    names: { type: 'integer', default: 0, min: 0, max: 100, doc: 'keep this many canonical keys per bucket for inspection' },
  },
};

export interface HashingOptions {
  bits: number;
  seed: number;
  dropUniform: boolean;
  names: number;
}

export const HASH_RULE = 'h = signed MurmurHash3 x86_32 of the key\'s UTF-8 bytes; index = |h| mod 2^bits; value sign + if h >= 0 else -';
