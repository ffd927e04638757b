/**
 * `sheaf report` on a hand-made shard (4 sentences plus one without
 * candidates, bracket counts and a tie worked by hand) and on small jackknifed data
 * (150 demo trees, 3 folds, 10-best; 30 dev sentences) with a trained model.
 * Outside references: the PARSEVAL definition (Black et al. 1991) for the
 * hand-worked counts and corpus F1 from summed counts (common practice); the
 * oracle-at-depth definition (the oracle restricted to the first k base
 * ranks, ties to the lower rank) written out below a second time, by brute
 * force over `inspect`'s reading of the shards; eval's own figures
 * (`runEval`, what `sheaf eval --json` prints) for every F1 on the page.
 */
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../src/cli.js';
import { sentenceF1 } from '../src/core/f1-table.js';
import { runEval, type EvalSummary } from '../src/eval/run-eval.js';
import { runSplit } from '../src/folds/run-split.js';
import { readShardDir } from '../src/io/read-shards.js';
import { dumpName, runJackknife } from '../src/jackknife/run-jackknife.js';
import { runPrepare } from '../src/prepare/run-prepare.js';
import { countMarks, renderSvg } from '../src/report/charts.js';
import { escapeHtml } from '../src/report/render-page.js';
import { reportData, shortLabels } from '../src/report/report-data.js';
import { drawCharts, runReport } from '../src/report/run-report.js';
import { runTrain } from '../src/train/run-train.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-report-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (name: string) => join(dir, name);

const HOSTILE_ID = '<img src=x onerror="alert(1)">&amp;\'';
const HOSTILE_DIR = 'shards <b>&"x"';

/*
 * The hand-made lists. Brackets are (label, span) over the words left after
 * deleting punctuation; preterminals and the TOP root are not brackets.
 *
 * 1. "the warden stacked the crates in the shed ." gold: S NP VP NP PP NP = 6
 *    rank 0 attaches the PP to the noun: the 6 gold brackets + NP(3,8): matched 6, test 7
 *    rank 1 is the gold tree: 6 of 6
 *    rank 2 has a flat VP: S NP VP, matched 3, test 3
 * 2. "porters carried ropes ." gold: S NP VP NP = 4
 *    rank 0 gold: 4 of 4; rank 1 a flat VP: 3 of 3; rank 2 NP(0,2) VP(2,3): matched 1 (S), test 3
 * 3. "the stove burned low ." gold: S NP VP ADVP = 4
 *    rank 0 NP for ADVP: matched 3, test 4 (F1 0.75)
 *    rank 1 NP(0,3) ADVP(3,4): matched 2 (S, ADVP), test 3 (F1 0.57)
 *    rank 2 gold: 4 of 4
 * 4. "kettles boiled ." gold: S NP VP = 3; no candidates (the gold brackets count as missed).
 * 5. sentence 1's words and gold again (6), a tie:
 *    rank 0 flat under S: S NP(0,2), matched 2, test 2: F1 4/8 = 0.5
 *    rank 1 S NP(0,2) VP(2,8) right, NP(3,8) NP(3,6) ADJP(6,8) wrong: matched 3, test 6: F1 6/12 = 0.5
 *    equal F1: the oracle keeps rank 0 (the lower base rank) at every depth.
 *
 * Gold brackets 6 + 4 + 4 + 3 + 6 = 23. Oracle at depth k (best of ranks < k):
 *   k = 1 (= base): matched 6 + 4 + 3 + 2 = 15, test 7 + 4 + 4 + 2 = 17: F1 = 200·15 / 40 = 75
 *   k = 2: sentence 1 takes rank 1 (6, 6): matched 15, test 16: F1 = 3000 / 39
 *   k = 3: sentence 3 takes rank 2 (4, 4): matched 16, test 16: F1 = 3200 / 39
 */
