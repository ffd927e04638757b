/**
 * `sheaf prepare` end to end on small data made from the demo corpus
 * (synthetic n-best lists). Outside checks: an independent MessagePack
 * decoder (@msgpack/msgpack, npm) with Node's gunzip reads every shard and
 * must agree with sheaf's own reader; the absolute vectors that `inspect`
 * shows equal the direct path's, recomputed from the dumps; determinism
 * across worker counts and input splits is checked by sha256.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gunzipSync, gzipSync } from 'node:zlib';
import { decodeMulti } from '@msgpack/msgpack';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { bucketOf, murmur3String } from '../src/core/murmur3.js';
import { directVectors } from '../src/features/direct-vectors.js';
import { decodeCounts } from '../src/formats/counts-file.js';
import { MsgpackReader } from '../src/formats/msgpack.js';
import { toShardSentence } from '../src/formats/shard-record.js';
import { makeDemoData, type DemoData } from './helpers/make-demo-data.js';
import { absoluteVectors, sentenceView } from '../src/inspect/inspect-shards.js';
import { loadPipeline } from '../src/io/load-pipeline.js';
import { readManifest, readShard, readShardDir } from '../src/io/read-shards.js';
import { runPrepare, SimulatedStop, type PrepareOptions } from '../src/prepare/run-prepare.js';
import { parseCandidates } from '../src/stages/parse-candidates.js';
import type { ShardSentence } from '../src/records.js';
import { demoPipeline, stageOf } from './helpers/demo-pipeline.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-prepare-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let data: DemoData;
let gold: string;
let pipeline: string;
let namesPipeline: string;
let n = 0;
const out = () => join(dir, `out${n++}`);

beforeAll(async () => {
  // The first 90 demo trees, and a pipeline with small shards so runs span several.
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/).slice(0, 90);
  gold = join(dir, 'gold.trees');
  writeFileSync(gold, trees.join('\n') + '\n');
  data = await makeDemoData(gold, join(dir, 'in'), { folds: 3, nbest: 8 });
  const p = demoPipeline({ sentencesPerShard: 25, names: 0 });
  pipeline = join(dir, 'pipeline.json');
  writeFileSync(pipeline, JSON.stringify(p));
  stageOf(p, 'hash-features.v2').names = 2;
  namesPipeline = join(dir, 'pipeline-names.json');
  writeFileSync(namesPipeline, JSON.stringify(p));
});

const run = (o: Partial<PrepareOptions> = {}) => runPrepare({ gold, nbest: data.dumps, pipeline, out: out(), plan: data.plan, workers: 0, quiet: true, ...o });
const shardHashes = (d: string) => readManifest(d).shards.map((s) => [s.sha256, s.countsSha256]);
const sha = (f: string) => `sha256:${createHash('sha256').update(readFileSync(f)).digest('hex')}`;
async function all(d: string): Promise<ShardSentence[]> {
  const xs: ShardSentence[] = [];
  for await (const s of readShardDir(d)) xs.push(s);
  return xs;
}

describe('sheaf prepare', () => {
  it('writes every sentence, reconciles totals, and records shard sha256 that match the files', async () => {
    const s = await run();
    expect(s).toMatchObject({ read: 90, written: 90, rejected: 0, goldTrees: 90, goldWithoutNbest: 0, shards: 4 });
    const m = readManifest(s.out);
    for (const sh of m.shards) {
      expect(sha(join(s.out, sh.file))).toBe(sh.sha256);
      expect(sha(join(s.out, sh.counts))).toBe(sh.countsSha256);
    }
    expect(m.shards.map((x) => x.sentences)).toEqual([25, 25, 25, 15]);
    expect(m.inputs.nbest.map((x) => x.records).reduce((a, b) => a + b)).toBe(90);
    expect(readdirSync(s.out).filter((f) => f.endsWith('.tmp') || f.startsWith('.'))).toEqual([]);
    // Input positions 0 … 89, each once.
    expect((await all(s.out)).map((x) => x.pos).sort((a, b) => a - b)).toEqual([...Array(90).keys()]);
  });

  it('gives byte-identical shards with 0, 1, 2 and 4 workers', async () => {
    const hashes = [];
    for (const workers of [0, 1, 2, 4]) hashes.push(shardHashes((await run({ workers, batch: 3 })).out));
    for (const h of hashes.slice(1)) expect(h).toEqual(hashes[0]);
  });

  it('gives byte-identical shards when the same input is split into different dump files', async () => {
    const text = data.dumps.map((f) => readFileSync(f, 'utf8')).join('');
    const lines = text.trim().split('\n');
    const one = join(dir, 'all.jsonl');
    writeFileSync(one, text);
    const a = join(dir, 'part-a.jsonl');
    const b = join(dir, 'part-b.jsonl.gz');
    writeFileSync(a, lines.slice(0, 37).join('\n') + '\n');
    writeFileSync(b, gzipSync(lines.slice(37).join('\n') + '\n'));
    const whole = shardHashes((await run({ nbest: [one] })).out);
    const split = shardHashes((await run({ nbest: [a, b] })).out);
    expect(split).toEqual(whole);
    // The same records as one top-level JSON array, gzipped (streamed by stream-json).
    const arr = join(dir, 'all.json.gz');
    writeFileSync(arr, gzipSync(`[\n${lines.join(',\n')}\n]\n`));
    const s = await run({ nbest: [arr] });
    expect(s).toMatchObject({ read: 90, written: 90, rejected: 0 });
    expect(shardHashes(s.out)).toEqual(whole);
  });

  it('reads back the same records with an independent decoder (@msgpack/msgpack after Node\'s gunzip)', async () => {
    const s = await run();
    const m = readManifest(s.out);
    let sentences = 0;
    for (const sh of m.shards) {
      const ours: ShardSentence[] = [];
      for await (const r of readShard(join(s.out, sh.file))) ours.push(r);
      const theirs = [...decodeMulti(gunzipSync(readFileSync(join(s.out, sh.file))))] as any[];
      expect(theirs.length).toBe(ours.length);
      const le = (b: Uint8Array, dtype: string) => {
        const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
        const width = { '<u1': 1, '<u2': 2, '<u4': 4, '<i1': 1, '<i2': 2, '<i4': 4, '<f4': 4, '<f8': 8 }[dtype]!;
        return Array.from({ length: b.byteLength / width }, (_, i) => {
          switch (dtype) {
            case '<u1': return dv.getUint8(i);
            case '<u2': return dv.getUint16(2 * i, true);
            case '<u4': return dv.getUint32(4 * i, true);
            case '<i1': return dv.getInt8(i);
            case '<i2': return dv.getInt16(2 * i, true);
            case '<i4': return dv.getInt32(4 * i, true);
            case '<f4': return dv.getFloat32(4 * i, true);
            default: return dv.getFloat64(8 * i, true);
          }
        });
      };
      // Gaps (README): the first value, then differences; a running sum gives the values back.
      const sums = (g: number[]) => g.map(((x) => (d: number) => (x += d))(0));
      theirs.forEach((t, k) => {
        const o = ours[k];
        expect(Object.keys(t)).toEqual(['id', 'pos', 'fold', 'gold', 'len', 'flag', 'buckets', 'btype', 'itype', 'ref', 'cands']);
        expect([t.id, t.pos, t.fold, t.gold, t.len, t.flag]).toEqual([o.id, o.pos, o.fold, o.gold, o.len, o.flag]);
        const buckets = sums(le(t.buckets, t.btype));
        for (let i = 1; i < buckets.length; i++) expect(buckets[i]).toBeGreaterThan(buckets[i - 1]);
        const at = (b: Uint8Array) => sums(le(b, t.itype)).map((p) => buckets[p]);
        // Every bucket of the sentence is stored by some vector.
        const used = new Set([t.ref, ...t.cands].flatMap((v: any) => [...at(v.idx), ...at(v.ridx)]));
        expect([...used].sort((a, b) => a - b)).toEqual(buckets);
        expect(Object.keys(t.ref)).toEqual(['idx', 'val', 'dtype', 'ridx', 'rval', 'rdtype']);
        expect(at(t.ref.idx)).toEqual(Array.from(o.ref!.idx));
        expect(le(t.ref.val, t.ref.dtype)).toEqual(Array.from(o.ref!.val));
        expect(at(t.ref.ridx)).toEqual(Array.from(o.ref!.ridx));
        expect(le(t.ref.rval, t.ref.rdtype)).toEqual(Array.from(o.ref!.rval));
        t.cands.forEach((c: any, j: number) => {
          const oc = o.cands[j];
          expect(Object.keys(c)).toEqual(['score', 'rank', 'matched', 'test', 'idx', 'val', 'dtype', 'ridx', 'rval', 'rdtype']);
          expect(['<i1', '<i2', '<i4']).toContain(c.dtype);
          expect(['<f4', '<f8']).toContain(c.rdtype);
          expect(at(c.ridx)).toEqual(Array.from(oc.diff.ridx));
          expect(le(c.rval, c.rdtype)).toEqual(Array.from(oc.diff.rval));
          expect([c.score, c.rank, c.matched, c.test]).toEqual([oc.score, oc.rank, oc.matched, oc.test]);
          const idx = at(c.idx);
          expect(idx).toEqual(Array.from(oc.diff.idx));
          expect(le(c.val, c.dtype)).toEqual(Array.from(oc.diff.val));
          for (let i = 1; i < idx.length; i++) expect(idx[i]).toBeGreaterThan(idx[i - 1]);
        });
        sentences++;
      });
    }
    expect(sentences).toBe(90);
  });

  it('stores vectors whose absolute form equals the direct path recomputed from the dumps', async () => {
    const s = await run();
    const p = loadPipeline(pipeline);
    const parse = parseCandidates(p.parse);
    const lists = new Map<string, { tree: string; score: number }[]>();
    for (const f of data.dumps) for (const l of readFileSync(f, 'utf8').trim().split('\n')) lists.set(JSON.parse(l).id, JSON.parse(l).candidates);
    let checked = 0;
    for (const sent of await all(s.out)) {
      const vocab = createVocabulary();
      const list = lists.get(sent.id)!;
      const trees = parse(list, vocab);
      const direct = directVectors({ templates: p.templates, bits: p.hashing.bits, seed: p.hashing.seed }, trees.map((tree, rank) => ({ tree, score: list[rank].score, rank })));
      const abs = absoluteVectors(sent);
      expect(abs.map((v) => Array.from(v.idx))).toEqual(direct.map((v) => Array.from(v.idx)));
      abs.forEach((v, c) => v.val.forEach((x, k) => expect(Math.abs(x - direct[c].val[k])).toBeLessThanOrEqual(1e-6 * Math.abs(x))));
      expect(sentenceView(sent)).toMatchObject({ id: sent.id, len: trees[0].wordNodes.length });
      checked++;
    }
    expect(checked).toBe(90);
  });

  it('records where each sentence starts, so one record can be read on its own', async () => {
    const s = await run();
    const m = readManifest(s.out);
    const sh = m.shards[1];
    const counts = decodeCounts(readFileSync(join(s.out, sh.counts)), sh.counts);
    expect(counts.offsets.length).toBe(sh.sentences);
    const bytes = readFileSync(join(s.out, sh.file));
    const ours: ShardSentence[] = [];
    for await (const r of readShard(join(s.out, sh.file))) ours.push(r);
    for (const k of [0, 7, sh.sentences - 1]) {
      const end = k + 1 < counts.offsets.length ? counts.offsets[k + 1] : bytes.length;
      const one = toShardSentence(new MsgpackReader(gunzipSync(bytes.subarray(counts.offsets[k], end))).decode());
      expect(one.id).toBe(ours[k].id);
      expect(one.pos).toBe(ours[k].pos);
    }
  });

  it('resumes an interrupted run from the last complete shard and gives the same bytes', async () => {
    const full = shardHashes((await run()).out);
    const o = out();
    await expect(runPrepare({ gold, nbest: data.dumps, pipeline, out: o, plan: data.plan, workers: 2, quiet: true, stopAfterShards: 2 })).rejects.toBeInstanceOf(SimulatedStop);
    expect(existsSync(join(o, 'manifest.json'))).toBe(false);
    const again = await runPrepare({ gold, nbest: data.dumps, pipeline, out: o, plan: data.plan, workers: 2, quiet: true });
    expect(again.resumedShards).toBe(2);
    expect(shardHashes(o)).toEqual(full);
    expect(readFileSync(join(o, 'rejects.jsonl'), 'utf8')).toBe('');
    const done = await runPrepare({ gold, nbest: data.dumps, pipeline, out: o, plan: data.plan, workers: 2, quiet: true });
    expect(done).toMatchObject({ upToDate: true, resumedShards: 0, written: 90 });
  });

  it('keeps canonical names per bucket, the same whatever the worker count, with the collision rate', async () => {
    const a = await run({ pipeline: namesPipeline, workers: 0 });
    const b = await run({ pipeline: namesPipeline, workers: 2, batch: 2 });
    const names = readFileSync(join(a.out, 'names.json'), 'utf8');
    expect(readFileSync(join(b.out, 'names.json'), 'utf8')).toBe(names);
    const doc = JSON.parse(names);
    let checked = 0;
    for (const [bucket, keys] of Object.entries(doc.names) as [string, string[]][]) {
      expect(keys.length).toBeLessThanOrEqual(2);
      expect([...keys].sort()).toEqual(keys);
      for (const k of keys) expect(String(bucketOf(murmur3String(k, 0), 20))).toBe(bucket);
      if (++checked > 500) break;
    }
    const m = readManifest(a.out);
    expect(m.names!.keys).toBeGreaterThanOrEqual(m.names!.buckets);
    expect(m.names!.collisionRate).toBeCloseTo(1 - m.names!.buckets / m.names!.keys, 12);
  });

  it('records per shard, per template, the buckets fired and those that vary', async () => {
    const s = await run();
    const m = readManifest(s.out);
    const ids = loadPipeline(pipeline).config.templates.map((t) => t.template);
    for (const sh of m.shards) {
      expect(Object.keys(sh.templates)).toEqual(ids);
      for (const [fired, varying] of Object.values(sh.templates)) expect(varying).toBeLessThanOrEqual(fired);
      expect(sh.templates['rules.v1'][1]).toBeGreaterThan(0);
    }
  });

  it('refuses lists from the wrong fold\'s model when given the plan, naming sentence and folds', async () => {
    const lines = readFileSync(data.dumps[0], 'utf8').trim().split('\n');
    const bad = JSON.parse(lines[0]);
    bad.fold = 1;
    const f = join(dir, 'leaky.jsonl');
    writeFileSync(f, [JSON.stringify(bad), ...lines.slice(1)].join('\n') + '\n');
    const s = await run({ nbest: [f] });
    expect(s.rejected).toBe(1);
    const rej = readFileSync(join(s.out, 'rejects.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(rej[0]).toMatchObject({ file: f, line: 1, id: bad.id, code: 'leak' });
    expect(rej[0].reason).toContain(`sentence \`${bad.id}\` is in fold 0 of the plan, but this list comes from the base model of fold 1`);
    // Right fold, but a model the plan does not name for it.
    const other = JSON.parse(lines[1]);
    other.source.fingerprint = 'sha256:some-other-model';
    writeFileSync(f, [lines[0], JSON.stringify(other)].join('\n') + '\n');
    const t = await run({ nbest: [f] });
    const rej2 = readFileSync(join(t.out, 'rejects.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(rej2).toHaveLength(1);
    expect(rej2[0]).toMatchObject({ line: 2, id: other.id, code: 'leak' });
    expect(rej2[0].reason).toContain('sha256:some-other-model');
  });

  it('rejects each bad record with file, line and reason, keeps empty lists, and reconciles', async () => {
    const lines = readFileSync(data.dumps[0], 'utf8').trim().split('\n');
    const rec = (k: number) => JSON.parse(lines[k]);
    const mutate = (k: number, f: (r: any) => void) => { const r = rec(k); f(r); return JSON.stringify(r); };
    const body = [
      lines[0],                                                            // 1 ok
      '{"id": "2", "candidates": [',                                       // 2 malformed JSON
      mutate(2, (r) => { delete r.candidates; }),                          // 3 missing field
      mutate(3, (r) => { r.candidates[0].score = '-3.5'; }),               // 4 non-numeric score
      lines[4].replace(/"score":-?[0-9.]+/, '"score":NaN'),                // 5 NaN (not JSON)
      mutate(5, (r) => { r.candidates[1].tree = '(S (NP (NN rope)'; }),    // 6 candidate 1's tree does not parse: candidate dropped
      mutate(6, (r) => { r.candidates[0].tree = r.candidates[0].tree.replace(/\(NN ([^)]+)\)/, '(NN zebra)'); }), // 7 yield differs: candidate dropped
      lines[0],                                                            // 8 duplicate id
      mutate(7, (r) => { r.id = 'no-such-id'; }),                          // 9 no gold
      mutate(8, (r) => { r.candidates = []; }),                            // 10 no candidates: kept
      mutate(9, (r) => { r.fold = 9007199254740993; }),                    // 11 fold beyond the safe integers
    ].join('\n') + '\n';
    const f = join(dir, 'bad.jsonl');
    writeFileSync(f, body);
    const gz = gzipSync(lines.slice(10).join('\n') + '\n');
    const g = join(dir, 'cut.jsonl.gz');
    writeFileSync(g, gz.subarray(0, Math.floor(gz.length / 2)));
    const s = await run({ nbest: [f, g] });
    const rej = readFileSync(join(s.out, 'rejects.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    const byLine = rej.filter((r) => r.file === f).map((r) => [r.line, r.code]);
    expect(byLine).toEqual([[2, 'bad-json'], [3, 'bad-field'], [4, 'bad-field'], [5, 'bad-json'], [6, 'unbalanced'], [7, 'yield-mismatch'], [8, 'duplicate-id'], [9, 'no-gold'], [11, 'bad-field']]);
    expect(rej.find((r) => r.code === 'yield-mismatch').reason).toMatch(/candidate 0: .*gold `[^`]+`, candidate `zebra`/);
    expect(rej.find((r) => r.file === g)).toMatchObject({ code: 'truncated' });
    for (const r of rej) expect(Object.keys(r)).toEqual(r.candidate === undefined ? ['file', 'line', 'column', 'id', 'code', 'reason'] : ['file', 'line', 'column', 'id', 'candidate', 'code', 'reason']);
    // The list of line 7 is kept without its candidate 0, that of line 6 without its candidate 1.
    expect(rej.find((r) => r.code === 'unbalanced')).toMatchObject({ line: 6, candidate: 1 });
    expect(rej.find((r) => r.code === 'unbalanced').reason).toMatch(/^candidate 1 does not parse/);
    expect((await all(s.out)).find((x) => x.id === rec(5).id)!.cands.map((c) => c.rank)).toEqual(rec(5).candidates.map((_: unknown, k: number) => k).filter((k: number) => k !== 1));
    expect(rej.find((r) => r.code === 'yield-mismatch')).toMatchObject({ line: 7, candidate: 0 });
    expect((await all(s.out)).find((x) => x.id === rec(6).id)!.cands.map((c) => c.rank)).toEqual(rec(6).candidates.slice(1).map((_: unknown, k: number) => k + 1));
    expect(s.candidatesRead).toBe(s.candidates + s.candidatesDropped);
    expect(s.candidatesDropped).toBe(2);
    expect(s.read).toBe(s.written + s.rejected);
    expect(s.noCandidates).toBe(1);
    const flagged = (await all(s.out)).filter((r) => r.flag).map((r) => [r.id, r.flag, r.cands.length, r.ref]);
    expect(flagged).toEqual([[rec(8).id, 'no-candidates', 0, null]]);
  });

  it('writes per-shard count arrays whose sum over shards is the per-bucket sentence count, also for a 2^26 hash space', async () => {
    for (const bits of [20, 26]) {
      const p = JSON.parse(readFileSync(pipeline, 'utf8'));
      p.stages.find((x: any) => x.stage === 'hash-features.v2').bits = bits;
      const file = join(dir, `pipeline-bits-${bits}.json`);
      writeFileSync(file, JSON.stringify(p));
      const s = await run({ pipeline: file });
      const m = readManifest(s.out);
      const fromCounts = new Map<number, number>();
      for (const sh of m.shards) {
        // Read with the independent decoder.
        const [c] = [...decodeMulti(readFileSync(join(s.out, sh.counts)))] as any[];
        expect(c.bits).toBe(bits);
        const typed = (b: Uint8Array, t: string) => {
          const bytes = new Uint8Array(b);
          return t === '<u1' ? Array.from(bytes) : Array.from(t === '<u2' ? new Uint16Array(bytes.buffer) : new Uint32Array(bytes.buffer));
        };
        // idx as gaps (the first value, then differences), count plain.
        const idx = typed(c.idx, c.itype).map(((x) => (d: number) => (x += d))(0));
        const cnt = typed(c.count, c.ctype);
        expect(cnt.length).toBe(idx.length);
        for (let k = 1; k < idx.length; k++) expect(idx[k]).toBeGreaterThan(idx[k - 1]);
        idx.forEach((i, k) => fromCounts.set(i, (fromCounts.get(i) ?? 0) + cnt[k]));
      }
      const fromShards = new Map<number, number>();
      for (const r of await all(s.out)) {
        const seen = new Set<number>();
        for (const c of r.cands) for (const i of [...c.diff.idx, ...c.diff.ridx]) seen.add(i);
        for (const i of seen) fromShards.set(i, (fromShards.get(i) ?? 0) + 1);
      }
      expect([...fromCounts].sort((a, b) => a[0] - b[0])).toEqual([...fromShards].sort((a, b) => a[0] - b[0]));
    }
  });

  it('writes plain MessagePack when compression is off, with the same records', async () => {
    const p = JSON.parse(readFileSync(pipeline, 'utf8'));
    p.stages.find((x: any) => x.stage === 'encode-shard.v3').compression = 'none';
    const file = join(dir, 'pipeline-plain.json');
    writeFileSync(file, JSON.stringify(p));
    const plain = await run({ pipeline: file });
    const gz = await run();
    const m = readManifest(plain.out);
    expect(m.shards[0].file).toMatch(/^shard-00000\.msgpack$/);
    expect(m.shards[0].bytes).toBe(m.shards[0].rawBytes);
    const strip = (xs: ShardSentence[]) => xs.map((x) => sentenceView(x));
    expect(strip(await all(plain.out))).toEqual(strip(await all(gz.out)));
  });

  it('stops at the first bad record with --strict', async () => {
    const f = join(dir, 'strict.jsonl');
    writeFileSync(f, '{"id": "1", "candidates": [\n');
    await expect(run({ nbest: [f], strict: true })).rejects.toThrow(/strict\.jsonl:1.*stopped by --strict/);
  });

  it('fails before reading any data when the pipeline is invalid', async () => {
    const p = join(dir, 'broken-pipeline.json');
    writeFileSync(p, JSON.stringify({ format: 'sheaf-pipeline/1', stages: [{ stage: 'read-nbest.v1', bogus: 1 }] }));
    const o = out();
    await expect(run({ pipeline: p, out: o })).rejects.toThrow(/unknown option `bogus`/);
    expect(existsSync(o)).toBe(false);
  });
});
