/**
 * The findings of the hostile-input campaign of issue 11, one test each, run
 * through `prepare` (in-process) and, where the exit status is the finding,
 * through the built CLI. Some were fixed before these tests were written;
 * they stay as regression tests (marked "regression"). Inputs are small
 * hand-made hut logs; expected figures are worked by hand from the PARSEVAL
 * definition (Black et al. 1991: corpus P/R/F1 from summed bracket counts).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { UsageError } from '../src/core/errors.js';
import { runEval } from '../src/eval/run-eval.js';
import { readManifest, readShardDir } from '../src/io/read-shards.js';
import { runPrepare, type PrepareOptions } from '../src/prepare/run-prepare.js';
import type { ShardSentence } from '../src/records.js';
import { runTrain } from '../src/train/run-train.js';

const BIN = fileURLToPath(new URL('../bin/sheaf.js', import.meta.url));
const sheaf = (...args: string[]) => spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8' });
const dir = mkdtempSync(join(tmpdir(), 'sheaf-findings-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let n = 0;
const path = (name: string) => join(dir, `${n++}-${name}`);
const write = (name: string, content: string | Buffer) => {
  const p = path(name);
  writeFileSync(p, content);
  return p;
};

/** Hut-log sentences: id k (1-based) is tree k of `goldText`. */
const WORDS = ['warden', 'porter', 'cook', 'guide', 'apprentice'];
const OBJECTS = ['crates', 'ropes', 'stoves', 'ledgers', 'lamps', 'sacks', 'wicks'];
const tree = (k: number) => `(S (NP (DT the) (NN ${WORDS[k % 5]})) (VP (VBD logged) (NP (CD ${k}) (NNS ${OBJECTS[k % 7]}))) (. .))`;
const goldText = (count: number) => Array.from({ length: count }, (_, k) => `( ${tree(k + 1)} )`).join('\n') + '\n';
/** A second candidate: the object NP flattened into the VP (3 brackets of 4 right). */
const flat = (k: number) => `(S (NP (DT the) (NN ${WORDS[k % 5]})) (VP (VBD logged) (CD ${k}) (NNS ${OBJECTS[k % 7]})) (. .))`;
const record = (k: number, extra: Record<string, unknown> = {}) => ({ id: String(k), candidates: [{ tree: tree(k), score: -1 }, { tree: flat(k), score: -2 }], ...extra });
const jsonl = (recs: unknown[]) => recs.map((r) => JSON.stringify(r)).join('\n') + '\n';

const prepare = (o: Partial<PrepareOptions> & { gold: string; nbest: string[] }) => runPrepare({ pipeline: 'default', out: path('out'), workers: 0, quiet: true, ...o });
const rejectsOf = (out: string) => readFileSync(join(out, 'rejects.jsonl'), 'utf8').split('\n').filter(Boolean).map((l) => JSON.parse(l));
async function sentences(out: string): Promise<ShardSentence[]> {
  const xs: ShardSentence[] = [];
  for await (const s of readShardDir(out)) xs.push(s);
  return xs;
}

