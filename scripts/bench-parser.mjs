#!/usr/bin/env node
// Benchmark (not a test): the embedded PCFG parser, on the compiled dist/.
//   npm run build && node scripts/bench-parser.mjs           # the figures
//   node scripts/bench-parser.mjs --sweep                     # the h × v grid the defaults were chosen on
// Trains on demo-corpus/huts-train.trees. Sentences of exact lengths (10, 20, 30
// words) and the 4,000-sentence use-case treebank are sampled, seeded, from
// the PCFG trained on the demo corpus (it generates its own input). The
// stress section trains on random trees (scripts/lib/gen-trees.mjs), a much
// larger and flatter grammar. Prints rates and ratios; asserts nothing.
import { fileURLToPath } from 'node:url';
import { createVocabulary } from '../dist/core/interner.js';
import { normaliseTree } from '../dist/core/normalise.js';
import { SentenceScorer } from '../dist/core/parseval.js';
import { baseChoice, F1Table, oracleChoice } from '../dist/core/f1-table.js';

/** Adds a scored list to a table's base and oracle rows. */
function addList(table, gold, counts) {
  const s = { gold, cands: counts.map((c, rank) => ({ rank, matched: c.matched, test: c.test })) };
  table.addChoice('base', s, baseChoice(s));
  table.addChoice('oracle', s, oracleChoice(s));
}
const rowsOf = (t) => ({ base: t.row('base'), oracle: t.row('oracle') });
import { parseTree } from '../dist/core/read-brackets.js';
import { yieldOf } from '../dist/core/tree.js';
import { readTreebank } from '../dist/io/read-treebank.js';
import { checkPcfgSettings, DEFAULT_PCFG_SETTINGS, encodeGrammar, KBestParser, PcfgTrainer } from '../dist/parser/index.js';
import { Chart } from '../dist/parser/cky.js';
import { randomTree, rng } from './lib/gen-trees.mjs';
import { best } from './lib/timing.mjs';

const sweep = process.argv.includes('--sweep');
const vocab = createVocabulary();
const demo = [];
for await (const r of readTreebank(fileURLToPath(new URL('../demo-corpus/huts-train.trees', import.meta.url)), { vocab })) demo.push(normaliseTree(r.tree));

const now = () => Number(process.hrtime.bigint()) / 1e9;
const fmt = (x, d = 1) => x.toLocaleString('en-US', { minimumFractionDigits: d, maximumFractionDigits: d });
const train = (trees, settings = DEFAULT_PCFG_SETTINGS) => {
  const t = new PcfgTrainer(settings);
  for (const tree of trees) t.add(tree);
  return t.finish();
};

/** Corpus 1-best and oracle F1 at each N of `ns`, and seconds spent parsing. */
function accuracy(g, test, ns) {
  const parser = new KBestParser(g);
  const kmax = Math.max(...ns);
  const tables = ns.map(() => new F1Table());
  const t0 = now();
  const lists = test.map((gold) => parser.parse(yieldOf(gold), kmax));
  const seconds = now() - t0;
  test.forEach((gold, s) => {
    const scorer = new SentenceScorer(gold);
    const cands = lists[s].map((p) => scorer.score(parseTree(p.tree, vocab)));
    ns.forEach((n, i) => addList(tables[i], scorer.goldBrackets, cands.slice(0, n)));
  });
  return { rows: tables.map(rowsOf), seconds };
}

/**
 * Samples trees from a trained grammar (seeded), top-down over the binarised
 * rules in proportion to their probabilities, known words only; returns
 * bracketed text. `accept(n)` is asked the sentence length.
 */
function sampler(g, seed) {
  const d = g.data;
  const rand = rng(seed);
  const S = g.nSym;
  const opts = Array.from({ length: S }, () => []);
  for (let r = 0; r < d.binParent.length; r++) opts[d.binParent[r]].push([Math.exp(d.binScore[r]), 2, d.binLeft[r], d.binRight[r]]);
  for (let r = 0; r < d.unParent.length; r++) opts[d.unParent[r]].push([Math.exp(d.unScore[r]), 1, d.unChild[r]]);
  for (let w = 0; w < d.words.length; w++) {
    for (let e = d.wordStart[w]; e < d.wordStart[w + 1]; e++) opts[d.wordTag[e]].push([Math.exp(d.wordScore[e]), 0, w]);
  }
  const pickFrom = (list) => {
    let total = 0;
    for (const o of list) total += o[0];
    let x = rand() * total;
    for (const o of list) if ((x -= o[0]) <= 0) return o;
    return list[list.length - 1];
  };
  return (accept, maxWords = 40) => {
    for (;;) {
      const bt = { sym: [], kids: [], size: [], owner: [] };
      const words = [];
      let ok = true;
      const grow = (s) => {
        const at = bt.sym.length;
        const o = pickFrom(opts[s]);
        bt.sym.push(s);
        bt.kids.push(o[1] === 0 ? 1 : o[1]);
        bt.size.push(1);
        bt.owner.push(-1);
        if (o[1] === 0) {
          bt.sym.push(-1 - words.length);
          bt.kids.push(0);
          bt.size.push(1);
          bt.owner.push(-1);
          words.push(d.words[o[2]]);
        } else {
          for (let c = 2; c < 2 + o[1] && ok; c++) {
            if (words.length > maxWords) ok = false;
            else grow(o[c]);
          }
        }
        bt.size[at] = bt.sym.length - at;
      };
      grow(g.top);
      if (ok && accept(words.length)) return g.debinarise(bt, words);
    }
  };
}

