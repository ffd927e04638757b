#!/usr/bin/env node
// Benchmark (not a test): how fast the tree reader is, as a ratio to
// JSON.parse of the same text measured in the same run.
//   node scripts/bench-read.mjs [trees=50000] [words=25]
// Prints:
//   parseTree per tree string  vs  JSON.parse of the same tree as a JSON line
//   readTreebank over a file   vs  reading the same trees as JSONL + JSON.parse
import { mkdtempSync, writeFileSync, createReadStream, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { createVocabulary } from '../dist/core/interner.js';
import { parseTree } from '../dist/core/read-brackets.js';
import { TreeBuilder } from '../dist/core/tree.js';
import { readTreebank } from '../dist/io/read-treebank.js';
import { randomTree, rng } from './lib/gen-trees.mjs';
import { best as bestOf, bestAsync } from './lib/timing.mjs';
const best = (fn) => bestOf(fn, 5);

const N = Number(process.argv[2] ?? 50000);
const WORDS = Number(process.argv[3] ?? 25);
const rand = rng(1);
const trees = Array.from({ length: N }, () => randomTree(rand, WORDS));
const lines = trees.map((t) => JSON.stringify({ tree: t }));
// The same tree as nested JSON arrays: ["S", ["NP", ["DT", "the"]], ...].
const nested = trees.map((t) => t.replace(/\(([^\s()]+)/g, '["$1",').replace(/ ([^\s()]+)\)/g, ' "$1"]').replace(/\)/g, ']').replace(/\] \[/g, '], [').replace(/, \[/g, ',['));
JSON.parse(nested[0]);


let sink = 0;
const tJson = best(() => { for (const l of lines) sink += JSON.parse(l).tree.length; });
const tNested = best(() => { for (const l of nested) sink += JSON.parse(l).length; });
const vocab = createVocabulary();
const builder = new TreeBuilder(vocab);
const tParse = best(() => { for (const t of trees) sink += parseTree(t, vocab, { builder }).size; });

const dir = mkdtempSync(join(tmpdir(), 'sheaf-bench-'));
const treesFile = join(dir, 'bench.trees');
const jsonl = join(dir, 'trees.jsonl');
writeFileSync(treesFile, trees.join('\n') + '\n');
writeFileSync(jsonl, lines.join('\n') + '\n');
const tFileJson = await bestAsync(async () => {
  const rl = createInterface({ input: createReadStream(jsonl), crlfDelay: Infinity });
  for await (const l of rl) sink += JSON.parse(l).tree.length;
});
const tFileRead = await bestAsync(async () => {
  for await (const r of readTreebank(treesFile, { vocab })) sink += r.tree.size;
});
rmSync(dir, { recursive: true });

const fmt = (x) => Math.round(x).toLocaleString('en-US');
console.log(`trees: ${N} of ${WORDS} words, ${(trees.reduce((a, t) => a + t.length, 0) / N).toFixed(0)} chars each`);
console.log(`in memory  parseTree          ${fmt(N / tParse)} trees/s`);
console.log(`in memory  JSON.parse (floor)  ${fmt(N / tJson)} trees/s`);
console.log(`in memory  JSON.parse of the tree as nested arrays  ${fmt(N / tNested)} trees/s`);
console.log(`in memory  ratio parseTree / JSON.parse of the same text as a JSON string: ${(tJson / tParse).toFixed(2)}`);
console.log(`in memory  ratio parseTree / JSON.parse of the same tree as nested arrays: ${(tNested / tParse).toFixed(2)}`);
console.log(`from file  readTreebank       ${fmt(N / tFileRead)} trees/s`);
console.log(`from file  lines + JSON.parse ${fmt(N / tFileJson)} trees/s`);
console.log(`from file  ratio readTreebank / (lines + JSON.parse) speed: ${(tFileJson / tFileRead).toFixed(2)}`);
if (sink === 0.5) console.log('');