const GOLD = [
  '(TOP (S (NP (DT the) (NN warden)) (VP (VBD stacked) (NP (DT the) (NNS crates)) (PP (IN in) (NP (DT the) (NN shed)))) (. .)))',
  '(TOP (S (NP (NNS porters)) (VP (VBD carried) (NP (NNS ropes))) (. .)))',
  '(TOP (S (NP (DT the) (NN stove)) (VP (VBD burned) (ADVP (RB low))) (. .)))',
  '(TOP (S (NP (NNS kettles)) (VP (VBD boiled)) (. .)))',
  '(TOP (S (NP (DT the) (NN warden)) (VP (VBD stacked) (NP (DT the) (NNS crates)) (PP (IN in) (NP (DT the) (NN shed)))) (. .)))',
];
const LISTS: { id: string; trees: string[] }[] = [
  {
    id: HOSTILE_ID,
    trees: [
      '(TOP (S (NP (DT the) (NN warden)) (VP (VBD stacked) (NP (NP (DT the) (NNS crates)) (PP (IN in) (NP (DT the) (NN shed))))) (. .)))',
      GOLD[0],
      '(TOP (S (NP (DT the) (NN warden)) (VP (VBD stacked) (DT the) (NNS crates) (IN in) (DT the) (NN shed)) (. .)))',
    ],
  },
  {
    id: '2',
    trees: [
      GOLD[1],
      '(TOP (S (NP (NNS porters)) (VP (VBD carried) (NNS ropes)) (. .)))',
      '(TOP (S (NP (NNS porters) (VBD carried)) (VP (NNS ropes)) (. .)))',
    ],
  },
  {
    id: '3',
    trees: [
      '(TOP (S (NP (DT the) (NN stove)) (VP (VBD burned) (NP (RB low))) (. .)))',
      '(TOP (S (NP (DT the) (NN stove) (VBD burned)) (ADVP (RB low)) (. .)))',
      GOLD[2],
    ],
  },
  { id: '4', trees: [] },
  {
    id: '5',
    trees: [
      '(TOP (S (NP (DT the) (NN warden)) (VBD stacked) (DT the) (NNS crates) (IN in) (DT the) (NN shed) (. .)))',
      '(TOP (S (NP (DT the) (NN warden)) (VP (VBD stacked) (NP (NP (DT the) (NNS crates) (IN in)) (ADJP (DT the) (NN shed)))) (. .)))',
    ],
  },
];
const HAND_COUNTS = [
  [[6, 7], [6, 6], [3, 3]],
  [[4, 4], [3, 3], [1, 3]],
  [[3, 4], [2, 3], [4, 4]],
  [],
  [[2, 2], [3, 6]],
];

/** The definition, by brute force: per depth, per sentence, the best F1 among ranks < k (ties: lower rank). */
async function oracleByDefinition(shards: string): Promise<number[]> {
  const sentences = [];
  for await (const s of readShardDir(shards)) sentences.push(s);
  const longest = Math.max(...sentences.flatMap((s) => s.cands.map((c) => c.rank + 1)));
  const out: number[] = [];
  for (let k = 1; k <= longest; k++) {
    let matched = 0;
    let test = 0;
    let gold = 0;
    for (const s of sentences) {
      gold += s.gold;
      const allowed = s.cands.filter((c) => c.rank < k).sort((a, b) => sentenceF1(s.gold, b) - sentenceF1(s.gold, a) || a.rank - b.rank);
      if (allowed.length) {
        matched += allowed[0].matched;
        test += allowed[0].test;
      }
    }
    out.push((200 * matched) / (gold + test));
  }
  return out;
}

