#!/usr/bin/env node
// Benchmark (not a test): feature extraction + hashing per candidate, as a
// ratio to JSON.parse of the same candidates, measured in the same run.
//   node scripts/bench-features.mjs [sentences=400] [candidates=50] [words=25]
// Also prints the hash collision rate (distinct keys vs occupied buckets)
// against the expected N/(2m).
import { fileURLToPath } from 'node:url';
import { createVocabulary } from '../dist/core/interner.js';
import { normaliseTree } from '../dist/core/normalise.js';
import { parseTree } from '../dist/core/read-brackets.js';
import { TreeBuilder } from '../dist/core/tree.js';
import { candidateView } from '../dist/features/candidate-view.js';
import { FeatureExtractor } from '../dist/features/extract-features.js';
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
const pipeline = loadPipeline(fileURLToPath(new URL('../pipelines/default.json', import.meta.url)));
const N = S * K;


let sink = 0;
const tJson = best(() => { for (const c of sentences) for (const l of c) sink += JSON.parse(l).score; });
const parsed = sentences.map((c) => c.map((l) => JSON.parse(l)));
const vocab = createVocabulary();
const builder = new TreeBuilder(vocab);
const tParse = best(() => {
  for (const c of parsed) for (const x of c) sink += normaliseTree(parseTree(x.tree, vocab, { builder })).size;
});
const trees = parsed.map((c) => c.map((x, rank) => ({ tree: normaliseTree(parseTree(x.tree, vocab)), score: x.score, rank })));
const ex = new FeatureExtractor({ templates: pipeline.templates, bits: 20, seed: 0, pseudoConstant: false });
let nFeatures = 0;
const tExtract = best(() => {
  nFeatures = 0;
  for (const c of trees) for (const x of c) nFeatures += ex.candidate(candidateView(x.tree, x.score, x.rank)).idx.length;
});
const exPrune = new FeatureExtractor({ templates: pipeline.templates, bits: 20, seed: 0 });
let kept = 0;
const tSentence = best(() => {
  kept = 0;
  for (const c of trees) for (const v of exPrune.sentence(c)) kept += v.idx.length;
});

// Collision rate at several table sizes.
const named = new FeatureExtractor({ templates: pipeline.templates, bits: 20, seed: 0, names: 1, pseudoConstant: false });
for (const c of trees.slice(0, Math.min(S, 200))) for (const x of c) named.candidate(candidateView(x.tree, x.score, x.rank));
const keys = named.names.collisions().keys;

const us = (t) => ((t / N) * 1e6).toFixed(2);
console.log(`candidates: ${N} (${S} sentences × ${K}, ${W} words), pipeline: pipelines/default.json (${pipeline.templates.length} templates)`);
console.log(`JSON.parse of a candidate line (floor)      ${us(tJson)} µs`);
console.log(`parse + normalise the candidate tree        ${us(tParse)} µs   (${(tParse / tJson).toFixed(1)}× JSON.parse)`);
console.log(`extract + hash (${(nFeatures / N).toFixed(0)} buckets/candidate)       ${us(tExtract)} µs   (${(tExtract / tJson).toFixed(1)}× JSON.parse; target ≤ 2×)`);
console.log(`  + pseudo-constant pruning per sentence    ${us(tSentence)} µs   (${(tSentence / tJson).toFixed(1)}× JSON.parse; ${(kept / N).toFixed(0)} buckets kept/candidate)`);
console.log(`extract + hash: ${Math.round(N / tExtract).toLocaleString('en-US')} candidates/s on one core`);
for (const bits of [16, 18, 20, 22]) {
  const ex2 = new FeatureExtractor({ templates: pipeline.templates, bits, seed: 0, names: 1, pseudoConstant: false });
  for (const c of trees.slice(0, Math.min(S, 200))) for (const x of c) ex2.candidate(candidateView(x.tree, x.score, x.rank));
  const c = ex2.names.collisions();
  console.log(`collisions at 2^${bits}: ${c.keys} distinct keys in ${c.buckets} buckets: rate ${(100 * c.rate).toFixed(2)}%, expected N/(2m) = ${(100 * c.keys / (2 * 2 ** bits)).toFixed(2)}%`);
}
if (sink === 0.5) console.log(keys);
