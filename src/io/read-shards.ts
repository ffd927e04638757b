/**
 * sheaf's own shard reader: streams a shard file (gzip members or plain
 * MessagePack, told apart by magic bytes), decodes records one by one with
 * the strict decoder of formats/msgpack.ts, and checks each
 * (formats/shard-record.ts). A shard is never loaded whole.
 */
import { readFileSync } from 'node:fs';
import { DataError, UsageError } from '../core/errors.js';
import { parseManifest, type ShardManifest } from '../formats/manifest.js';
import { MsgpackError, MsgpackReader, type Decoded } from '../formats/msgpack.js';
import { rankingList, RankingListDecoder, toShardSentence } from '../formats/shard-record.js';
import type { RankingList, ShardSentence } from '../records.js';
import { readBytes } from './open-input.js';
import { fileInside } from './files.js';

export const MANIFEST = 'manifest.json';

/** Sentences of one shard file, in order. */
export async function* readShard(file: string): AsyncGenerator<ShardSentence> {
  yield* decodeShard(file, (raw) => toShardSentence(raw));
}

/**
 * The lists of one shard file as flat ranking lists (what train and eval
 * score), by the fast path; a record the fast path does not take is decoded
 * the general way, which names any problem.
 */
export async function* readRankingLists(file: string): AsyncGenerator<RankingList> {
  const fast = new RankingListDecoder();
  yield* decodeShard(file, (raw) => rankingList(toShardSentence(raw)), (bytes, at) => {
    const list = fast.decode(bytes, at);
    return list ? { value: list, end: fast.end } : null;
  });
}

/** Every list of a shard directory as flat ranking lists, shard by shard. */
export async function* readRankingListDir(dir: string, manifest: ShardManifest = readManifest(dir)): AsyncGenerator<RankingList> {
  for (const s of manifest.shards) yield* readRankingLists(fileInside(dir, s.file));
}

async function* decodeShard<T>(file: string, convert: (raw: Decoded) => T, fast?: (bytes: Uint8Array, at: number) => { value: T; end: number } | null): AsyncGenerator<T> {
  const reader = new MsgpackReader(new Uint8Array(0));
  let buf: Uint8Array = new Uint8Array(0);
  let record = 0;
  let consumed = 0;
  for await (const b of readBytes(file)) {
    // A plain view: Buffer's slice() semantics must not leak into decoded records.
    const chunk = new Uint8Array(b.buffer, b.byteOffset, b.byteLength);
    if (buf.length === 0) buf = chunk;
    else {
      const joined = new Uint8Array(buf.length + chunk.length);
      joined.set(buf);
      joined.set(chunk, buf.length);
      buf = joined;
    }
    reader.load(buf);
    for (;;) {
      if (reader.done) break;
      if (fast) {
        let got;
        try {
          got = fast(buf, reader.offset);
        } catch (e) {
          if (e instanceof MsgpackError && e.truncated) break;
          throw e;
        }
        if (got) {
          reader.offset = got.end;
          record++;
          yield got.value;
          continue;
        }
      }
      let raw;
      try {
        raw = reader.decode();
      } catch (e) {
        if (e instanceof MsgpackError && e.truncated) break;
        throw new DataError('bad-shard', `record ${record + 1} (byte ${consumed + reader.offset} of the decompressed data): ${(e as Error).message}`, { file }, { cause: e });
      }
      let s: T;
      try {
        s = convert(raw);
      } catch (e) {
        if (e instanceof DataError) throw new DataError('bad-shard', `record ${record + 1}: ${e.reason}`, { file }, { cause: e });
        throw e;
      }
      record++;
      yield s;
    }
    consumed += reader.offset;
    buf = buf.subarray(reader.offset);
  }
  if (buf.length > 0) throw new DataError('bad-shard', `the data ends inside record ${record + 1} (${buf.length} bytes of an incomplete record): the shard is truncated`, { file });
}

/** The checked manifest of a shard directory. */
export function readManifest(dir: string): ShardManifest {
  let text: string;
  try {
    text = readFileSync(fileInside(dir, MANIFEST), 'utf8');
  } catch (e) {
    if (e instanceof UsageError) throw e;
    throw new UsageError(`\`${dir}\` is not a complete shard directory (no readable manifest.json; run \`sheaf prepare\` to make one)`, { cause: e });
  }
  return parseManifest(text, dir);
}

/** Every sentence of a shard directory, shard by shard. */
export async function* readShardDir(dir: string, manifest: ShardManifest = readManifest(dir)): AsyncGenerator<ShardSentence> {
  for (const s of manifest.shards) yield* readShard(fileInside(dir, s.file));
}
