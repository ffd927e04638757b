/**
 * The streaming readers see a file as whatever chunks the stream gives:
 * cut at any byte (inside a line, inside a multi-byte UTF-8 character,
 * inside a gzip member), they must yield the same records with the same
 * lines as when reading the file in one piece.
 */
import { gzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { writeTree } from '../src/core/write-brackets.js';
import { readNbest } from '../src/io/read-nbest.js';
import { readTreebank } from '../src/io/read-treebank.js';

/** Splits bytes at seeded random positions (1 … max bytes per chunk). */
function byteChunks(bytes: Buffer, seed: number, max: number): Buffer[] {
  let s = seed >>> 0 || 1;
  const out: Buffer[] = [];
  for (let i = 0; i < bytes.length; ) {
    s ^= s << 13; s >>>= 0; s ^= s >>> 17; s ^= s << 5; s >>>= 0;
    const n = 1 + (s % max);
    out.push(bytes.subarray(i, i + n));
    i += n;
  }
  return out;
}
async function* from(chunks: Buffer[]): AsyncGenerator<Buffer> {
  for (const c of chunks) yield c;
}

const dump = [
  JSON.stringify({ id: 'hütte-1', fold: 0, source: { parser: 'p', fingerprint: 'f' }, candidates: [{ tree: '(S (NP (NN Hüttenwart)) (VP (VBD zählte)))', score: -3.5 }] }),
  '',
  '{"id": "2", "candidates": [',
  JSON.stringify({ id: 3, candidates: [{ tree: '(S (NP (NN rope)) (VP (VBD froze)))', score: -1 }, { tree: '(S (VP (NN rope) (VBD froze)))', score: -2 }] }),
  JSON.stringify({ id: '4 – 雪', candidates: [] }),
].join('\n') + '\n';

const trees = `( (S (NP-SBJ (DT the) (NN warden))
     (VP (VBD logged) (NP (CD two) (NNS crates)))
     (. .)) )
(S (NP (NN Schnee)) (VP (VBD fiel) (ADVP (RB früh))))
(S (NP (NN rope) (VP (VBD froze)))
(S (NP (NN 雪)) (VP (VBD melted)))
`;

async function nbestRecords(chunks?: Buffer[], bytes = Buffer.from(dump)) {
  const out = [];
  for await (const item of readNbest('d.jsonl', chunks ? { source: from(chunks) } : { source: from([bytes]) })) out.push(item);
  return out;
}

async function treeRecords(chunks: Buffer[]) {
  const vocab = createVocabulary();
  const out: unknown[] = [];
  for await (const r of readTreebank('t.trees', { vocab, source: from(chunks), onBad: (e) => out.push([e.code, e.line, e.column, e.id]) })) out.push([r.id, r.line, r.column, writeTree(r.tree)]);
  return out;
}

describe('readers over random chunk sizes', () => {
  it('read the same n-best records, rejects and lines however the bytes are cut', async () => {
    const whole = await nbestRecords();
    expect(whole.map((x) => ('record' in x ? ['ok', x.record.id, x.record.line] : ['bad', x.reject.code, x.reject.line]))).toEqual([
      ['ok', 'hütte-1', 1], ['bad', 'bad-json', 3], ['ok', '3', 4], ['ok', '4 – 雪', 5],
    ]);
    for (let seed = 1; seed <= 40; seed++) {
      expect(await nbestRecords(byteChunks(Buffer.from(dump), seed, seed % 2 ? 7 : 300))).toEqual(whole);
    }
  });

  it('read the same records from a gzipped dump cut anywhere', async () => {
    const whole = await nbestRecords();
    const gz = gzipSync(Buffer.from(dump));
    for (let seed = 1; seed <= 10; seed++) expect(await nbestRecords(byteChunks(gz, seed, 5))).toEqual(whole);
  });

  it('read the same trees, errors and positions from a treebank however the bytes are cut', async () => {
    const whole = await treeRecords([Buffer.from(trees)]);
    expect(whole).toEqual([
      ['1', 1, 1, '(S (NP-SBJ (DT the) (NN warden)) (VP (VBD logged) (NP (CD two) (NNS crates))) (. .))'],
      ['2', 4, 1, '(S (NP (NN Schnee)) (VP (VBD fiel) (ADVP (RB früh))))'],
      ['unbalanced', 5, 1, '3'],
      ['4', 6, 1, '(S (NP (NN 雪)) (VP (VBD melted)))'],
    ].map((x) => (x[0] === 'unbalanced' ? x : x)));
    for (let seed = 1; seed <= 40; seed++) expect(await treeRecords(byteChunks(Buffer.from(trees), seed, seed % 2 ? 5 : 200))).toEqual(whole);
  });
});
