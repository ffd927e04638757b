/**
 * Fuzzing whole commands: `prepare` in-process on random gold treebanks and
 * dumps (damaged trees, bad records, candidates with other words, unknown
 * and repeated ids), and train, eval, export, inspect and rerank on shard and
 * model directories with a file damaged (shard bytes, gzip, count file,
 * manifest, pipeline files, weights, model.json). A smaller number of the
 * same cases run through the built CLI with a 512 MB heap. Every case ends
 * with its output written and reconciled (read = written + rejected,
 * candidates read = kept + dropped, one rejects line per refusal) or with a
 * typed error (status 1), never anything else.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DataError } from '../../src/core/errors.js';
import { runEval } from '../../src/eval/run-eval.js';
import { runExport } from '../../src/export/run-export.js';
import { inspectModel } from '../../src/inspect/inspect-model.js';
import { inspectShards } from '../../src/inspect/inspect-shards.js';
import { readManifest } from '../../src/io/read-shards.js';
import { runPrepare } from '../../src/prepare/run-prepare.js';
import { runMerge } from '../../src/merge/run-merge.js';
import { runRerank } from '../../src/rerank/run-rerank.js';
import { runTrain } from '../../src/train/run-train.js';
import { damage, damageArb, layoutTree, treeArb, writeNode, type TreeNode } from './arbitraries.js';
import { expectTyped, runs, SCALE } from './settings.js';

const BIN = fileURLToPath(new URL('../../bin/sheaf.js', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-fuzz-commands-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }), 120_000);
/** Removes a case's files as soon as it is checked (long runs make thousands). */
const drop = (...paths: string[]) => {
  for (const p of paths) rmSync(p, { recursive: true, force: true });
};
let n = 0;
const fresh = (name: string) => join(dir, `${n++}-${name}`);

const leaves = (t: TreeNode | string): string[] => (typeof t === 'string' ? [t] : t.kids.flatMap(leaves));
/** Same words, another structure: every word under its own tag under one flat root. */
const flat = (t: TreeNode) => `(FLAT ${leaves(t).map((w) => `(T ${w})`).join(' ')})`;

/** A random prepare input: gold trees (maybe damaged, bracketed or JSON Lines) and one or two dumps. */
const inputArb = fc.record({
  trees: fc.array(treeArb, { minLength: 1, maxLength: 8 }),
  jsonlGold: fc.boolean(),
  goldDamage: fc.oneof({ weight: 3, arbitrary: fc.constant([] as never[]) }, { weight: 1, arbitrary: damageArb }),
  lists: fc.array(fc.record({
    id: fc.oneof(fc.nat({ max: 9 }).map((k) => String(k + 1)), fc.constantFrom('nope', '\ud800', '__proto__')),
    cands: fc.array(fc.constantFrom('gold', 'flat', 'other-words', 'broken', 'huge-score'), { maxLength: 5 }),
    raw: fc.oneof({ weight: 6, arbitrary: fc.constant(null) }, { weight: 1, arbitrary: fc.constantFrom('{', '[]', '{"id": 1, "candidates": 5}', '{"id": "1", "fold": 1e300, "candidates": []}', '{"__proto__": {"polluted": 1}, "id": "2", "candidates": []}') }),
  }), { maxLength: 10 }),
  split: fc.nat({ max: 10 }),
  dumpDamage: fc.oneof({ weight: 4, arbitrary: fc.constant([] as never[]) }, { weight: 1, arbitrary: damageArb }),
});
type Input = typeof inputArb extends fc.Arbitrary<infer T> ? T : never;

function writeInput(x: Input): { gold: string; dumps: string[] } {
  const gold = fresh(x.jsonlGold ? 'gold.jsonl' : 'gold.trees');
  const text = x.jsonlGold ? x.trees.map((t) => JSON.stringify({ tree: writeNode(t) })).join('\n') + '\n' : x.trees.map((t) => layoutTree(t, true, true)).join('\n') + '\n';
  writeFileSync(gold, damage(Buffer.from(text), x.goldDamage));
  const lines = x.lists.map((l) => {
    if (l.raw) return l.raw;
    const t = x.trees[(Number(l.id) - 1) % x.trees.length] ?? x.trees[0];
    const cands = l.cands.map((c, k) => {
      if (c === 'gold') return { tree: writeNode(t), score: -k };
      if (c === 'flat') return { tree: flat(t), score: -k - 0.5 };
      if (c === 'other-words') return { tree: `(S (NN hut-${k}))`, score: -k };
      if (c === 'broken') return { tree: '(S (NN', score: -k };
      return { tree: writeNode(t), score: -1e300 };
    });
    return JSON.stringify({ id: l.id, candidates: cands });
  });
  const cut = Math.min(x.split, lines.length);
  const dumps = [lines.slice(0, cut), lines.slice(cut)].filter((p, k) => k === 0 || p.length > 0).map((p, k) => {
    const f = fresh(`dump-${k}.jsonl`);
    writeFileSync(f, damage(Buffer.from(p.join('\n') + '\n'), k === 0 ? x.dumpDamage : []));
    return f;
  });
  return { gold, dumps };
}

