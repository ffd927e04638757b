/**
 * sheaf's own shard reader (msgpackr, streamed: a shard is never loaded
 * whole). Typed arrays come back as Uint32Array / Float32Array copies, so
 * they are aligned whatever the byte offset inside the file.
 */
import { createReadStream, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { UnpackrStream } from 'msgpackr';
import { UsageError } from '../core/errors.js';
import type { SentenceRecord } from '../core/encode-sentence.js';

function u32(b: Uint8Array): Uint32Array {
  const copy = new Uint8Array(b.byteLength);
  copy.set(b);
  return new Uint32Array(copy.buffer);
}

function f32(b: Uint8Array): Float32Array {
  const copy = new Uint8Array(b.byteLength);
  copy.set(b);
  return new Float32Array(copy.buffer);
}

/** Converts one decoded map to a SentenceRecord (typed arrays restored). */
export function toSentence(raw: any): SentenceRecord {
  return {
    id: raw.id,
    fold: raw.fold ?? null,
    gold: raw.gold,
    flag: raw.flag ?? null,
    cands: raw.cands.map((c: any) => ({ score: c.score, rank: c.rank, matched: c.matched, test: c.test, idx: u32(c.idx), val: f32(c.val) })),
  };
}

/** Sentences of one shard file, in order. */
export async function* readShard(file: string): AsyncGenerator<SentenceRecord> {
  const stream = createReadStream(file).pipe(new UnpackrStream({ mapsAsObjects: true }));
  for await (const raw of stream) yield toSentence(raw);
}

export interface Manifest {
  format: string;
  shards: { file: string; sentences: number; candidates: number; bytes: number; sha256: string; counts: string }[];
  hashing: { bits: number; seed: number };
  totals: Record<string, number>;
  [key: string]: unknown;
}

export function readManifest(dir: string): Manifest {
  try {
    return JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8')) as Manifest;
  } catch (e) {
    throw new UsageError(`\`${dir}\` is not a complete shard directory (no readable manifest.json; run \`sheaf prepare\` to make one)`, { cause: e });
  }
}

/** Every sentence of a shard directory, shard by shard. */
export async function* readShardDir(dir: string): AsyncGenerator<SentenceRecord> {
  const m = readManifest(dir);
  for (const s of m.shards) yield* readShard(join(dir, s.file));
}
