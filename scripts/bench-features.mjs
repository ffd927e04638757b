#!/usr/bin/env node
// Benchmark (not a test): feature extraction + hashing per candidate, the
// difference path against the direct path (every candidate's whole vector,
// the test oracle), both as ratios to JSON.parse of the same candidates,
// measured in the same run. Also the hash collision rate (distinct keys vs
// occupied buckets) against the expected N/(2m).
//   node scripts/bench-features.mjs [sentences=400] [candidates=50] [words=25]
import { createVocabulary } from '../dist/core/interner.js';
import { normaliseTree } from '../dist/core/normalise.js';
import { parseTree } from '../dist/core/read-brackets.js';
import { TreeBuilder } from '../dist/core/tree.js';
import { directVectors } from '../dist/features/direct-vectors.js';
import { VectorExtractor } from '../dist/features/extract-vectors.js';
import { loadPipeline } from '../dist/io/load-pipeline.js';
import { perturb, randomTree, rng } from './lib/gen-trees.mjs';
import { best } from './lib/timing.mjs';

const S = Number(process.argv[2] ?? 400);
const K = Number(process.argv[3] ?? 50);
const W = Number(process.argv[4] ?? 25);
const rand = rng(11);
const sentences = [];
for (let s = 0; s < S; s++) {
  const gold = randomTree(rand, W);
  const cands = [];
  for (let k = 0; k < K; k++) cands.push(JSON.stringify({ tree: k === 0 ? gold : perturb(rand, gold, 0.15), score: -40 - k * 0.5 - rand() }));
  sentences.push(cands);
}
const pipeline = loadPipeline('default');
const N = S * K;

let sink = 0;
const tJson = best(() => { for (const c of sentences) for (const l of c) sink += JSON.parse(l).score; });
const parsed = sentences.map((c) => c.map((l) => JSON.parse(l)));
const vocab = createVocabulary();
const builder = new TreeBuilder(vocab);
const tParse = best(() => {
  for (const c of parsed) for (const x of c) sink += normaliseTree(parseTree(x.tree, vocab, { builder })).size;
});
const lists = parsed.map((c) => c.map((x, rank) => ({ tree: normaliseTree(parseTree(x.tree, vocab)), score: x.score, rank })));
const opts = { templates: pipeline.templates, bits: 20, seed: 0 };
let direct = 0;
const tDirect = best(() => {
  direct = 0;
  for (const c of lists) for (const v of directVectors(opts, c)) direct += v.idx.length;
}, 1);
const ex = new VectorExtractor(opts);
let stored = 0;
const tDiff = best(() => {
  stored = 0;
  for (const c of lists) {
    const v = ex.sentence(c);
    stored += v.ref.idx.length;
    for (const d of v.diffs) stored += d.idx.length;
  }
});

const us = (t) => ((t / N) * 1e6).toFixed(2);
console.log(`candidates: ${N} (${S} sentences × ${K}, ${W} words), pipeline: default (${pipeline.templates.length} templates)`);
console.log(`JSON.parse of a candidate line (floor)         ${us(tJson)} µs`);
console.log(`parse + normalise the candidate tree           ${us(tParse)} µs   (${(tParse / tJson).toFixed(1)}× JSON.parse)`);
console.log(`direct path: whole vectors, uniform dropped    ${us(tDirect)} µs   (${(tDirect / tJson).toFixed(1)}× JSON.parse; ${(direct / N).toFixed(0)} entries/candidate)`);
console.log(`difference path: reference + differences       ${us(tDiff)} µs   (${(tDiff / tJson).toFixed(1)}× JSON.parse; ${(stored / N).toFixed(0)} entries stored/candidate)`);
console.log(`difference path over direct path: ${(tDirect / tDiff).toFixed(2)}× faster`);
for (const bits of [16, 18, 20, 22]) {
  const ex2 = new VectorExtractor({ ...opts, bits, names: 1 });
  for (const c of lists.slice(0, Math.min(S, 200))) ex2.sentence(c);
  const c = ex2.names.collisions();
  console.log(`collisions at 2^${bits}: ${c.keys} distinct keys in ${c.buckets} buckets: rate ${(100 * c.rate).toFixed(2)}%, expected N/(2m) = ${(100 * c.keys / (2 * 2 ** bits)).toFixed(2)}%`);
}
if (sink === 0.5) console.log(sink);
