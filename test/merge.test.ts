/**
 * `sheaf prepare --part I/N` and `sheaf merge`: the merged folder against a
 * one-machine run of the same inputs, file by file and byte by byte (shards,
 * count files, rejects.jsonl, manifest.json, names.json,
 * pipeline-files.msgpack), with damaged records in the input so rejects fall
 * in several parts; a model trained on either is the same bytes. Outside
 * check: the parts' side files and the merged shards read with an independent
 * MessagePack decoder (@msgpack/msgpack, npm, after Node's gunzip). Refusals:
 * missing, duplicated, foreign, incomplete and damaged parts, each named.
 */
import { cpSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gunzipSync } from 'node:zlib';
import { decodeMulti } from '@msgpack/msgpack';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { decodeDeltas, encodeDeltas, parsePartSpec, shareSize } from '../src/formats/part-file.js';
import { readManifest } from '../src/io/read-shards.js';
import { runMerge } from '../src/merge/run-merge.js';
import { runPrepare, SimulatedStop, type PrepareOptions } from '../src/prepare/run-prepare.js';
import { runTrain } from '../src/train/run-train.js';
import { main } from '../src/cli.js';
import { makeDemoData, type DemoData } from './helpers/make-demo-data.js';
import { demoPipeline, stageOf } from './helpers/demo-pipeline.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-merge-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let data: DemoData;
let gold: string;
let dumps: string[];
let pipeline: string;
let plainPipeline: string;
let namesPipeline: string;
let bitsPipeline: string;
let n = 0;
const fresh = (name: string) => join(dir, `${name}-${n++}`);

beforeAll(async () => {
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/).slice(0, 90);
  // A gold tree that does not close: a gold reject, which every part reads and the merge counts once.
  const clean = join(dir, 'clean.trees');
  writeFileSync(clean, trees.join('\n') + '\n');
  data = await makeDemoData(clean, join(dir, 'in'), { folds: 3, nbest: 8 });
  gold = join(dir, 'gold.trees');
  writeFileSync(gold, trees.join('\n') + '\n( (S (NP (NN rope)) (VP (VBD frayed))\n');
  // Damaged records spread over the input, so several parts hold rejects.
  const lines = readFileSync(data.dumps[0], 'utf8').trim().split('\n');
  const mutate = (k: number, f: (r: any) => void) => { const r = JSON.parse(lines[k]); f(r); return JSON.stringify(r); };
  const damaged = [
    lines[0],
    '{"id": "broken", "candidates": [',                                            // bad JSON (reader)
    lines[1],
    mutate(2, (r) => { r.candidates[0].tree = r.candidates[0].tree.replace(/\(NN ([^)]+)\)/, '(NN zebra)'); }), // yield mismatch (worker)
    lines[3],
    lines[0],                                                                      // duplicate id (join)
    mutate(4, (r) => { r.id = 'no-such-id'; }),                                    // no gold (join)
    mutate(5, (r) => { r.candidates = []; }),                                      // kept, flagged
    ...lines.slice(6, 12),
    mutate(12, (r) => { r.candidates[1].tree = '(S (NP (NN rope)'; }),            // a candidate that does not parse: dropped (worker)
    ...lines.slice(13, -1),
    mutate(lines.length - 1, (r) => { for (const c of r.candidates) c.tree = '(S (NP (NN rope)'; }), // no candidate parses: the list is refused (worker)
  ];
  const first = join(dir, 'in', 'damaged-fold-0.jsonl');
  writeFileSync(first, damaged.join('\n') + '\n');
  dumps = [first, ...data.dumps.slice(1)];
  const p = demoPipeline({ sentencesPerShard: 20, names: 0 });
  const stage = (id: string) => stageOf(p, id);
  const save = (name: string) => {
    const f = join(dir, name);
    writeFileSync(f, JSON.stringify(p));
    return f;
  };
  pipeline = save('pipeline.json');
  stage('encode-shard.v3').compression = 'none';
  plainPipeline = save('pipeline-plain.json');
  stage('encode-shard.v3').compression = 'gzip';
  stage('hash-features.v2').names = 2;
  namesPipeline = save('pipeline-names.json');
  stage('hash-features.v2').names = 0;
  stage('hash-features.v2').bits = 18;
  bitsPipeline = save('pipeline-bits.json');
});

