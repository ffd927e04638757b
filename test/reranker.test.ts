/**
 * train → eval → rerank → export → inspect on small jackknifed data (240 demo
 * trees, 4 folds, 8-best; 30 dev sentences). Outside references: the paired
 * bootstrap's p-value against exact enumeration of every resample on a tiny
 * case (its definition, Berg-Kirkpatrick et al. 2012); the export against the
 * svmlight format's definition (and scikit-learn's reader in CI).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gunzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sentenceF1 } from '../src/core/f1-table.js';
import { pairedBootstrap } from '../src/eval/bootstrap.js';
import { runEval } from '../src/eval/run-eval.js';
import { runExport } from '../src/export/run-export.js';
import { runSplit } from '../src/folds/run-split.js';
import { sentenceView } from '../src/inspect/inspect-shards.js';
import { inspectModel } from '../src/inspect/inspect-model.js';
import { loadModel } from '../src/io/model-dir.js';
import { readShardDir } from '../src/io/read-shards.js';
import { dumpName, runJackknife } from '../src/jackknife/run-jackknife.js';
import { runPrepare } from '../src/prepare/run-prepare.js';
import { runRerank } from '../src/rerank/run-rerank.js';
import { pick, rankingList, scores } from '../src/train/ranking.js';
import { runTrain } from '../src/train/run-train.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-rr-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string) => join(dir, name);
let devDump: string;

beforeAll(async () => {
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/);
  writeFileSync(at('train.trees'), trees.slice(0, 240).join('\n') + '\n');
  writeFileSync(at('dev.trees'), trees.slice(240, 270).join('\n') + '\n');
  const split = await runSplit({ gold: at('train.trees'), folds: 4, out: at('plan'), quiet: true });
  await runJackknife({ plan: at('plan'), out: at('nbest'), nbest: 8, workers: 0, parse: [at('dev.trees')], quiet: true });
  devDump = join(at('nbest'), dumpName(at('dev.trees')));
  await runPrepare({ gold: at('train.trees'), nbest: split.perFold.map((_, k) => join(at('nbest'), `fold-${k}.jsonl.gz`)), plan: at('plan'), pipeline: 'demo', out: at('train-shards'), workers: 0, quiet: true });
  await runPrepare({ gold: at('dev.trees'), nbest: [devDump], pipeline: 'demo', out: at('dev-shards'), workers: 0, quiet: true });
}, 120_000);

describe('train', () => {
  it('trains the averaged perceptron, keeps the best dev epoch, and gives the same bytes from the same shards', async () => {
    const a = await runTrain({ shards: at('train-shards'), dev: at('dev-shards'), out: at('model-a'), epochs: 4, cutoff: 1, quiet: true });
    const b = await runTrain({ shards: at('train-shards'), dev: at('dev-shards'), out: at('model-b'), epochs: 4, cutoff: 1, quiet: true });
    expect(a.epochs).toHaveLength(4);
    const best = Math.max(...a.epochs.map((e) => e.devF1!));
    expect(a.epochs[a.bestEpoch - 1].devF1).toBe(best);
    // Byte for byte (Buffer#equals: a deep comparison of 4 MB is slow).
    for (const f of ['weights.msgpack', 'model.json', 'pipeline-files.msgpack']) expect(readFileSync(join(at('model-b'), f)).equals(readFileSync(join(at('model-a'), f))), f).toBe(true);
    const m = loadModel(at('model-a'));
    expect(m.info).toMatchObject({ method: 'perceptron', bestEpoch: a.bestEpoch, settings: { epochs: 4, cutoff: 1 } });
    expect(m.weights.length).toBe(2 ** 20);
    expect(Object.keys(m.files)).toEqual(['../demo-corpus/lexicon.tsv']);
    // Another seed visits lists in another order: other weights.
    await runTrain({ shards: at('train-shards'), dev: at('dev-shards'), out: at('model-c'), epochs: 4, cutoff: 1, seed: 5, quiet: true });
    expect(readFileSync(join(at('model-c'), 'weights.msgpack')).equals(readFileSync(join(at('model-a'), 'weights.msgpack')))).toBe(false);
  });

  it('trains the log-linear model with L-BFGS, a dev F1 per iteration', async () => {
    const s = await runTrain({ shards: at('train-shards'), dev: at('dev-shards'), out: at('model-ll'), method: 'loglinear', epochs: 15, cutoff: 1, l2: 0.5, quiet: true });
    expect(s.epochs.length).toBeGreaterThan(3);
    expect(s.epochs.every((e) => e.devF1 !== null && e.objective !== null)).toBe(true);
    // The objective falls from iteration to iteration.
    for (let k = 1; k < s.epochs.length; k++) expect(s.epochs[k].objective!).toBeLessThanOrEqual(s.epochs[k - 1].objective!);
  });

  it('refuses dev shards prepared with another pipeline, and options out of range', async () => {
    await runPrepare({ gold: at('dev.trees'), nbest: [devDump], pipeline: 'default', out: at('dev-default'), workers: 0, quiet: true });
    await expect(runTrain({ shards: at('train-shards'), dev: at('dev-default'), out: at('model-x'), quiet: true })).rejects.toThrow(/prepared with another pipeline/);
    await expect(runTrain({ shards: at('train-shards'), out: at('model-x'), epochs: 0, quiet: true })).rejects.toThrow(/expected `--epochs` to be an integer from 1 to 100000, got `0`/);
    await expect(runTrain({ shards: at('train-shards'), out: at('model-x'), cutoff: 1e8, quiet: true })).rejects.toThrow(/no feature varies in at least 100000000 sentences/);
  });
});

describe('eval', () => {
  it('reports base, oracle and re-ranked rows, ≤ 40 words, a bootstrap and the gap recovered', async () => {
    await runTrain({ shards: at('train-shards'), dev: at('dev-shards'), out: at('model-a'), epochs: 4, cutoff: 1, quiet: true });
    const e = await runEval({ shards: at('dev-shards'), model: at('model-a'), samples: 500, seed: 3 });
    for (const r of [e.base, e.oracle, e.reranked]) expect(Object.keys(r).sort()).toEqual(['f1', 'precision', 'recall', 'sentences']);
    expect(e.oracle.f1).toBeGreaterThanOrEqual(e.base.f1);
    expect(e.oracle.f1).toBeGreaterThanOrEqual(e.reranked.f1);
    expect(e.bootstrap).toMatchObject({ samples: 500, seed: 3 });
    expect(e.le40.base.sentences).toBe(30);
    expect(e.gapRecovered).toBeCloseTo((e.reranked.f1 - e.base.f1) / (e.oracle.f1 - e.base.f1), 12);
    // The re-ranked row is what the model picks on each list (recomputed here).
    const m = loadModel(at('model-a'));
    let matched = 0;
    let test = 0;
    for await (const s of readShardDir(at('dev-shards'))) {
      const l = rankingList(s);
      const c = s.cands[pick(l, scores(l, m.weights))];
      matched += c.matched;
      test += c.test;
    }
    expect(e.reranked.precision).toBeCloseTo((100 * matched) / test, 10);
  });

  it('computes the paired bootstrap p-value as its definition on every resample of a tiny case', () => {
    // Three sentences; system a gains on two, loses on one. Resamples of 3 with replacement: 27, equally likely.
    const c = { gold: Float64Array.of(10, 10, 10), matchedA: Float64Array.of(9, 8, 5), testA: Float64Array.of(10, 10, 10), matchedB: Float64Array.of(6, 6, 7), testB: Float64Array.of(10, 10, 10) };
    const f = (m: number, g: number, t: number) => (200 * m) / (g + t);
    const delta = f(22, 30, 30) - f(19, 30, 30);
    let exceed = 0;
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) for (let k = 0; k < 3; k++) {
      const pick3 = (a: Float64Array) => a[i] + a[j] + a[k];
      if (f(pick3(c.matchedA), pick3(c.gold), pick3(c.testA)) - f(pick3(c.matchedB), pick3(c.gold), pick3(c.testB)) > 2 * delta) exceed++;
    }
    const exact = exceed / 27;
    const r = pairedBootstrap(c, 200000, 11);
    expect(r.delta).toBeCloseTo(delta, 12);
    expect(r.p).toBeCloseTo(exact, 2);
    // No gain: nothing to test, p = 1.
    expect(pairedBootstrap({ ...c, matchedA: c.matchedB, testA: c.testB }, 100, 1).p).toBe(1);
  });
});

describe('rerank', () => {
  it('writes exactly one line per input record, picks as eval does, leaves out candidates that do not parse, and writes empty lines for records it cannot re-rank', async () => {
    const lines = gunzipSync(readFileSync(devDump)).toString('utf8').trim().split('\n');
    const recs = lines.map((l) => JSON.parse(l));
    const broken = { ...recs[1], candidates: [recs[1].candidates[0], { tree: '(S (NP (NN rope)', score: -1 }] };
    const firstBroken = { ...recs[2], id: 'first-broken', candidates: [{ tree: '(S (NP (NN rope)', score: -1 }, recs[2].candidates[1], recs[2].candidates[0]] };
    const noneParse = { ...recs[3], id: 'none-parse', candidates: [{ tree: '(S (NP', score: -1 }, { tree: '((', score: -2 }] };
    const mixed = [lines[0], '{"id": "x", "candidates": [', JSON.stringify(broken), JSON.stringify({ ...recs[2], candidates: [] }), ...lines.slice(3), JSON.stringify(firstBroken), JSON.stringify(noneParse)];
    const f = at('mixed.jsonl');
    writeFileSync(f, mixed.join('\n') + '\n');
    const out: string[] = [];
    const warnings: string[] = [];
    const s = await runRerank({ dump: f, model: at('model-a'), jsonl: true, workers: 2 }, async (l) => { out.push(l); }, (w) => warnings.push(w));
    expect(out).toHaveLength(mixed.length);
    expect(s).toMatchObject({ read: mixed.length, reranked: mixed.length - 3, fellBack: 0, empty: 3, candidatesSkipped: 2 });
    const rows = out.map((l) => JSON.parse(l));
    expect(rows[1]).toMatchObject({ id: null, tree: null });
    // The one candidate that parses is the choice; the other is named.
    expect(rows[2]).toMatchObject({ id: broken.id, rank: 0, tree: broken.candidates[0].tree, skipped: [1] });
    expect(typeof rows[2].score).toBe('number');
    expect(rows[3]).toMatchObject({ rank: null, tree: null });
    expect(warnings.join('\n')).toMatch(/mixed\.jsonl:2: .*wrote an empty line/);
    expect(warnings.join('\n')).toMatch(/mixed\.jsonl:3 \(id `[^`]+`\): candidate 1 left out \(candidate 1 does not parse/);
    // Rank 0 does not parse: the choice is among ranks 1 and 2, and keeps the base numbering.
    const fb = rows[rows.length - 2];
    expect(fb.id).toBe('first-broken');
    expect(fb.skipped).toEqual([0]);
    expect([1, 2]).toContain(fb.rank);
    expect(fb.tree).toBe(firstBroken.candidates[fb.rank].tree);
    expect(rows[rows.length - 1]).toMatchObject({ id: 'none-parse', rank: null, score: null, tree: null });
    expect(rows[rows.length - 1].why).toMatch(/no candidate tree of the 2 parses/);
    // On well-formed lists the choice is eval's.
    const m = loadModel(at('model-a'));
    const chosen = new Map<string, number>();
    for await (const sent of readShardDir(at('dev-shards'))) {
      const l = rankingList(sent);
      chosen.set(sent.id, sent.cands[pick(l, scores(l, m.weights))].rank);
    }
    for (const r of rows.slice(4, -2)) expect(r.rank, r.id).toBe(chosen.get(r.id));
    // Plain output: one bracketed tree per line.
    const plain: string[] = [];
    await runRerank({ dump: devDump, model: at('model-a'), workers: 0 }, async (l) => { plain.push(l); }, () => {});
    expect(plain).toHaveLength(lines.length);
    expect(plain[4]).toBe(recs[4].candidates[chosen.get(recs[4].id)!].tree);
  });
});

describe('export and inspect', () => {
  it('exports one svmlight line per candidate: F1 target, qid, 1-based ascending indices, absolute values, id and rank', async () => {
    const out: string[] = [];
    const r = await runExport({ shards: at('dev-shards'), format: 'svmlight' }, async (l) => { out.push(l); });
    const sentences = [];
    for await (const s of readShardDir(at('dev-shards'))) sentences.push(s);
    expect(r.lines).toBe(sentences.reduce((a, s) => a + s.cands.length, 0));
    let k = 0;
    sentences.forEach((s, q) => {
      const view = sentenceView(s) as { cands: { features: [number, number][] }[] };
      s.cands.forEach((c, j) => {
        const [body, comment] = out[k++].split(' # ');
        const [target, qid, ...pairs] = body.split(' ');
        expect(Number(target)).toBeCloseTo(sentenceF1(s.gold, c), 12);
        expect(qid).toBe(`qid:${q + 1}`);
        expect(comment).toBe(`${s.id} ${c.rank}`);
        const feats = pairs.map((p) => p.split(':').map(Number));
        expect(feats).toEqual(view.cands[j].features.map(([i, v]) => [i + 1, v]));
      });
    });
    await expect(runExport({ shards: at('dev-shards'), format: 'csv' }, async () => {})).rejects.toThrow(/expected `--format` to be `svmlight`/);
  });

  it('shows a model\'s highest and lowest weights', async () => {
    const lines: string[] = [];
    await inspectModel({ dir: at('model-a'), top: 5, jsonl: true }, (l) => { lines.push(l); });
    const rows = lines.slice(1).map((l) => JSON.parse(l));
    expect(rows.filter((r) => r.side === 'highest')).toHaveLength(5);
    const hi = rows.filter((r) => r.side === 'highest').map((r) => r.weight);
    expect([...hi].sort((a, b) => b - a)).toEqual(hi);
    expect(Math.min(...hi)).toBeGreaterThanOrEqual(Math.max(...rows.filter((r) => r.side === 'lowest').map((r) => r.weight)));
  });
});