describe('findings: crashes', () => {
  it('regression: a `fold` beyond the safe integers is a bad-field reject, first record or record 21 of 40', async () => {
    const gold = write('gold.trees', goldText(40));
    for (const bad of ['1e300', '9007199254740993']) {
      for (const at of [1, 21]) {
        const lines = Array.from({ length: 40 }, (_, k) => JSON.stringify(record(k + 1)));
        lines[at - 1] = lines[at - 1].replace('{"id"', `{"fold": ${bad}, "id"`);
        const s = await prepare({ gold, nbest: [write('d.jsonl', lines.join('\n') + '\n')] });
        expect(s).toMatchObject({ read: 40, written: 39, rejected: 1 });
        expect(rejectsOf(s.out)).toEqual([expect.objectContaining({ line: at, id: String(at), code: 'bad-field' })]);
        expect(existsSync(join(s.out, 'manifest.json'))).toBe(true);
      }
    }
  });

  it('regression: a truncated .gz of a JSON-array dump is one `truncated` reject, and what came before is kept', async () => {
    const gold = write('gold.trees', goldText(200));
    const gz = gzipSync(JSON.stringify(Array.from({ length: 200 }, (_, k) => record(k + 1)), null, 1));
    const s = await prepare({ gold, nbest: [write('d.json.gz', gz.subarray(0, Math.floor(gz.length * 0.6)))] });
    const rejects = rejectsOf(s.out);
    expect(rejects).toHaveLength(1);
    expect(rejects[0]).toMatchObject({ code: 'truncated' });
    expect(rejects[0].reason).toMatch(/breaks after element \d+/);
    expect(s.written).toBeGreaterThan(50);
    expect(s.read).toBe(s.written + s.rejected);
  });

  it('the same dump named twice is refused before anything is read or written', async () => {
    const gold = write('gold.trees', goldText(5));
    const dump = write('d.jsonl', jsonl([1, 2, 3, 4, 5].map((k) => record(k))));
    const out = path('out');
    await expect(prepare({ gold, nbest: [dump, dump], out })).rejects.toThrow(/named twice after `--nbest`/);
    await expect(prepare({ gold, nbest: [dump, `${dir}/./${dump.slice(dir.length + 1)}`], out })).rejects.toThrow(/are the same file/);
    expect(existsSync(out) ? readdirSync(out) : []).toEqual([]);
    const r = sheaf('prepare', '--gold', gold, '--nbest', dump, dump, '--pipeline', 'default', '-o', out, '--quiet');
    expect(r.status).toBe(1);
    expect(r.stderr).not.toContain('Digest already called');
  });
});

describe('findings: one bad gold tree costs one sentence', () => {
  it('an extra `)` in tree 10 of 1,200 costs sentence 10 only; ids by position come with their line', async () => {
    const trees = goldText(1200).split('\n');
    trees[9] = trees[9].replace('(DT the)', '(DT the))');
    const gold = write('gold.trees', trees.join('\n'));
    const s = await prepare({ gold, nbest: [write('d.jsonl', jsonl(Array.from({ length: 1200 }, (_, k) => record(k + 1))))] });
    expect(s).toMatchObject({ read: 1200, written: 1199, rejected: 1, goldRejected: 1 });
    const rejects = rejectsOf(s.out);
    expect(rejects.map((r) => [r.id, r.code])).toEqual([['10', 'unbalanced'], ['10', 'no-gold']]);
    expect(rejects[0].line).toBe(10);
    expect(rejects[1].reason).toContain('ids of');
    expect(rejects[1].reason).toContain('are tree positions');
  });
});

describe('findings: a candidate whose words differ is dropped, not the sentence', () => {
  const gold = () => write('gold.trees', goldText(3));
  // Sentence 1: rank 0 mis-tokenised (`The` for `the`), ranks 1 and 2 fine; sentence 2: rank 1 has another word.
  const dump = () => write('d.jsonl', jsonl([
    { id: '1', candidates: [{ tree: tree(1).replace('(DT the)', '(DT The)'), score: -1 }, { tree: flat(1), score: -2 }, { tree: tree(1), score: -3 }] },
    { id: '2', candidates: [{ tree: tree(2), score: -1 }, { tree: tree(2).replace('(VBD logged)', '(VBD logs)'), score: -2 }] },
    { id: '3', candidates: [{ tree: flat(3), score: -1 }] },
  ]));

  it('keeps the list with its other candidates and their base ranks; the manifest reconciles read = kept + dropped', async () => {
    const s = await prepare({ gold: gold(), nbest: [dump()] });
    expect(s).toMatchObject({ read: 3, written: 3, rejected: 0, candidatesRead: 6, candidates: 4, candidatesDropped: 2 });
    const m = readManifest(s.out);
    expect(m.totals.candidatesRead).toBe(m.totals.candidates + m.totals.candidatesDropped);
    expect(m.rejects.count).toBe(2);
    const xs = await sentences(s.out);
    expect(xs.map((x) => x.cands.map((c) => c.rank))).toEqual([[1, 2], [0], [0]]);
    const rejects = rejectsOf(s.out);
    expect(rejects.map((r) => [r.id, r.candidate, r.code])).toEqual([['1', 0, 'yield-mismatch'], ['2', 1, 'yield-mismatch']]);
    expect(rejects[0].reason).toContain('gold `the`, candidate `The`');
    expect(rejects[0].reason).toContain('dropped, the list is kept');
  });

  it('regression: with --strict the first such candidate stops the run', async () => {
    await expect(prepare({ gold: gold(), nbest: [dump()], strict: true })).rejects.toThrow(/candidate 0: .*stopped by --strict/);
  });

  it('eval: when rank 0 is dropped the base 1-best is a miss (0 matched), never rank 1 in its place', async () => {
    const s = await prepare({ gold: gold(), nbest: [dump()] });
    const model = path('model');
    await runTrain({ shards: s.out, out: model, cutoff: 0, epochs: 1, quiet: true });
    const e = await runEval({ shards: s.out, model, samples: 10 });
    // By hand: each gold tree has 4 brackets (S, NP, VP, NP). Base picks: sentence 1 none (rank 0 dropped:
    // 0 matched, 0 test), sentence 2 rank 0 (4 of 4), sentence 3 rank 0 = flat (3 of 3: S, NP, VP).
    // matched 7, test 7, gold 12: P 100, R 58.33, F1 2·7/19 = 73.68.
    expect(e.base.precision).toBeCloseTo(100, 10);
    expect(e.base.recall).toBeCloseTo((100 * 7) / 12, 10);
    expect(e.base.f1).toBeCloseTo((200 * 7) / 19, 10);
    expect(e.base.sentences).toBe(3);
  });
});