function checkOutput(out: string) {
  const m = readManifest(out);
  const t = m.totals;
  expect(t.read).toBe(t.written + t.rejected);
  expect(t.candidatesRead).toBe(t.candidates + t.candidatesDropped);
  const rejects = readFileSync(join(out, 'rejects.jsonl'), 'utf8').split('\n').filter(Boolean).map((l) => JSON.parse(l));
  expect(rejects.length).toBe(t.rejected + t.goldRejected + t.candidatesDropped);
  for (const r of rejects) {
    expect(typeof r.file).toBe('string');
    expect(typeof r.code).toBe('string');
    expect(r.reason.length).toBeGreaterThan(5);
  }
  expect(readdirSync(out).filter((f) => f.endsWith('.tmp'))).toEqual([]);
}

describe('fuzz: prepare on random inputs', () => {
  it('every run ends reconciled, or with a typed error', async () => {
    const seen = { written: 0, sentences: 0, dropped: 0, rejected: 0, failed: 0, nothingWritten: 0 };
    await fc.assert(fc.asyncProperty(inputArb, async (x) => {
      const { gold, dumps } = writeInput(x);
      const out = fresh('out');
      try {
        // No reject-rate limit: a run fails only when it writes nothing (checked below) or cannot go on.
        const s = await runPrepare({ gold, nbest: dumps, pipeline: 'default', out, workers: 0, quiet: true, maxRejectRate: 1 });
        seen.written++;
        seen.sentences += s.written;
        seen.dropped += s.candidatesDropped;
        seen.rejected += s.rejected;
      } catch (e) {
        expectTyped(e);
        if (e instanceof DataError && e.code === 'nothing-written' && existsSync(join(out, 'manifest.json'))) {
          // Status 1, but the output is complete and reconciled: every record listed in rejects.jsonl.
          seen.nothingWritten++;
          checkOutput(out);
          expect(readManifest(out).totals.written).toBe(0);
        } else seen.failed++;
        drop(gold, ...dumps, out);
        return;
      }
      checkOutput(out);
      expect(({} as Record<string, unknown>).polluted).toBeUndefined();
      drop(gold, ...dumps, out);
    }), runs(150, { timeout: 20_000 }));
    // The cases reach the interesting paths: sentences written, candidates dropped, records refused.
    expect(seen.written).toBeGreaterThan(seen.failed);
    for (const k of ['sentences', 'dropped', 'rejected'] as const) expect(seen[k], k).toBeGreaterThan(0);
  });
});

/** A good shard directory, a model trained on it, and a dump to re-rank. */
let shards: string;
let model: string;
let dump: string;
let gold: string;
let pipeline: string;
beforeAll(async () => {
  const trees = fc.sample(treeArb.filter((t) => leaves(t).length > 2), { seed: 3, numRuns: 40 });
  gold = fresh('gold.trees');
  writeFileSync(gold, trees.map((t) => layoutTree(t, true, false)).join('\n') + '\n');
  dump = fresh('dump.jsonl');
  writeFileSync(dump, trees.map((t, k) => JSON.stringify({ id: String(k + 1), candidates: [{ tree: flat(t), score: -1 }, { tree: writeNode(t), score: -2 }] })).join('\n') + '\n');
  const p = JSON.parse(readFileSync(fileURLToPath(new URL('../../pipelines/default.json', import.meta.url)), 'utf8'));
  p.stages.find((s: any) => s.stage === 'write-shards.v1').sentencesPerShard = 10;
  p.stages.find((s: any) => s.stage === 'hash-features.v2').names = 2;
  pipeline = fresh('pipeline.json');
  writeFileSync(pipeline, JSON.stringify(p));
  shards = fresh('shards');
  await runPrepare({ gold, nbest: [dump], pipeline, out: shards, workers: 0, quiet: true });
  model = fresh('model');
  await runTrain({ shards, out: model, cutoff: 0, epochs: 2, quiet: true });
});

const shardFiles = () => readdirSync(shards).filter((f) => f !== 'rejects.jsonl');
const modelFiles = () => readdirSync(model);
/** Copies of the good shard and model folders, with one file of one of them damaged. */
function damagedCopies(inModel: boolean, which: number, edits: Parameters<typeof damage>[1]): { s: string; m: string } {
  const s = fresh('shards');
  const m = fresh('model');
  cpSync(shards, s, { recursive: true });
  cpSync(model, m, { recursive: true });
  const files = inModel ? modelFiles() : shardFiles();
  const f = join(inModel ? m : s, files[which % files.length]);
  writeFileSync(f, damage(readFileSync(f), edits));
  return { s, m };
}
const noop = async () => {};
let failures = 0;