let devDump: string;
beforeAll(async () => {
  // The hand-made shard, in a directory whose name needs escaping.
  writeFileSync(at('hand.trees'), GOLD.map((t, k) => JSON.stringify({ id: LISTS[k].id, tree: t })).join('\n') + '\n');
  writeFileSync(at('hand.jsonl'), LISTS.map((l) => JSON.stringify({ id: l.id, candidates: l.trees.map((tree, k) => ({ tree, score: -10 - k })) })).join('\n') + '\n');
  await runPrepare({ gold: at('hand.trees'), nbest: [at('hand.jsonl')], pipeline: 'default', out: at(HOSTILE_DIR), workers: 0, quiet: true });

  // Small jackknifed data and a model with a dev curve and kept names.
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/);
  writeFileSync(at('train.trees'), trees.slice(0, 150).join('\n') + '\n');
  writeFileSync(at('dev.trees'), trees.slice(150, 180).join('\n') + '\n');
  const split = await runSplit({ gold: at('train.trees'), folds: 3, out: at('plan'), quiet: true });
  await runJackknife({ plan: at('plan'), out: at('nbest'), nbest: 10, workers: 0, parse: [at('dev.trees')], quiet: true });
  devDump = join(at('nbest'), dumpName(at('dev.trees')));
  await runPrepare({ gold: at('train.trees'), nbest: split.perFold.map((_, k) => join(at('nbest'), `fold-${k}.jsonl.gz`)), plan: at('plan'), pipeline: 'demo', out: at('train-shards'), workers: 0, quiet: true });
  await runPrepare({ gold: at('dev.trees'), nbest: [devDump], pipeline: 'demo', out: at('dev-shards'), workers: 0, quiet: true });
  await runTrain({ shards: at('train-shards'), dev: at('dev-shards'), out: at('model'), epochs: 3, cutoff: 1, quiet: true });
}, 120_000);

describe('report figures', () => {
  it('computes oracle F1 at every depth as worked by hand (depth 1 = base, full depth = oracle)', async () => {
    // The shard holds the hand counts (PARSEVAL is checked against its definition in parseval.test.ts).
    const counts: number[][][] = [];
    for await (const s of readShardDir(at(HOSTILE_DIR))) counts.push(s.cands.map((c) => [c.matched, c.test]));
    expect(counts).toEqual(HAND_COUNTS);
    const d = (await reportData({ shards: [at(HOSTILE_DIR)] })).shards[0];
    expect(d.oracleAtDepth.map((p) => p.depth)).toEqual([1, 2, 3]);
    const f1 = d.oracleAtDepth.map((p) => p.f1);
    expect(f1[0]).toBeCloseTo(75, 10);
    expect(f1[1]).toBeCloseTo(3000 / 39, 10);
    expect(f1[2]).toBeCloseTo(3200 / 39, 10);
    expect(d.base.f1).toBeCloseTo(75, 10);
    expect(d.oracle.f1).toBeCloseTo(3200 / 39, 10);
    expect(d.noCandidates).toBe(1);
    // Where the oracle sits: sentence 1 at rank 1, 2 at rank 0, 3 at rank 2, 5 at rank 0; sentence 4 has none.
    expect(d.oracleRanks).toEqual([2, 1, 1]);
    expect(d.listSizes).toEqual([{ candidates: 0, sentences: 1 }, { candidates: 2, sentences: 1 }, { candidates: 3, sentences: 3 }]);
    // Largest gaps: sentence 3 (75 → 100) then sentence 1 (92.31 → 100); sentences 2 and 5 have none.
    expect(d.gaps.map((g) => [g.id, g.oraclePosition])).toEqual([['3', 3], [HOSTILE_ID, 2]]);
    expect(d.gaps[1].base).toBeCloseTo((100 * 12) / 13, 10);
  });

  it('equals the definition at every depth on parsed 10-best lists', async () => {
    for (const shards of [at('train-shards'), at('dev-shards')]) {
      const d = (await reportData({ shards: [shards] })).shards[0];
      const want = await oracleByDefinition(shards);
      expect(d.oracleAtDepth).toHaveLength(want.length);
      d.oracleAtDepth.forEach((p, k) => expect(p.f1, `depth ${k + 1}`).toBeCloseTo(want[k], 10));
      // Longer lists never lower the oracle.
      for (let k = 1; k < want.length; k++) expect(want[k]).toBeGreaterThanOrEqual(want[k - 1]);
    }
  });

  it('gives exactly eval\'s figures for the same shards and model, with and without the model', async () => {
    const withModel = await reportData({ shards: [at('dev-shards'), at('train-shards')], model: at('model'), samples: 500 });
    const without = await reportData({ shards: [at('dev-shards')] });
    for (const d of withModel.shards) {
      const e: EvalSummary = JSON.parse(JSON.stringify(await runEval({ shards: d.dir, model: at('model'), samples: 500 })));
      expect(JSON.parse(JSON.stringify(d.eval))).toEqual(e);
      expect({ base: d.base, oracle: d.oracle, reranked: d.reranked }).toEqual({ base: e.base, oracle: e.oracle, reranked: e.reranked });
      expect(d.byLength.map((r) => ({ words: r.words, base: r.base, oracle: r.oracle, reranked: r.reranked }))).toEqual(e.byLength);
      // The depth curve starts at eval's base and ends at eval's oracle (same sums, so the same numbers).
      expect(d.oracleAtDepth[0].f1).toBe(e.base.f1);
      expect(d.oracleAtDepth[d.oracleAtDepth.length - 1].f1).toBe(e.oracle.f1);
      expect(d.rerankedRanks).toEqual(e.chosenRanks);
    }
    const e = await runEval({ shards: at('dev-shards'), model: at('model'), samples: 10 });
    expect(without.shards[0].base).toEqual(e.base);
    expect(without.shards[0].oracle).toEqual(e.oracle);
    expect(without.shards[0].byLength.map((r) => [r.words, r.base, r.oracle])).toEqual(e.byLength.map((r) => [r.words, r.base, r.oracle]));
    expect(without.shards[0].reranked).toBeNull();
  });

  it('prints eval\'s F1 figures on the page', async () => {
    const out = at('page/report.html');
    await runReport({ shards: [at('dev-shards')], model: at('model'), out, samples: 500, quiet: true });
    const html = readFileSync(out, 'utf8');
    const e = await runEval({ shards: at('dev-shards'), model: at('model'), samples: 500 });
    for (const [system, row] of [['base', e.base], ['oracle', e.oracle], ['re-ranked', e.reranked]] as const) {
      const tr = html.match(new RegExp(`<tr data-shards="dev-shards" data-system="${system}">(.*?)</tr>`))![1];
      const cells = [...tr.matchAll(/<td>([\d.]+)<\/td>/g)].map((m) => m[1]);
      expect(cells.slice(-3), system).toEqual([row.precision.toFixed(2), row.recall.toFixed(2), row.f1.toFixed(2)]);
    }
    for (const r of e.byLength) {
      expect(html).toContain(`<td class="text">${r.words}</td><td>${r.base.sentences.toLocaleString('en-US')}</td><td>${r.base.f1.toFixed(2)}</td><td>${r.oracle.f1.toFixed(2)}</td><td>${r.reranked.f1.toFixed(2)}</td>`);
    }
  });
});

