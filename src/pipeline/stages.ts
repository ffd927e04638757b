/**
 * The registered prepare stages, in the order the pipeline must list them.
 * Each declares its options (with defaults) and which record fields it needs
 * and adds, so a pipeline is checked before any data flows.
 */
import { DEFAULT_SCORING } from '../core/parseval.js';
import type { OptionSchema } from '../features/options.js';

export interface StageSpec {
  id: string;
  summary: string;
  needs: readonly string[];
  adds: readonly string[];
  options: OptionSchema;
}

export const STAGES: readonly StageSpec[] = [
  {
    id: 'read-nbest.v1',
    summary: 'read n-best dumps (JSONL or a JSON array, .gz, stdin) sentence by sentence',
    needs: [],
    adds: ['id', 'fold', 'source', 'candidateTexts'],
    options: {
      maxCandidates: { type: 'integer', default: 0, min: 0, max: 100000, doc: 'keep at most this many candidates per sentence (0: all)' },
    },
  },
  {
    id: 'parse-candidates.v1',
    summary: 'parse and normalise candidate trees',
    needs: ['candidateTexts'],
    adds: ['candidates'],
    options: {
      stripFunctionTags: { type: 'boolean', default: true, doc: 'NP-SBJ-1 → NP' },
      dropEmpty: { type: 'boolean', default: true, doc: 'delete -NONE- elements and the constituents they leave empty' },
    },
  },
  {
    id: 'align-gold.v1',
    summary: 'join each sentence with its gold tree by id',
    needs: ['id'],
    adds: ['gold'],
    options: {},
  },
  {
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
  },
  {
    id: 'extract-features.v1',
    summary: 'global features of each whole candidate tree, from the listed templates',
    needs: ['candidates'],
    adds: ['features'],
    options: {
      // `templates` is checked against the template registry, not here.
    },
  },
  {
    id: 'hash-features.v1',
    summary: 'signed feature hashing (MurmurHash3 x86_32, scikit-learn FeatureHasher rule) and pseudo-constant pruning',
    needs: ['features'],
    adds: ['vectors'],
    options: {
      bits: { type: 'integer', default: 20, min: 1, max: 31, doc: 'hash space: 2^bits buckets' },
      seed: { type: 'integer', default: 0, min: 0, max: 4294967295, doc: 'MurmurHash3 seed (scikit-learn uses 0)' },
      pseudoConstant: { type: 'boolean', default: true, doc: 'drop features constant across a sentence\'s candidates' },
      names: { type: 'integer', default: 0, min: 0, max: 100, doc: 'keep this many canonical keys per bucket for inspection' },
    },
  },
  {
    id: 'encode-shard.v1',
    summary: 'encode each sentence as a MessagePack map with little-endian typed arrays',
    needs: ['id', 'counts', 'vectors'],
    adds: ['bytes'],
    options: {},
  },
  {
    id: 'write-shards.v1',
    summary: 'write shards atomically, with manifest and rejects log',
    needs: ['bytes'],
    adds: [],
    options: {
      sentencesPerShard: { type: 'integer', default: 10000, min: 1, max: 100000000, doc: 'start a new shard after this many sentences' },
      bytesPerShard: { type: 'integer', default: 0, min: 0, max: 1e12, doc: 'or after this many bytes (0: no byte limit)' },
    },
  },
];