/** Seconds per sentence of parse(words, k) over `sentences` (best of 2 runs). */
function perSentence(parser, sentences, k) {
  return best(() => { for (const w of sentences) parser.parse(w, k); }, 2) / sentences.length;
}

/** Random trees (gen-trees.mjs): a large, flat, very ambiguous grammar. */
function stressTrees(rand, count) {
  return Array.from({ length: count }, () => normaliseTree(parseTree(randomTree(rand, 8 + Math.floor(rand() * 23)), vocab)));
}

if (sweep) {
  // 6-fold cross-validation over the 1,200 demo trees (200 held out per fold), summed counts.
  const folds = 6;
  const size = demo.length / folds;
  const rand = rng(5);
  const stress = stressTrees(rand, 3600);
  const stressSentences = Array.from({ length: 5 }, () => yieldOf(parseTree(randomTree(rand, 20), vocab)));
  const crossValidate = (settings, ns) => {
    const tables = ns.map(() => new F1Table());
    let seconds = 0;
    for (let f = 0; f < folds; f++) {
      const test = demo.slice(f * size, (f + 1) * size);
      const g = train([...demo.slice(0, f * size), ...demo.slice((f + 1) * size)], settings);
      const parser = new KBestParser(g);
      const t0 = now();
      const lists = test.map((gold) => parser.parse(yieldOf(gold), Math.max(...ns)));
      seconds += now() - t0;
      test.forEach((gold, s) => {
        const scorer = new SentenceScorer(gold);
        const cands = lists[s].map((p) => scorer.score(parseTree(p.tree, vocab)));
        ns.forEach((n, i) => addList(tables[i], scorer.goldBrackets, cands.slice(0, n)));
      });
    }
    return { rows: tables.map(rowsOf), msPerSentence: (1000 * seconds) / demo.length };
  };
  console.log(`h × v: ${folds}-fold cross-validation on the ${demo.length} demo trees; labeled bracket F1 of the 1-best, oracle F1 at 10 and 50;`);
  console.log('ms per demo sentence at 50-best; symbols and ms per 20-word sentence at 50-best of the stress grammar (3,600 random trees)');
  console.log('h    v  symbols  binary  F1@1   oracle@10  oracle@50  ms/sentence  stress symbols  stress ms');
  for (const v of [1, 2, 3]) {
    for (const h of [0, 1, 2, 3, Infinity]) {
      const settings = checkPcfgSettings({ horizontal: h, vertical: v });
      const g = train(demo, settings);
      const a = crossValidate(settings, [1, 10, 50]);
      const gs = train(stress, settings);
      const ms = 1000 * perSentence(new KBestParser(gs), stressSentences, 50);
      console.log(`${String(h).padEnd(4)} ${v}  ${String(g.nSym).padStart(7)}  ${String(g.data.binParent.length).padStart(6)}  ${fmt(a.rows[0].base.f1, 2).padStart(5)}  ${fmt(a.rows[1].oracle.f1, 2).padStart(9)}  ${fmt(a.rows[2].oracle.f1, 2).padStart(9)}  ${fmt(a.msPerSentence, 2).padStart(11)}  ${String(gs.nSym).padStart(14)}  ${fmt(ms, 0).padStart(9)}`);
    }
  }
  console.log('lexicalSmoothing λ (h, v at their defaults); the demo corpus has no rare words, so this mostly shows its cost:');
  for (const lexicalSmoothing of [0, 0.5, 2]) {
    const a = crossValidate(checkPcfgSettings({ lexicalSmoothing }), [1, 50]);
    console.log(`  λ = ${String(lexicalSmoothing).padEnd(4)} F1@1 ${fmt(a.rows[0].base.f1, 2)}  oracle@50 ${fmt(a.rows[1].oracle.f1, 2)}  ms/sentence ${fmt(a.msPerSentence, 2)}`);
  }
  process.exit(0);
}

// Training and grammar size.
let g = null;
const tTrain = best(() => { g = train(demo); }, 3);
const bytes = encodeGrammar(g);
console.log(`settings: ${JSON.stringify(DEFAULT_PCFG_SETTINGS)}`);
console.log(`training on ${demo.length} demo trees: ${fmt(1000 * tTrain, 0)} ms (${fmt(demo.length / tTrain, 0)} trees/s)`);
console.log(`grammar: ${g.nSym} symbols, ${g.data.binParent.length} binary rules, ${g.data.unParent.length} unary rules, ${g.chainChild.length} unary chains, ${g.data.words.length} words, ${g.data.classes.length} word classes, ${bytes.length.toLocaleString('en-US')} bytes encoded`);