const prepare = (o: Partial<PrepareOptions>) => runPrepare({ gold, nbest: dumps, pipeline, out: fresh('one'), plan: data.plan, workers: 0, quiet: true, ...o });
async function parts(N: number, o: Partial<PrepareOptions> = {}): Promise<string[]> {
  const dirs: string[] = [];
  for (let I = 0; I < N; I++) {
    const out = fresh(`part-${I}-of-${N}`);
    await prepare({ ...o, out, part: { index: I, of: N } });
    dirs.push(out);
  }
  return dirs;
}

/** Every file of a folder, by name, as bytes. */
const contents = (d: string) => Object.fromEntries(readdirSync(d).sort().map((f) => [f, readFileSync(join(d, f))]));

function expectSameFolder(merged: string, one: string): void {
  const a = contents(merged);
  const b = contents(one);
  expect(Object.keys(a)).toEqual(Object.keys(b));
  for (const f of Object.keys(b)) expect(a[f].equals(b[f]), `${f} differs`).toBe(true);
}

/** The `pos` of every record of a folder's shards, read with @msgpack/msgpack. */
function positions(d: string): number[] {
  const m = readManifest(d);
  return m.shards.flatMap((s) => {
    const bytes = readFileSync(join(d, s.file));
    return ([...decodeMulti(s.file.endsWith('.gz') ? gunzipSync(bytes) : bytes)] as any[]).map((r) => r.pos as number);
  });
}

