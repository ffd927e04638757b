#!/usr/bin/env node
// Benchmark (not a test): training, eval and rerank against prepare, on the compiled dist/.
//   npm run build && node scripts/bench-train.mjs [--nbest 50] [--workers 1,2] [--keep DIR]
// Builds its own data from the demo corpus: split into 10 folds, jackknife with
// the embedded parser (N-best), prepare the training shards, then times
//   - prepare of the same fold dumps (candidates/s, per worker count),
//   - one averaged-perceptron epoch (streamed from the shards; and in memory),
//   - log-linear L-BFGS iterations (passes over the data per second),
//   - rerank of the same dumps, concatenated (candidates/s, per worker count),
// and prints the ratios the issue targets ask for, measured in this one run.
// Asserts nothing.
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runSplit } from '../dist/folds/run-split.js';
import { readManifest, readRankingListDir } from '../dist/io/read-shards.js';
import { runJackknife } from '../dist/jackknife/run-jackknife.js';
import { runPrepare } from '../dist/prepare/run-prepare.js';
import { runRerank } from '../dist/rerank/run-rerank.js';
import { AveragedPerceptron } from '../dist/train/perceptron.js';
import { runTrain } from '../dist/train/run-train.js';
import { option } from './lib/args.mjs';

const nbest = Number(option('nbest', '50'));
const workerCounts = option('workers', '1,2').split(',').map(Number);
const keep = option('keep', null);
const root = fileURLToPath(new URL('..', import.meta.url));
const dir = keep ?? mkdtempSync(join(tmpdir(), 'sheaf-bench-train-'));
mkdirSync(dir, { recursive: true });
const at = (n) => join(dir, n);
const now = () => Number(process.hrtime.bigint()) / 1e9;
const fmt = (x, d = 1) => x.toLocaleString('en-US', { minimumFractionDigits: d, maximumFractionDigits: d });

try {
  const gold = join(root, 'demo-corpus/huts-train.trees');
  const split = await runSplit({ gold, folds: 10, out: at('plan'), quiet: true });
  let t0 = now();
  await runJackknife({ plan: at('plan'), out: at('nbest'), nbest, quiet: true });
  console.log(`data: ${split.perFold.reduce((a, b) => a + b, 0)} demo sentences, 10 folds, ${nbest}-best, jackknifed in ${fmt(now() - t0)} s`);
  const dumps = split.perFold.map((_, k) => join(at('nbest'), `fold-${k}.jsonl.gz`));

  // prepare, per worker count (the last run's shards are kept for training).
  const prep = {};
  let candidates = 0;
  for (const w of workerCounts) {
    rmSync(at('shards'), { recursive: true, force: true });
    t0 = now();
    const s = await runPrepare({ gold, nbest: dumps, plan: at('plan'), pipeline: 'demo', out: at('shards'), workers: w, quiet: true });
    prep[w] = now() - t0;
    candidates = s.candidates;
    console.log(`prepare, ${w} worker(s): ${fmt(prep[w], 2)} s, ${fmt(candidates / prep[w], 0)} candidates/s (${s.written} lists, ${candidates} candidates)`);
  }

  // One perceptron epoch, streamed as train streams it, and in memory (the decoding cost apart).
  const m = readManifest(at('shards'));
  const p = new AveragedPerceptron(2 ** m.hashing.bits);
  const epochs = [];
  for (let e = 0; e < 3; e++) {
    t0 = now();
    for await (const l of readRankingListDir(at('shards'), m)) p.step(l);
    epochs.push(now() - t0);
  }
  const lists = [];
  for await (const l of readRankingListDir(at('shards'), m)) lists.push(l);
  t0 = now();
  for (const l of lists) p.step(l);
  const inMemory = now() - t0;
  lists.length = 0;
  const epoch = Math.min(...epochs);
  console.log(`perceptron epoch (streamed from shards): ${fmt(epoch, 3)} s, best of 3 (${epochs.map((x) => fmt(x, 3)).join(', ')}); in memory ${fmt(inMemory, 3)} s`);

  // sheaf train as users run it (shuffle windows, averaging, model writing), 3 epochs, no dev.
  t0 = now();
  const tp = await runTrain({ shards: at('shards'), out: at('model'), epochs: 3, cutoff: 5, quiet: true });
  const trainSeconds = now() - t0;
  console.log(`sheaf train --epochs 3: ${fmt(trainSeconds, 2)} s in all; epochs ${tp.epochs.map((e) => fmt(e.seconds, 2)).join(', ')} s`);

  t0 = now();
  const tl = await runTrain({ shards: at('shards'), out: at('model-ll'), method: 'loglinear', epochs: 10, cutoff: 5, quiet: true });
  const llSeconds = now() - t0;
  const iterations = tl.epochs.length;
  console.log(`log-linear, ${iterations} L-BFGS iterations: ${fmt(llSeconds, 2)} s, ${fmt(iterations / llSeconds, 2)} iterations/s`);

  // rerank the same dumps (one file: gzip members concatenated).
  const all = at('all.jsonl.gz');
  writeFileSync(all, Buffer.concat(dumps.map((d) => readFileSync(d))));
  const rr = {};
  for (const w of workerCounts) {
    t0 = now();
    const s = await runRerank({ dump: all, model: at('model'), workers: w }, async () => {}, () => {});
    rr[w] = now() - t0;
    console.log(`rerank, ${w} worker(s): ${fmt(rr[w], 2)} s, ${fmt(candidates / rr[w], 0)} candidates/s (${s.read} lists, ${s.fellBack} fell back)`);
  }

  console.log('');
  console.log('ratios (this run):');
  for (const w of workerCounts) console.log(`  prepare (${w} worker(s)) / perceptron epoch  ${fmt(prep[w] / epoch, 1)}×   (target ≥ 20)`);
  for (const w of workerCounts) console.log(`  rerank / prepare, ${w} worker(s)      ${fmt(prep[w] / rr[w], 2)}    (candidates/s; target ≥ 0.9)`);
  console.log(`  log-linear iteration / epoch        ${fmt(llSeconds / iterations / epoch, 1)}×   (a log-linear pass vs a perceptron epoch)`);
} finally {
  if (!keep) rmSync(dir, { recursive: true, force: true });
}