// Accuracy on the demo split.
{
  const g1 = train(demo.slice(0, 1000));
  const a = accuracy(g1, demo.slice(1000), [1, 10, 50]);
  console.log(`demo split (train 1,000, test 200): 1-best F1 ${fmt(a.rows[0].base.f1, 2)}, oracle F1 at 10 ${fmt(a.rows[1].oracle.f1, 2)}, at 50 ${fmt(a.rows[2].oracle.f1, 2)}`);
}

// Speed by length and N, on sentences sampled from the demo grammar.
const sample = sampler(g, 20261203);
const byLength = {};
for (const n of [10, 20, 30]) byLength[n] = Array.from({ length: n === 30 ? 60 : 100 }, () => yieldOf(parseTree(sample((m) => m === n), vocab)));
const parser = new KBestParser(g);
const sec = {};
console.log('k-best parser, demo grammar, sentences/s (sentences sampled from the grammar):');
console.log('words   N=1      N=10     N=50     N=50 / N=1');
for (const n of [10, 20, 30]) {
  sec[n] = {};
  for (const k of [1, 10, 50]) sec[n][k] = perSentence(parser, byLength[n], k);
  console.log(`${String(n).padEnd(6)}  ${fmt(1 / sec[n][1], 0).padStart(7)}  ${fmt(1 / sec[n][10], 0).padStart(7)}  ${fmt(1 / sec[n][50], 0).padStart(7)}  ${fmt(sec[n][50] / sec[n][1], 2).padStart(9)}`);
}
console.log(`growth with length at N=50: 20/10 words ${fmt(sec[20][50] / sec[10][50], 2)}× (n³ would be 8×), 30/20 words ${fmt(sec[30][50] / sec[20][50], 2)}× (n³: 3.4×)`);
console.log(`ms per 20-word sentence at 50-best: ${fmt(1000 * sec[20][50], 2)}`);

// The use case: 4,000 sentences of 8–30 words, 10 folds, plus dev and test of 400.
{
  const rand = rng(77);
  const use = Array.from({ length: 4000 }, () => {
    const want = 8 + Math.floor(rand() * 23);
    return normaliseTree(parseTree(sample((m) => m === want), vocab));
  });
  const fold = use.slice(0, 400);
  const rest = use.slice(400);
  const t0 = now();
  const gf = train(rest);
  const tFoldTrain = now() - t0;
  const pf = new KBestParser(gf);
  const t1 = now();
  let candidates = 0;
  for (const t of fold) candidates += pf.parse(yieldOf(t), 50).length;
  const tFoldParse = now() - t1;
  const cpu = 11 * tFoldTrain + 12 * tFoldParse; // 10 fold models + 1 full; 10 held-out folds + dev + test
  const words = fold.reduce((a, t) => a + t.wordNodes.length, 0) / fold.length;
  console.log(`use case (4,000 sampled sentences of 8–30 words, mean ${fmt(words, 1)} held-out): one fold trains on 3,600 in ${fmt(tFoldTrain, 2)} s, parses 400 at 50-best in ${fmt(tFoldParse, 2)} s (${fmt(candidates / fold.length, 1)} trees each)`);
  console.log(`  11 trainings + 4,800 sentences ≈ ${fmt(cpu, 1)} s of one core; ≈ ${fmt(cpu / 2, 1)} s on 2 cores (budget 120 s): ${fmt(cpu / 2 / 120, 2)} of the budget`);
}

// Stress: random trees make a large, flat, very ambiguous grammar.
{
  const rand = rng(5);
  const trees = stressTrees(rand, 3600);
  const t0 = now();
  const gs = train(trees);
  const tTrainS = now() - t0;
  const sentences = Array.from({ length: 10 }, () => yieldOf(parseTree(randomTree(rand, 20), vocab)));
  const exact = perSentence(new KBestParser(gs), sentences, 50);
  console.log(`stress (3,600 random trees from gen-trees.mjs, every word under every tag): ${gs.nSym} symbols, ${gs.data.binParent.length} binary rules, trained in ${fmt(tTrainS, 2)} s`);
  console.log(`  20 words at 50-best: ${fmt(1000 * exact, 0)} ms/sentence exact; the use case at this cost ≈ ${fmt((4800 * exact) / 2, 0)} s on 2 cores (budget 120 s)`);
  const chart = new Chart(gs);
  for (const beam of [10, 7, 5]) {
    const t = perSentence(new KBestParser(gs, { beam }), sentences, 50);
    const lost = sentences.filter((w) => chart.fill(w, beam) === -Infinity).length;
    console.log(`  with beam ${beam}: ${fmt(1000 * t, 0)} ms/sentence (${fmt(exact / t, 2)}× the exact speed); ${lost} of ${sentences.length} sentences lost every parse to the beam and were parsed again without it`);
  }
}
