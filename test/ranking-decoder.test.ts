/**
 * The fast ranking-list decoder (formats/shard-record.ts, RankingListDecoder)
 * against the general path (strict decoder → checked sentence → rankingList)
 * on random sentences of every value width, and against msgpackr (npm, an
 * outside MessagePack decoder) for the numbers it reads. A layout it does
 * not expect gives null (the caller falls back); bytes that end inside a
 * record give a truncation error.
 */
import { unpackMultiple } from 'msgpackr';
import { describe, expect, it } from 'vitest';
import { seededRandom } from '../src/core/random.js';
import { decodeAll, MsgpackError, MsgpackWriter } from '../src/formats/msgpack.js';
import { encodeSentence, rankingList, RankingListDecoder, toShardSentence, type SentenceToEncode } from '../src/formats/shard-record.js';
import type { RankingList } from '../src/records.js';

function randomSentence(rand: () => number, k: number): SentenceToEncode {
  const vec = (n: number, scale: number, real: boolean) => {
    const idx = new Set<number>();
    while (idx.size < n) idx.add(Math.floor(rand() * 2 ** 20));
    const sorted = Uint32Array.from([...idx].sort((a, b) => a - b));
    const val = Array.from(sorted, () => {
      const v = real && rand() < 0.3 ? (rand() - 0.5) * scale : Math.round((rand() - 0.5) * scale) || 1;
      return v;
    });
    return { idx: sorted, val };
  };
  // Widths: int8, int16, int32 values and float parts, chosen per sentence.
  const scale = [4, 500, 3e5][k % 3];
  const m = Math.floor(rand() * 6);
  return {
    id: `s${k}-\u00e9`,
    pos: k,
    fold: k % 4 === 0 ? null : k % 4,
    gold: 10 + k,
    len: 5 + k,
    flag: m === 0 ? 'no-candidates' : null,
    ref: m === 0 ? null : vec(3, scale, true),
    cands: Array.from({ length: m }, (_, c) => ({ score: -c, rank: c, matched: c, test: 9 + c, ...vec(Math.floor(rand() * 40), scale, k % 2 === 1) })),
  };
}

const plain = (l: RankingList) => ({ ...l, rank: [...l.rank], matched: [...l.matched], test: [...l.test], start: [...l.start], idx: [...l.idx], val: [...l.val] });

describe('fast ranking-list decoder', () => {
  it('gives the general path\'s lists on 300 random records, back to back in one buffer', () => {
    const rand = seededRandom(29);
    const w = new MsgpackWriter();
    const sentences = Array.from({ length: 300 }, (_, k) => randomSentence(rand, k));
    for (const s of sentences) encodeSentence(w, s);
    const bytes = w.bytes();
    const general = decodeAll(bytes).map((raw) => rankingList(toShardSentence(raw)));
    const fast = new RankingListDecoder();
    let at = 0;
    sentences.forEach((s, k) => {
      const l = fast.decode(bytes, at);
      expect(l, `record ${k}`).not.toBeNull();
      expect(plain(l!)).toEqual(plain(general[k]));
      at = fast.end;
    });
    expect(at).toBe(bytes.length);
    // msgpackr (outside) reads the same records: ids, gold counts, ranks and F1 counts.
    const outside = unpackMultiple(bytes) as { id: string; gold: number; cands: { rank: number; matched: number; test: number }[] }[];
    expect(outside).toHaveLength(300);
    outside.forEach((r, k) => {
      const l = general[k];
      expect([r.id, r.gold]).toEqual([l.id, l.gold]);
      expect(r.cands.map((c) => [c.rank, c.matched, c.test])).toEqual(Array.from(l.rank, (rank, c) => [rank, l.matched[c], l.test[c]]));
    });
  });

  it('returns null on a layout it does not expect and throws a truncation error on cut bytes', () => {
    const rand = seededRandom(31);
    const w = new MsgpackWriter();
    const s = randomSentence(rand, 4);
    encodeSentence(w, s);
    const bytes = w.bytes().slice();
    const fast = new RankingListDecoder();
    // Another map size (a twelfth key): not the writer's layout.
    const other = bytes.slice();
    other[0] = 0x8c;
    expect(fast.decode(other, 0)).toBeNull();
    // A key spelled differently.
    const renamed = bytes.slice();
    renamed[2] = 0x78; // 'x' for the 'i' of "id"
    expect(fast.decode(renamed, 0)).toBeNull();
    for (const cut of [1, 5, Math.floor(bytes.length / 2), bytes.length - 1]) {
      expect(() => fast.decode(bytes.subarray(0, cut), 0), `cut at ${cut}`).toThrow(MsgpackError);
    }
  });

  it('leaves to the general decoder what it refuses: a flag other than "no-candidates", candidates without a reference', () => {
    const rand = seededRandom(37);
    const base = randomSentence(rand, 5);
    const s = { ...base, cands: base.cands.length > 0 ? base.cands : [{ score: -1, rank: 0, matched: 1, test: 2, idx: Uint32Array.of(7), val: [1] }] };
    const cases: [string, (x: SentenceToEncode) => SentenceToEncode, RegExp][] = [
      ['an unknown flag', (x) => ({ ...x, flag: 'odd' as never }), /expected `flag` to be nil or "no-candidates"/],
      ['candidates without a reference', (x) => ({ ...x, ref: null }), /expected a `ref` vector for a list with candidates/],
    ];
    for (const [what, change, message] of cases) {
      const w = new MsgpackWriter();
      encodeSentence(w, change(s));
      const bytes = w.bytes();
      expect(new RankingListDecoder().decode(bytes, 0), what).toBeNull();
      expect(() => toShardSentence(decodeAll(bytes)[0]), what).toThrow(message);
    }
    // The flag the writer does write is read on the fast path.
    const w = new MsgpackWriter();
    encodeSentence(w, { ...s, cands: [], ref: null, flag: 'no-candidates' });
    expect(new RankingListDecoder().decode(w.bytes(), 0)).not.toBeNull();
  });
});