describe('prepare --part and merge', () => {
  let oneMachine: string;
  let merged3: string;
  /** The parts made for N = 1 … 4, reused by the refusals. */
  const partsOf: Record<number, string[]> = {};

  it('parses I/N and refuses anything else', () => {
    expect(parsePartSpec('2/4')).toEqual({ index: 2, of: 4 });
    expect(parsePartSpec(' 0 / 1 ')).toEqual({ index: 0, of: 1 });
    for (const bad of ['4/4', '-1/4', '1/0', '1', 'a/b', '1/4/2', '1.5/4']) expect(() => parsePartSpec(bad)).toThrow(/expected `--part` as I\/N/);
    // Share sizes partition the positions (by counting them one by one).
    for (const read of [0, 1, 7, 90]) {
      for (const of of [1, 2, 3, 4, 11]) {
        for (let index = 0; index < of; index++) {
          expect(shareSize(read, { index, of })).toBe([...Array(read).keys()].filter((p) => p % of === index).length);
        }
      }
    }
  });

  it('stores the varying buckets as LEB128 varints of their differences, and reads them back', () => {
    // The Protocol Buffers encoding guide's worked example (from memory): 300 is the two bytes ac 02.
    expect(Array.from(encodeDeltas(Uint32Array.of(300)))).toEqual([0xac, 0x02]);
    expect(Array.from(encodeDeltas(Uint32Array.of(1, 301, 302)))).toEqual([0x01, 0xac, 0x02, 0x01]);
    let seed = 5;
    const rand = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31);
    for (let t = 0; t < 50; t++) {
      const set = new Set<number>([0, 2 ** 32 - 1]);
      const n = Math.floor(rand() * 3000);
      for (let k = 0; k < n; k++) set.add(Math.floor(rand() * (t % 2 ? 2 ** 20 : 2 ** 32)));
      const buckets = Uint32Array.from([...set].sort((a, b) => a - b));
      expect(Array.from(decodeDeltas(encodeDeltas(buckets))!)).toEqual(Array.from(buckets));
    }
    expect(decodeDeltas(Uint8Array.of(5, 0))).toBeNull(); // a bucket twice
    expect(decodeDeltas(Uint8Array.of(0x80))).toBeNull(); // cut short
    expect(decodeDeltas(Uint8Array.of(0xff, 0xff, 0xff, 0xff, 0x7f))).toBeNull(); // beyond 32 bits
  });

  it('merges N = 1, 2, 3, 4 parts into files byte-identical to one machine\'s, rejects included', async () => {
    oneMachine = fresh('one');
    const one = await prepare({ out: oneMachine });
    // The yield mismatch and the tree that does not parse drop one candidate each, not their lists
    // (one rejects line each, the lists kept).
    expect(one.rejected).toBeGreaterThanOrEqual(4);
    expect(one.candidatesDropped).toBe(2);
    expect(one.goldRejected).toBe(1);
    const codes = readFileSync(join(oneMachine, 'rejects.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l).code);
    // The gold reject first, then the records' in input order: reader, worker and join refusals.
    expect(codes).toEqual(['unbalanced', 'bad-json', 'yield-mismatch', 'duplicate-id', 'no-gold', 'unbalanced', 'unbalanced']);
    expect(readManifest(oneMachine).shards.length).toBeGreaterThan(3);
    for (const N of [1, 2, 3, 4]) {
      const ps = await parts(N);
      partsOf[N] = ps;
      const out = fresh(`merged-${N}`);
      // Any order of the folders on the command line.
      const summary = await runMerge({ parts: [...ps].reverse(), out, quiet: true });
      expectSameFolder(out, oneMachine);
      expect(summary).toMatchObject({ parts: N, read: one.read, written: one.written, rejected: one.rejected });
      // Totals add up over the parts; the gold is counted once.
      const ms = ps.map(readManifest);
      expect(ms.reduce((a, m) => a + m.totals.written, 0)).toBe(one.written);
      expect(ms.reduce((a, m) => a + m.totals.rejected, 0)).toBe(one.rejected);
      for (const m of ms) expect([m.totals.goldTrees, m.totals.goldRejected]).toEqual([one.goldTrees, one.goldRejected]);
      // Each part holds its share only (independent decoder), and the rejects fell in more than one part.
      ps.forEach((p, I) => expect(positions(p).every((x) => x % N === I)).toBe(true));
      if (N > 1) expect(ms.filter((m) => m.totals.rejected > 0).length).toBeGreaterThan(1);
      // The shards were really re-cut: the parts' layout is not the merged one.
      if (N > 1) expect(ms.map((m) => m.shards.length).join()).not.toBe(String(readManifest(out).shards.length));
      if (N === 3) merged3 = out;
    }
    // Nothing in the merged folder refers to a part.
    const manifest = readFileSync(join(merged3, 'manifest.json'), 'utf8');
    expect(manifest).not.toMatch(/part-\d+-of-/);
    expect(readdirSync(merged3).filter((f) => /part|positions/.test(f))).toEqual([]);
  });

  it('keeps side records whose positions an independent decoder matches with the shard records', () => {
    const p = readdirSync(dir).find((f) => f.startsWith('part-1-of-3'))!;
    const d = join(dir, p);
    const info = JSON.parse(readFileSync(join(d, 'part.json'), 'utf8'));
    expect(info).toMatchObject({ format: 'sheaf-part/2', part: 1, of: 3 });
    const side = info.sides.flatMap((s: any) => [...decodeMulti(readFileSync(join(d, s.file)))] as any[]);
    expect(side.map((r: any) => r[0])).toEqual(positions(d));
    const rejectPos = new BigUint64Array(new Uint8Array(readFileSync(join(d, 'rejects.positions'))).buffer);
    for (const x of rejectPos) expect(Number(x) % 3).toBe(1);
  });

  it('gives a model byte-identical to one trained on the one-machine shards', async () => {
    const a = await runTrain({ shards: oneMachine, out: fresh('model-one'), epochs: 3, cutoff: 1, quiet: true });
    const b = await runTrain({ shards: merged3, out: fresh('model-merged'), epochs: 3, cutoff: 1, quiet: true });
    expect(a.nonZero).toBeGreaterThan(0);
    expectSameFolder(b.out, a.out);
  });

  it('merges plain (uncompressed) shards byte-identically', async () => {
    const one = fresh('one-plain');
    await prepare({ out: one, pipeline: plainPipeline });
    expect(readManifest(one).shards[0].file).toBe('shard-00000.msgpack');
    const out = fresh('merged-plain');
    await runMerge({ parts: await parts(3, { pipeline: plainPipeline }), out, quiet: true });
    expectSameFolder(out, one);
  });

  it('merges kept names into the names.json one machine writes', async () => {
    const one = fresh('one-names');
    await prepare({ out: one, pipeline: namesPipeline });
    expect(readManifest(one).names!.keys).toBeGreaterThan(100);
    const out = fresh('merged-names');
    await runMerge({ parts: await parts(2, { pipeline: namesPipeline }), out, quiet: true });
    expectSameFolder(out, one);
  });

  it('runs from the command line: prepare --part I/N, then merge', async () => {
    const cliPart = fresh('cli-part');
    const common = ['--gold', gold, '--nbest', ...dumps, '--plan', data.plan, '--pipeline', pipeline, '--workers', '0', '--quiet'];
    expect(await main(['prepare', ...common, '--part', '1/2', '-o', cliPart])).toBe(0);
    const ps = [partsOf[2][0], cliPart];
    const out = fresh('cli-merged');
    const printed: string[] = [];
    const log = console.log;
    console.log = (m: string) => printed.push(m);
    try {
      expect(await main(['merge', ps[1], ps[0], '-o', out, '--quiet', '--json'])).toBe(0);
    } finally {
      console.log = log;
    }
    expect(JSON.parse(printed.join(''))).toMatchObject({ parts: 2, read: readManifest(oneMachine).totals.read });
    expectSameFolder(out, oneMachine);
  });

  it('refuses a missing part, naming it', async () => {
    const ps = partsOf[4];
    const out = fresh('refused');
    await expect(runMerge({ parts: [ps[0], ps[1], ps[3]], out, quiet: true })).rejects.toThrow(/missing part 2 of 4/);
    expect(existsSync(join(out, 'manifest.json'))).toBe(false);
    // Through the command line: status 1 and the message.
    const err: string[] = [];
    const log = console.error;
    console.error = (m: string) => err.push(m);
    try {
      expect(await main(['merge', ps[0], ps[2], '-o', out, '--quiet'])).toBe(1);
    } finally {
      console.error = log;
    }
    expect(err.join('\n')).toMatch(/missing parts 1, 3 of 4/);
  });

  it('refuses a duplicated part, naming both folders, also when it is a copy', async () => {
    const ps = partsOf[2];
    const copy = fresh('copy');
    cpSync(ps[1], copy, { recursive: true });
    const out = fresh('refused');
    await expect(runMerge({ parts: [ps[0], ps[1], copy], out, quiet: true })).rejects.toThrow(new RegExp(`duplicated part[^]*part 1 of 2: \`${ps[1]}\`, \`${copy}\``));
    await expect(runMerge({ parts: [ps[0], ps[1], ps[1]], out, quiet: true })).rejects.toThrow(/\(the same folder\)/);
  });

  it('refuses foreign parts (another pipeline, other inputs), naming them and what differs', async () => {
    const ps = partsOf[3];
    const other = fresh('foreign-pipeline');
    await prepare({ out: other, pipeline: bitsPipeline, part: { index: 2, of: 3 } });
    const out = fresh('refused');
    await expect(runMerge({ parts: [ps[0], ps[1], other], out, quiet: true })).rejects.toThrow(new RegExp(`a foreign part[^]*\`${other}\` \\(part 2 of 3\\): pipeline digest`));
    // The same pipeline over other inputs: one dump fewer.
    const inputs = fresh('foreign-inputs');
    await prepare({ out: inputs, nbest: dumps.slice(0, 2), part: { index: 1, of: 3 } });
    await expect(runMerge({ parts: [ps[0], inputs, ps[2]], out, quiet: true })).rejects.toThrow(new RegExp(`\`${inputs}\` \\(part 1 of 3\\): n-best dumps`));
    // A part of a run cut into another number of parts.
    const four = partsOf[4][2];
    await expect(runMerge({ parts: [ps[0], ps[1], four], out, quiet: true })).rejects.toThrow(/number of parts 4 \(the others: 3\)/);
    // A one-machine shard directory is not a part.
    await expect(runMerge({ parts: [ps[0], ps[1], oneMachine], out, quiet: true })).rejects.toThrow(/made without `--part`/);
  });

  it('refuses an interrupted part, naming it; once resumed, the merge is byte-identical', async () => {
    const p0 = fresh('interrupted');
    await expect(prepare({ out: p0, part: { index: 0, of: 2 }, stopAfterShards: 1, workers: 2 })).rejects.toBeInstanceOf(SimulatedStop);
    const p1 = partsOf[2][1];
    const out = fresh('refused');
    await expect(runMerge({ parts: [p0, p1], out, quiet: true })).rejects.toThrow(new RegExp(`\`${p0}\` is an incomplete part \\(part 0 of 2 by its journal, 1 shard\\(s\\) complete\\)`));
    const again = await prepare({ out: p0, part: { index: 0, of: 2 } });
    expect(again.resumedShards).toBe(1);
    await runMerge({ parts: [p0, p1], out, quiet: true });
    expectSameFolder(out, oneMachine);
  });

  it('refuses parts that name the same inputs by other paths, saying which (rejects and manifest record paths)', async () => {
    // Part 1 run from elsewhere: the same files, spelled another way.
    const other = (f: string) => f.replace(/\/([^/]+)$/, '/./$1');
    const p1 = fresh('other-paths');
    await prepare({ out: p1, part: { index: 1, of: 2 }, gold: other(gold), nbest: dumps.map(other), plan: other(data.plan) });
    const out = fresh('merged-other-paths');
    await expect(runMerge({ parts: [partsOf[2][0], p1], out, quiet: true })).rejects.toThrow(new RegExp(`name the same input by different paths \\(\`${gold}\` and \`${other(gold).replace(/\./g, '\\.')}\`\\); rejects\\.jsonl and the manifest record input paths`));
  });

  it('a part made by another version of sheaf is named as such by merge, and made again by the same prepare', async () => {
    const old = fresh('older-part');
    cpSync(partsOf[2][0], old, { recursive: true });
    const info = JSON.parse(readFileSync(join(old, 'part.json'), 'utf8'));
    writeFileSync(join(old, 'part.json'), JSON.stringify({ ...info, format: 'sheaf-part/1', rejects: undefined }));
    await expect(runMerge({ parts: [old, partsOf[2][1]], out: fresh('refused'), quiet: true })).rejects.toThrow(/says format "sheaf-part\/1"; this sheaf reads `sheaf-part\/2`: another version of sheaf made this part; make it again/);
    const again = await prepare({ out: old, part: { index: 0, of: 2 } });
    expect(again.upToDate).toBe(false);
    const out = fresh('merged-after-remake');
    await runMerge({ parts: [old, partsOf[2][1]], out, quiet: true });
    expectSameFolder(out, oneMachine);
  });

  it('refuses a part whose files were changed after it was written', async () => {
    const ps = [partsOf[2][0], fresh('changed')];
    cpSync(partsOf[2][1], ps[1], { recursive: true });
    const f = join(ps[1], 'shard-00000.msgpack.gz');
    const bytes = readFileSync(f);
    bytes[bytes.length - 5] ^= 0xff;
    writeFileSync(f, bytes);
    await expect(runMerge({ parts: ps, out: fresh('refused'), quiet: true })).rejects.toThrow(new RegExp(`\`${ps[1]}\` \\(part 1 of 2\\) is damaged: shard-00000.msgpack.gz does not match the sha256`));
  });
});