async function commandsOn(s: string, m: string): Promise<void> {
  const attempts: (() => Promise<unknown>)[] = [
    () => inspectShards({ dir: s, jsonl: true, names: true }, noop),
    () => runExport({ shards: s, format: 'svmlight' }, noop),
    () => {
      const out = fresh('m');
      return runTrain({ shards: s, out, cutoff: 0, epochs: 1, quiet: true }).finally(() => drop(out));
    },
    () => runEval({ shards: s, model: m, samples: 5 }),
    () => inspectModel({ dir: m, top: 3, jsonl: true }, noop),
    () => runRerank({ dump, model: m, workers: 0 }, noop, () => {}),
  ];
  for (const a of attempts) {
    try {
      await a();
    } catch (e) {
      expectTyped(e);
      failures++;
    }
  }
}

describe('fuzz: train, eval, export, inspect, rerank on damaged directories', () => {
  it('a shard or model file damaged (bytes, cut, manifest JSON): each command ends or fails typed', async () => {
    failures = 0;
    await fc.assert(fc.asyncProperty(fc.boolean(), fc.nat(), damageArb.filter((d) => d.length > 0), async (inModel, which, edits) => {
      const { s, m } = damagedCopies(inModel, which, edits);
      await commandsOn(s, m);
      drop(s, m);
    }), runs(120, { timeout: 30_000 }));
    // Damage was seen: some commands failed (typed), most of the 6 × 120 ran.
    expect(failures).toBeGreaterThan(10);
    expect(failures).toBeLessThan(6 * runs(120).numRuns);
  });
});

describe('fuzz: merge on damaged parts', () => {
  let parts: string[];
  let merged: string;
  beforeAll(async () => {
    parts = [];
    for (let I = 0; I < 2; I++) {
      const out = fresh(`part-${I}`);
      await runPrepare({ gold, nbest: [dump], pipeline, out, workers: 0, quiet: true, part: { index: I, of: 2 } });
      parts.push(out);
    }
    merged = fresh('merged');
    await runMerge({ parts, out: merged, quiet: true });
  });
  /** Every file of a folder, by name → bytes. */
  const contents = (d: string) => new Map(readdirSync(d).sort().map((f) => [f, readFileSync(join(d, f))]));

  it('a file of a part damaged (bytes, cut, JSON): merge fails typed, or writes exactly the undamaged merge', async () => {
    const reference = contents(merged);
    let refused = 0;
    await fc.assert(fc.asyncProperty(fc.nat({ max: 1 }), fc.nat(), damageArb.filter((d) => d.length > 0), async (which, pick, edits) => {
      const ps = parts.map((p) => {
        const c = fresh('part');
        cpSync(p, c, { recursive: true });
        return c;
      });
      const files = readdirSync(ps[which]).sort();
      const f = join(ps[which], files[pick % files.length]);
      writeFileSync(f, damage(readFileSync(f), edits));
      const out = fresh('merged');
      try {
        await runMerge({ parts: ps, out, quiet: true });
        // Merged in spite of the damage: then the damage touched nothing merge relies on, and the output is right.
        const got = contents(out);
        expect([...got.keys()]).toEqual([...reference.keys()]);
        for (const [name, bytes] of reference) expect(got.get(name)!.equals(bytes), `${files[pick % files.length]} damaged: ${name} differs`).toBe(true);
      } catch (e) {
        expectTyped(e);
        refused++;
      }
      drop(out, ...ps);
    }), runs(150, { timeout: 30_000 }));
    expect(refused).toBeGreaterThan(10);
  });
});

describe('fuzz: the same through the CLI, with a 512 MB heap', () => {
  const cli = (...args: string[]) => spawnSync(process.execPath, ['--max-old-space-size=512', BIN, ...args], { encoding: 'utf8' });
  it('prepare on random inputs, and the other commands on damaged directories: status 0 or 1, never an internal error', async () => {
    const cases = fc.sample(fc.tuple(inputArb, fc.boolean(), fc.nat(), damageArb.filter((d) => d.length > 0)), { seed: 11, numRuns: runs(16).numRuns });
    for (const [x, inModel, which, edits] of cases) {
      const { gold, dumps } = writeInput(x);
      const out = fresh('out');
      const r = cli('prepare', '--gold', gold, '--nbest', ...dumps, '--pipeline', 'default', '-o', out, '--quiet', '--workers', '1');
      expect([0, 1], r.stderr).toContain(r.status);
      expect(r.stderr).not.toContain('internal error');
      if (r.status === 0) checkOutput(out);
      const { s, m } = damagedCopies(inModel, which, edits);
      for (const args of [['inspect', s, '--jsonl'], ['export', s, '--format', 'svmlight'], ['eval', s, '--model', m, '--samples', '5']]) {
        const q = cli(...args);
        expect([0, 1], `${args[0]}: ${q.stderr}`).toContain(q.status);
        expect(q.stderr).not.toContain('internal error');
      }
      expect(existsSync(join(m, 'model.json')) || inModel).toBe(true);
      drop(gold, ...dumps, out, s, m);
    }
  }, 240_000 * SCALE);
});
