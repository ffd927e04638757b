/**
 * Stage `encode-shard.v3`: one sentence → its shard record (format
 * `sheaf-shards/3`, bytes fixed in formats/shard-record.ts), compressed on its
 * own as one gzip member. Concatenated gzip members are one valid gzip
 * stream, so a shard file is readable by any gzip reader, the workers
 * compress in parallel, and the bytes never depend on how many there are.
 */
import { constants, gzipSync } from 'node:zlib';
import { MsgpackWriter } from '../formats/msgpack.js';
import { encodeSentence, type SentenceToEncode } from '../formats/shard-record.js';
import type { StageSpec } from './stage.js';

export const encodeShardSpec: StageSpec = {
  id: 'encode-shard.v3',
  summary: 'encode each sentence as a MessagePack map (reference vector + per-candidate differences), one gzip member each',
  needs: ['id', 'counts', 'vectors'],
  adds: ['bytes'],
  options: {
    compression: { type: 'string', default: 'gzip', choices: ['gzip', 'none'], doc: 'gzip: each record its own gzip member; none: plain MessagePack' },
    level: { type: 'integer', default: 1, min: 1, max: 9, doc: 'gzip level (1: fastest)' },
  },
};

export interface EncodeOptions {
  compression: 'gzip' | 'none';
  level: number;
}

export function encodeShard(options: EncodeOptions) {
  const w = new MsgpackWriter();
  // Fixed header fields (no name, no mtime, OS byte as zlib writes it) keep the bytes reproducible.
  const zopts = { level: options.level, strategy: constants.Z_DEFAULT_STRATEGY };
  return (record: SentenceToEncode): { bytes: Uint8Array; rawBytes: number } => {
    w.reset();
    encodeSentence(w, record);
    if (options.compression === 'none') return { bytes: w.bytes(), rawBytes: w.length };
    const z = gzipSync(w.written(), zopts);
    // Small results live in a shared pool slab: copy them out so the record owns its buffer (it is transferred).
    const own = z.byteOffset === 0 && z.byteLength === z.buffer.byteLength;
    return { bytes: own ? new Uint8Array(z.buffer, 0, z.byteLength) : Uint8Array.prototype.slice.call(z), rawBytes: w.length };
  };
}