describe('findings: a candidate whose tree does not parse is dropped, not the sentence', () => {
  const gold = () => write('gold.trees', goldText(4));
  // Sentence 1: rank 1 has a bracket missing; sentence 2: rank 0 a stray `)`, rank 2 the wrong words;
  // sentence 3: no candidate parses; sentence 4: one does not parse, the other has the wrong words.
  const dump = () => write('d.jsonl', jsonl([
    { id: '1', candidates: [{ tree: tree(1), score: -1 }, { tree: tree(1).slice(0, -1), score: -2 }, { tree: flat(1), score: -3 }] },
    { id: '2', candidates: [{ tree: tree(2) + ')', score: -1 }, { tree: flat(2), score: -2 }, { tree: tree(2).replace('(VBD logged)', '(VBD logs)'), score: -3 }] },
    { id: '3', candidates: [{ tree: '(S (NP', score: -1 }, { tree: '()', score: -2 }] },
    { id: '4', candidates: [{ tree: '(S (NP', score: -1 }, { tree: tree(4).replace('(VBD logged)', '(VBD logs)'), score: -2 }] },
  ]));

  it('keeps the list with its other candidates and their base ranks; one rejects line per dropped candidate, in rank order', async () => {
    const s = await prepare({ gold: gold(), nbest: [dump()] });
    expect(s).toMatchObject({ read: 4, written: 2, rejected: 2, candidatesRead: 6, candidates: 3, candidatesDropped: 3 });
    const m = readManifest(s.out);
    expect(m.totals.candidatesRead).toBe(m.totals.candidates + m.totals.candidatesDropped);
    const xs = await sentences(s.out);
    expect(xs.map((x) => [x.id, x.cands.map((c) => c.rank)])).toEqual([['1', [0, 2]], ['2', [1]]]);
    const rejects = rejectsOf(s.out);
    expect(rejects.map((r) => [r.id, r.candidate ?? null, r.code])).toEqual([
      ['1', 1, 'unbalanced'],
      ['2', 0, 'unexpected-close'],
      ['2', 2, 'yield-mismatch'],
      ['3', null, 'unbalanced'],
      ['4', null, 'yield-mismatch'],
    ]);
    expect(rejects[0].reason).toMatch(/^candidate 1 does not parse .*; dropped, the list is kept/);
    expect(rejects[2].reason).toMatch(/^candidate 2: /);
    expect(rejects[3].reason).toMatch(/no candidate tree of the 2 parses; the first: candidate 0 does not parse/);
    expect(rejects[4].reason).toMatch(/no candidate of the 2 is usable: 1 do not parse, the words of 1 differ from the gold tree's/);
  });

  it('with --strict the first such candidate stops the run', async () => {
    await expect(prepare({ gold: gold(), nbest: [dump()], strict: true })).rejects.toThrow(/candidate 1 does not parse.*stopped by --strict/);
  });
});

describe('findings: silent damage', () => {
  it('a score beyond the float32 range is refused; scores near its edge give finite features', async () => {
    const gold = write('gold.trees', goldText(3));
    const s = await prepare({ gold, nbest: [write('d.jsonl', jsonl([
      record(1, { candidates: [{ tree: tree(1), score: -1e300 }] }),
      record(2, { candidates: [{ tree: tree(2), score: 3e38 }, { tree: flat(2), score: -3e38 }] }),
      record(3),
    ]))] });
    expect(s).toMatchObject({ written: 2, rejected: 1 });
    expect(rejectsOf(s.out)[0]).toMatchObject({ id: '1', code: 'bad-field' });
    expect(rejectsOf(s.out)[0].reason).toContain('float32 range');
    const r = sheaf('inspect', s.out, '--jsonl');
    expect(r.status).toBe(0);
    for (const line of r.stdout.trim().split('\n')) {
      for (const c of JSON.parse(line).cands) for (const [, v] of c.features) expect(Number.isFinite(v)).toBe(true);
    }
  });

  it('a JSON Lines dump whose first line starts with `[` loses that line only', async () => {
    const gold = write('gold.trees', goldText(4));
    const s = await prepare({ gold, nbest: [write('d.jsonl', '[1, 2]\n' + jsonl([2, 3, 4].map((k) => record(k))))] });
    expect(s).toMatchObject({ read: 4, written: 3, rejected: 1 });
    expect(rejectsOf(s.out)[0]).toMatchObject({ line: 1, code: 'bad-json' });
    // A broken first line, then records.
    const t = await prepare({ gold, nbest: [write('d.jsonl', '[{"id": "1", \n' + jsonl([2, 3, 4].map((k) => record(k))))] });
    expect(t).toMatchObject({ written: 3, rejected: 1 });
    // Real arrays are still arrays: one element per line, pretty-printed, on one line.
    for (const text of [
      '[' + [1, 2, 3, 4].map((k) => JSON.stringify(record(k))).join(',\n') + ']\n',
      JSON.stringify([1, 2, 3, 4].map((k) => record(k)), null, 2),
      '[\n' + JSON.stringify(record(1)) + '\n]\n',
      JSON.stringify([1, 2, 3, 4].map((k) => record(k))) + '\n',
    ]) {
      const a = await prepare({ gold, nbest: [write('d.json', text)] });
      expect(a.rejected).toBe(0);
      expect(a.written).toBe(text.startsWith('[\n{') ? 1 : 4);
    }
  });

  it('ids `\\ud800` and `\\udbff` do not both become U+FFFD: lone surrogates are refused', async () => {
    const gold = write('gold.jsonl', '{"id": "\\ud800", "tree": "(S (NN rope))"}\n{"id": "\\udbff", "tree": "(S (NN lamp))"}\n{"id": "ok", "tree": "(S (NN lamp))"}\n');
    const out = path('out');
    // Nothing is written: status 1, the output complete with every record in its rejects log.
    await expect(prepare({ out, gold, nbest: [write('d.jsonl', '{"id": "\\ud800", "candidates": []}\n{"id": "\\udbff", "candidates": []}\n{"id": "ok", "candidates": [{"tree": "(S (NN la\\udc00mp))", "score": 0}]}\n')] }))
      .rejects.toThrow(/wrote no sentence: all 3 n-best lists read were rejected/);
    expect(readManifest(out).totals).toMatchObject({ read: 3, written: 0, rejected: 3, goldRejected: 2 });
    const rejects = rejectsOf(out);
    expect(rejects.map((r) => r.code)).toEqual(['bad-field', 'bad-field', 'bad-field', 'bad-field', 'bad-field']);
    expect(rejects.filter((r) => r.reason.includes('lone surrogate'))).toHaveLength(5);
  });

  it('regression: pipeline option keys named like JavaScript built-ins are unknown options', async () => {
    const p = JSON.parse(readFileSync(fileURLToPath(new URL('../pipelines/default.json', import.meta.url)), 'utf8'));
    for (const key of ['constructor', 'toString', '__proto__', 'hasOwnProperty', 'valueOf']) {
      const q = structuredClone(p);
      // JSON.parse makes `__proto__` an own key; so does writing it as text.
      const text = JSON.stringify(q).replace('"stage":"read-nbest.v1"', `"stage":"read-nbest.v1","${key}":1`);
      const file = write('pipeline.json', text);
      await expect(prepare({ gold: write('g.trees', goldText(1)), nbest: [write('d.jsonl', jsonl([record(1)]))], pipeline: file })).rejects.toThrow(new RegExp(`unknown .*\`${key.replace(/_/g, '_')}\``));
    }
  });

  it('regression: a BOM at the start of a JSON Lines dump, a gold JSON Lines file and a pipeline file is skipped', async () => {
    const BOM = '\ufeff';
    const gold = write('gold.jsonl', BOM + '{"id": "1", "tree": "' + tree(1) + '"}\n');
    const pipeline = write('pipeline.json', BOM + readFileSync(fileURLToPath(new URL('../pipelines/default.json', import.meta.url)), 'utf8'));
    const s = await prepare({ gold, pipeline, nbest: [write('d.jsonl', BOM + jsonl([record(1)]))] });
    expect(s).toMatchObject({ read: 1, written: 1, rejected: 0, goldRejected: 0 });
  });

  it('regression: a reject inside a JSON array names its element', async () => {
    const gold = write('gold.trees', goldText(3));
    const s = await prepare({ gold, nbest: [write('d.json', JSON.stringify([record(1), { id: '2', candidates: 7 }, record(3)]))] });
    expect(rejectsOf(s.out)).toEqual([expect.objectContaining({ id: '2', line: null, code: 'bad-field' })]);
    expect(rejectsOf(s.out)[0].reason).toContain('(array element 1)');
  });

  it('a fold plan whose `model` has empty names is refused up front, not every sentence as a leak', async () => {
    const plan = path('plan');
    mkdirSync(plan);
    writeFileSync(join(plan, 'folds.json'), JSON.stringify({ format: 'sheaf-folds/1', k: 1, folds: [{ fold: 0, ids: ['1'], model: { parser: '', fingerprint: '' } }] }));
    await expect(prepare({ gold: write('g.trees', goldText(1)), nbest: [write('d.jsonl', jsonl([record(1, { fold: 0 })]))], plan })).rejects.toThrow(/expected `model` to be null or .*non-empty/);
  });
});

describe('findings: a damaged manifest.json in the output', () => {
  // The whole CLI for two of them (exit statuses), in-process for the others.
  const damages: [string, boolean, (m: Record<string, unknown>) => unknown][] = [
    ['not JSON (regression)', false, () => '{'],
    ['no pipeline', true, (m) => ({ ...m, pipeline: undefined })],
    ['no inputs', false, (m) => ({ ...m, inputs: null })],
    ['inputs.nbest not a list', false, (m) => ({ ...m, inputs: { ...(m.inputs as object), nbest: 3 } })],
    ['pipeline files outside the folder', true, (m) => ({ ...m, pipeline: { ...(m.pipeline as object), files: '../../etc/passwd' } })],
    ['names file outside the folder', false, (m) => ({ ...m, names: { file: '/etc/passwd' } })],
  ];
  it.each(damages)('%s: a re-run makes the output again; train, inspect, export say what is wrong (status 1)', async (_, cli, damage) => {
    const gold = write('gold.trees', goldText(4));
    const nbest = write('d.jsonl', jsonl([1, 2, 3, 4].map((k) => record(k))));
    const s = await prepare({ gold, nbest: [nbest] });
    const good = readFileSync(join(s.out, 'manifest.json'), 'utf8');
    const m = JSON.parse(good);
    const d = damage(m);
    writeFileSync(join(s.out, 'manifest.json'), typeof d === 'string' ? d : JSON.stringify(d));
    expect(() => readManifest(s.out)).toThrow(UsageError);
    await expect(runTrain({ shards: s.out, out: path('m'), quiet: true })).rejects.toThrow(/manifest\.json/);
    if (cli) {
      for (const args of [['train', s.out, '-o', path('m')], ['inspect', s.out], ['export', s.out, '--format', 'svmlight']]) {
        const r = sheaf(...args);
        expect(r.status, args[0]).toBe(1);
        expect(r.stderr).toContain('manifest.json');
      }
      const r = sheaf('prepare', '--gold', gold, '--nbest', nbest, '--pipeline', 'default', '-o', s.out, '--quiet', '--workers', '0');
      expect(r.status, r.stderr).toBe(0);
    } else await prepare({ gold, nbest: [nbest], out: s.out });
    expect(readFileSync(join(s.out, 'manifest.json'), 'utf8').replace(/"seconds".*\n/, '')).toBe(good.replace(/"seconds".*\n/, ''));
  });
});
