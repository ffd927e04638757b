/**
 * A shard's count file (`shard-NNNNN.counts.msgpack`): one MessagePack map
 *
 *   { bits: int, idx: bin <u4 ascending, count: bin <u4, offsets: bin <u8 }
 *
 * - `idx` / `count`: the buckets that vary in some sentence of the shard and
 *   in how many sentences each varies (the count arrays add up across shards:
 *   the feature count cut-off works on their sum);
 * - `offsets`: the byte offset, in the shard file, where each sentence's
 *   record starts (its own gzip member when compressed), so a reader can seek.
 *
 * Pure: no node: imports.
 */
import { DataError } from '../core/errors.js';
import { MsgpackReader, MsgpackWriter } from './msgpack.js';

export interface CountFile {
  bits: number;
  idx: Uint32Array;
  count: Uint32Array;
  offsets: Float64Array;
}

export function encodeCounts(c: CountFile): Uint8Array {
  const w = new MsgpackWriter();
  w.mapHeader(4);
  w.str('bits');
  w.int(c.bits);
  w.str('idx');
  w.bin(c.idx);
  w.str('count');
  w.bin(c.count);
  w.str('offsets');
  w.bin(BigUint64Array.from(c.offsets, (x) => BigInt(x)));
  return w.bytes();
}

export function decodeCounts(bytes: Uint8Array, file: string): CountFile {
  const bad = (why: string): never => {
    throw new DataError('bad-shard', `${why} (expected a count file {bits, idx, count, offsets})`, { file });
  };
  let raw;
  try {
    raw = new MsgpackReader(bytes).decode();
  } catch (e) {
    return bad((e as Error).message);
  }
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw) || raw instanceof Uint8Array) return bad('not a map');
  const { bits, idx, count, offsets } = raw;
  if (typeof bits !== 'number' || !Number.isInteger(bits) || bits < 1 || bits > 31) return bad('`bits` is not an integer from 1 to 31');
  if (!(idx instanceof Uint8Array) || !(count instanceof Uint8Array) || idx.byteLength !== count.byteLength || idx.byteLength % 4 !== 0) return bad('`idx` and `count` are not uint32 data of one length');
  if (!(offsets instanceof Uint8Array) || offsets.byteLength % 8 !== 0) return bad('`offsets` is not uint64 data');
  const u32 = (b: Uint8Array) => new Uint32Array(new Uint8Array(b).buffer);
  const o = new BigUint64Array(new Uint8Array(offsets).buffer);
  const i = u32(idx);
  for (let k = 1; k < i.length; k++) if (i[k] <= i[k - 1]) return bad('`idx` is not ascending');
  return { bits, idx: i, count: u32(count), offsets: Float64Array.from(o, (x) => Number(x)) };
}
