/**
 * Ascending lists stored as gaps (formats/gaps.ts), and the shard record's
 * bucket table built on them (formats/shard-record.ts). The definition the
 * README gives: the first value, then each value minus the one before;
 * numpy's `np.cumsum` gives the values back (the README's Python snippet,
 * run against `sheaf inspect --jsonl` in CI). Here the bytes are read back
 * with msgpackr (npm, an outside decoder) and summed by hand.
 */
import { unpack } from 'msgpackr';
import { describe, expect, it } from 'vitest';
import { seededRandom } from '../src/core/random.js';
import { gapTypeFor, largestGap, readGaps, writeGaps, type GapType } from '../src/formats/gaps.js';
import { MsgpackWriter } from '../src/formats/msgpack.js';
import { bucketTable, encodeSentence, toShardSentence, type SentenceToEncode } from '../src/formats/shard-record.js';
import { decodeAll } from '../src/formats/msgpack.js';

function ascending(rand: () => number, n: number, range: number): Uint32Array {
  const s = new Set<number>();
  while (s.size < n) s.add(Math.floor(rand() * range));
  return Uint32Array.from([...s].sort((a, b) => a - b));
}

/** Little-endian unsigned integers of a bin, summed: the values (by hand, not by gaps.ts). */
function summed(bin: Uint8Array, t: GapType): number[] {
  const width = { '<u1': 1, '<u2': 2, '<u4': 4 }[t];
  const out: number[] = [];
  let x = 0;
  for (let k = 0; k < bin.length; k += width) {
    let g = 0;
    for (let b = width - 1; b >= 0; b--) g = g * 256 + bin[k + b];
    out.push((x += g));
  }
  return out;
}

describe('gaps', () => {
  it('picks the narrowest unsigned type for the largest gap (the first value counts as a gap from 0)', () => {
    expect([0, 255, 256, 65535, 65536, 2 ** 32 - 1].map(gapTypeFor)).toEqual(['<u1', '<u1', '<u2', '<u2', '<u4', '<u4']);
    expect(largestGap([300, 301, 302])).toBe(300);
    expect(largestGap([3, 10, 12])).toBe(7);
    expect(largestGap([])).toBe(0);
  });

  it('writes bin data that an outside decoder reads back as the values, and reads its own back, in every width', () => {
    const rand = seededRandom(5);
    for (const [n, range] of [[0, 10], [1, 2 ** 31], [50, 200], [400, 2 ** 20], [300, 2 ** 32 - 1], [2000, 5000]] as const) {
      const a = ascending(rand, n, range);
      const t = gapTypeFor(largestGap(a));
      const w = new MsgpackWriter();
      writeGaps(w, a, 0, a.length, t);
      const bin = unpack(w.bytes()) as Uint8Array;
      expect(summed(bin, t), `${n} of ${range}`).toEqual(Array.from(a));
      const back = new Uint32Array(n);
      expect(readGaps(bin, t, back, 0, 2 ** 32)).toBeNull();
      expect(Array.from(back)).toEqual(Array.from(a));
    }
  });

  it('refuses repeats, values at or above the limit and a length that is not a whole number of gaps', () => {
    const out = new Uint32Array(8);
    expect(readGaps(Uint8Array.of(3, 0), '<u1', out, 0, 100)).toMatch(/ascending.*repeat of 3 at 1/);
    expect(readGaps(Uint8Array.of(0, 0), '<u1', out, 0, 100)).toMatch(/repeat of 0 at 1/);
    expect(readGaps(Uint8Array.of(60, 40), '<u1', out, 0, 100)).toMatch(/below 100, got 100 at 1/);
    expect(readGaps(Uint8Array.of(1, 0, 2), '<u2', out, 0, 100)).toMatch(/multiple of 2 bytes/);
    // A first gap of 0 is the value 0, not a repeat.
    expect(readGaps(Uint8Array.of(0, 5), '<u1', out, 0, 100)).toBeNull();
    expect(Array.from(out.subarray(0, 2))).toEqual([0, 5]);
  });
});

describe('the bucket table of a shard record', () => {
  const sentence = (vectors: { idx: Uint32Array; val: number[] }[]): SentenceToEncode => ({
    id: 'a', pos: 0, fold: null, gold: 7, len: 5, flag: null,
    ref: vectors[0],
    cands: vectors.slice(1).map((v, k) => ({ score: -k, rank: k, matched: 3, test: 6, ...v })),
  });

  it('holds every bucket stored once, ascending, and each index as its position there', () => {
    const rand = seededRandom(9);
    const vectors = [0, 1, 2].map(() => {
      const idx = ascending(rand, 30, 2 ** 20);
      return { idx, val: Array.from(idx, (_, k) => (k % 3 === 0 ? 0.5 : k % 5) - 2) };
    });
    const { buckets, pos } = bucketTable(vectors);
    expect(Array.from(buckets)).toEqual([...new Set(vectors.flatMap((v) => [...v.idx]))].sort((a, b) => a - b));
    vectors.forEach((v, k) => expect(Array.from(pos[k], (p) => buckets[p])).toEqual(Array.from(v.idx)));
  });

  it('encodes the same bytes with a caller\'s table as without, and decodes the buckets back, with positions of every width', () => {
    const rand = seededRandom(13);
    // Sentences with few, some hundreds and some hundred thousand buckets: position gaps of one, two and four bytes.
    for (const [n, range] of [[5, 40], [300, 2 ** 20], [70000, 2 ** 24]] as const) {
      const vectors = [0, 1, 2].map((k) => {
        const idx = ascending(rand, k === 2 ? 3 : n, range);
        return { idx, val: Array.from(idx, (_, j) => (j % 7 === 0 ? 0.25 : 1 + (j % 3))) };
      });
      const s = sentence(vectors);
      const plain = new MsgpackWriter();
      encodeSentence(plain, s);
      const { buckets, pos } = bucketTable(vectors);
      const given = new MsgpackWriter();
      encodeSentence(given, { ...s, buckets, ref: { ...s.ref!, pos: pos[0] }, cands: s.cands.map((c, k) => ({ ...c, pos: pos[k + 1] })) });
      expect(Buffer.from(given.bytes()).equals(Buffer.from(plain.bytes())), `${n} of ${range}`).toBe(true);
      const raw = unpack(plain.bytes()) as { buckets: Uint8Array; btype: GapType; itype: GapType };
      expect(summed(raw.buckets, raw.btype)).toEqual(Array.from(buckets));
      expect(raw.itype).toBe(n === 5 ? '<u1' : n === 300 ? '<u2' : '<u4');
      const back = toShardSentence(decodeAll(plain.bytes())[0]);
      const vecs = [back.ref!, ...back.cands.map((c) => c.diff)];
      vecs.forEach((v, k) => {
        const integer = vectors[k].idx.filter((_, j) => Number.isInteger(vectors[k].val[j]));
        expect(Array.from(v.idx)).toEqual(Array.from(integer));
        expect(v.idx.length + v.ridx.length).toBe(vectors[k].idx.length);
      });
    }
  });
});
