/**
 * Stage `write-shards.v1`: when a shard is complete. The files themselves
 * (atomic renames, count files, the journal) are io/shard-writer.ts's.
 */
import type { StageSpec } from './stage.js';

export const writeShardsSpec: StageSpec = {
  id: 'write-shards.v1',
  summary: 'cut the record stream into shards, written atomically with count files, manifest and rejects log',
  needs: ['bytes'],
  adds: [],
  options: {
    sentencesPerShard: { type: 'integer', default: 10000, min: 1, max: 100000000, doc: 'start a new shard after this many sentences' },
    bytesPerShard: { type: 'integer', default: 0, min: 0, max: 1e12, doc: 'or after this many bytes (0: no byte limit)' },
  },
};

export interface ShardLimits {
  sentencesPerShard: number;
  bytesPerShard: number;
}

/** True when a shard holding `sentences` records and `bytes` bytes is full. */
export function shardFull(limits: ShardLimits, sentences: number, bytes: number): boolean {
  return sentences >= limits.sentencesPerShard || (limits.bytesPerShard > 0 && bytes >= limits.bytesPerShard);
}
