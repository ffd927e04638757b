/**
 * A shard's count file (`shard-NNNNN.counts.msgpack`): one MessagePack map
 *
 *   { bits: int, idx: bin, itype: str, count: bin, ctype: str, offsets: bin <u8 }
 *
 * - `idx` / `count`: the buckets that vary in some sentence of the shard and
 *   in how many sentences each varies (the count arrays add up across shards:
 *   the feature count cut-off works on their sum). `idx` is ascending, stored
 *   as gaps of type `itype` (gaps.ts); `count` holds unsigned integers of type
 *   `ctype` (`<u1`, `<u2` or `<u4`, the narrowest that holds them);
 * - `offsets`: the byte offset, in the shard file, where each sentence's
 *   record starts (its own gzip member when compressed), so a reader can seek.
 *
 * Pure: no node: imports.
 */
import { DataError } from '../core/errors.js';
import { asGapType, gapCount, gapTypeFor, largestGap, readGaps, writeGaps, type GapType } from './gaps.js';
import { MsgpackReader, MsgpackWriter } from './msgpack.js';

export interface CountFile {
  bits: number;
  idx: Uint32Array;
  count: Uint32Array;
  offsets: Float64Array;
}

const ELEMENT = { '<u1': 'u8', '<u2': 'u16', '<u4': 'u32' } as const;

export function encodeCounts(c: CountFile): Uint8Array {
  const w = new MsgpackWriter();
  const it = gapTypeFor(largestGap(c.idx));
  let most = 0;
  for (const x of c.count) if (x > most) most = x;
  const ct = gapTypeFor(most);
  w.mapHeader(6);
  w.str('bits');
  w.int(c.bits);
  w.str('idx');
  writeGaps(w, c.idx, 0, c.idx.length, it);
  w.str('itype');
  w.str(it);
  w.str('count');
  w.binOf(c.count, 0, c.count.length, ELEMENT[ct]);
  w.str('ctype');
  w.str(ct);
  w.str('offsets');
  w.bin(BigUint64Array.from(c.offsets, (x) => BigInt(x)));
  return w.bytes();
}

export function decodeCounts(bytes: Uint8Array, file: string): CountFile {
  const bad = (why: string): never => {
    throw new DataError('bad-shard', `${why} (expected a count file {bits, idx, itype, count, ctype, offsets})`, { file });
  };
  let raw;
  try {
    raw = new MsgpackReader(bytes).decode();
  } catch (e) {
    return bad((e as Error).message);
  }
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw) || raw instanceof Uint8Array) return bad('not a map');
  const { bits, idx, itype, count, ctype, offsets } = raw;
  if (typeof bits !== 'number' || !Number.isInteger(bits) || bits < 1 || bits > 31) return bad('`bits` is not an integer from 1 to 31');
  const it = asGapType(itype);
  const ct = asGapType(ctype);
  if (it === null || ct === null) return bad('`itype` and `ctype` are not each one of `<u1`, `<u2`, `<u4`');
  if (!(idx instanceof Uint8Array) || !(count instanceof Uint8Array)) return bad('`idx` and `count` are not bin data');
  const n = gapCount(idx, it);
  if (n < 0 || gapCount(count, ct) !== n) return bad(`\`idx\` and \`count\` do not hold one ${it} gap and one ${ct} count per bucket`);
  if (!(offsets instanceof Uint8Array) || offsets.byteLength % 8 !== 0) return bad('`offsets` is not uint64 data');
  const i = new Uint32Array(n);
  const why = readGaps(idx, it, i, 0, 2 ** bits);
  if (why !== null) return bad(`\`idx\`: ${why}`);
  const o = new BigUint64Array(new Uint8Array(offsets).buffer);
  return { bits, idx: i, count: countsOf(count, ct as GapType), offsets: Float64Array.from(o, (x) => Number(x)) };
}

function countsOf(bin: Uint8Array, t: GapType): Uint32Array {
  const copy = new Uint8Array(bin);
  if (t === '<u1') return Uint32Array.from(copy);
  if (t === '<u2') return Uint32Array.from(new Uint16Array(copy.buffer));
  return new Uint32Array(copy.buffer);
}