describe('report charts and page', () => {
  it('draws marks in every chart, with and without a model', async () => {
    const full = await drawCharts(await reportData({ shards: [at('train-shards'), at('dev-shards')], model: at('model'), samples: 10 }));
    expect(full.drawn.map((c) => c.id)).toEqual(['oracle-depth', 'length', 'learning', 'list-sizes', 'positions', 'occupancy', 'collisions', 'templates', 'weights']);
    for (const c of Object.values(full.charts)) {
      expect(c, 'every chart is drawn with a model and kept names').not.toBeNull();
      expect(countMarks(c!.svg), c!.id).toBeGreaterThan(0);
      expect(c!.svg.startsWith('<svg')).toBe(true);
    }
    const bare = await drawCharts(await reportData({ shards: [at(HOSTILE_DIR)] }));
    // The default pipeline keeps no names (no collision chart); no model: no curve, no weights.
    expect(bare.drawn.map((c) => c.id)).toEqual(['oracle-depth', 'length', 'list-sizes', 'positions', 'occupancy', 'templates']);
    for (const c of bare.drawn) expect(c.marks, c.id).toBeGreaterThan(0);
    // The mark count sees an empty chart as empty.
    const empty = await renderSvg({ data: { values: [] }, mark: 'bar', encoding: { x: { field: 'a', type: 'nominal' }, y: { field: 'b', type: 'quantitative', scale: { domain: [0, 1] } } } } as never);
    expect(countMarks(empty)).toBe(0);
  });

  it('escapes ids, names and paths taken from data, and references nothing on the network', async () => {
    const out = at('page/hand.html');
    await runReport({ shards: [at(HOSTILE_DIR), at('dev-shards')], out, quiet: true });
    const html = readFileSync(out, 'utf8');
    expect(escapeHtml(HOSTILE_ID)).toBe('&lt;img src=x onerror=&quot;alert(1)&quot;&gt;&amp;amp;&#39;');
    expect(html).toContain(`<code>${escapeHtml(HOSTILE_ID)}</code>`);
    expect(html).not.toContain('<img');
    expect(html).not.toContain('<b>');
    expect(html).toContain(escapeHtml(HOSTILE_DIR));
    // Self-contained: no script, no stylesheet link, no fetched URL.
    expect(html).not.toMatch(/<script|<link|<iframe|@import|url\(/i);
    expect(html).not.toMatch(/(src|href)\s*=\s*["']?\s*(https?:)?\/\//i);
    // Numbers for people: thousands separators.
    const page = await runReport({ shards: [at('train-shards')], out: '-', quiet: true });
    const d = (await reportData({ shards: [at('train-shards')] })).shards[0];
    expect(d.candidates).toBeGreaterThan(999);
    expect(page.html).toContain(`${d.candidates.toLocaleString('en-US')} candidates`);
    expect(d.candidates.toLocaleString('en-US')).toMatch(/,/);
  });

  it('draws what 1-best lists allow and says what it cannot draw', async () => {
    // One candidate per list: nothing varies within a list, so no bucket is counted and the depth curve is one point.
    writeFileSync(at('one.jsonl'), LISTS.map((l) => JSON.stringify({ id: l.id, candidates: l.trees.slice(0, 1).map((tree) => ({ tree, score: -1 })) })).join('\n') + '\n');
    await runPrepare({ gold: at('hand.trees'), nbest: [at('one.jsonl')], pipeline: 'default', out: at('one-best'), workers: 0, quiet: true });
    const d = (await reportData({ shards: [at('one-best')] })).shards[0];
    expect(d.oracleAtDepth).toHaveLength(1);
    expect(d.oracleAtDepth[0].f1).toBe(d.base.f1);
    expect(d.base.f1).toBe(d.oracle.f1);
    expect(d.hashing.varyingAtLeast[0].buckets).toBe(0);
    const s = await runReport({ shards: [at('one-best')], out: '-', quiet: true });
    expect(s.charts.map((c) => c.id)).toEqual(['oracle-depth', 'length', 'list-sizes', 'positions', 'templates']);
    expect(s.html).toContain('No bucket varies within any list');
    expect(s.html).toContain('Needs a model');
  });

  it('writes atomically, refuses a directory as -o, and names directories by base name unless those clash', async () => {
    const out = at('atomic/r.html');
    const s = await runReport({ shards: [at('dev-shards')], out, quiet: true });
    expect(s.bytes).toBe(readFileSync(out).length);
    expect(readdirSync(at('atomic'))).toEqual(['r.html']);
    mkdirSync(at('a-dir'));
    await expect(runReport({ shards: [at('dev-shards')], out: at('a-dir'), quiet: true })).rejects.toThrow(/is a directory; expected the path of the HTML file/);
    const errors: string[] = [];
    const orig = console.error;
    console.error = (...a: unknown[]) => void errors.push(a.join(' '));
    try {
      expect(await main(['report', at('dev-shards'), '-o', at('a-dir'), '--quiet'])).toBe(1);
      expect(await main(['report', at('no-such-dir'), '-o', at('x.html'), '--quiet'])).toBe(1);
    } finally {
      console.error = orig;
    }
    expect(errors.join('\n')).toMatch(/is a directory/);
    expect(errors.join('\n')).toMatch(/no-such-dir.*is not a complete shard directory/);
    expect(existsSync(at('x.html'))).toBe(false);
    await expect(reportData({ shards: [at('dev-shards'), `${at('dev-shards')}/`] })).rejects.toThrow(/is given twice/);
    expect(shortLabels(['a/train-shards', 'b/dev-shards/'])).toEqual(['train-shards', 'dev-shards']);
    expect(shortLabels(['a/shards', 'b/shards'])).toEqual(['a/shards', 'b/shards']);
  });
});
