#!/usr/bin/env node
// Benchmark (not a test) for `sheaf prepare`. Generates its own input and
// prints figures as ratios measured in one run; asserts nothing.
//
// Two kinds of 50-best lists:
//   generated  random 20–30-word trees, each candidate the gold with 15 % of
//              its phrase labels changed at random, independently (the lists
//              share little: the hard case for difference vectors);
//   parsed     k-best lists of the embedded PCFG (trained on the demo
//              training treebank) for the demo sentences: lists as a real base
//              parser makes them (candidates share most of their structure).
// Figures:
//   - one thread, in process, per candidate: the per-sentence chain against
//     the read-only floor (parse + normalise every candidate tree; target
//     >= 0.33) and against the direct path (whole vectors, the test oracle);
//   - prepare end to end (a fresh process, --speed lists of generated data and the demo's
//     4,000 parsed lists): 1 and 2 workers, and with
//     --baseline DIR a built checkout of an earlier sheaf run on the same data
//     with 1 worker (the "today's" of an issue);
//   - shard directory bytes / input JSON Lines bytes (target <= 1.0), and
//     format-1 bytes (8 bytes per stored bucket, whole vectors) / format-3 (the current one);
//   - peak RSS with 2 workers at two corpus sizes (gold and lists alike,
//     10 candidates each; target <= 400 MB, ratio <= 1.15), and at a middle
//     size past the workers' warm-up;
//   - 1M sentences x 50 extrapolated from two measured sizes (target <= 15 min).
//
//   node scripts/bench-prepare.mjs [--speed 4000] [--small 5000] [--mid 40000] [--large 200000] [--baseline DIR] [--reps 2] [--skip-memory]
import { spawnSync } from 'node:child_process';
import { createWriteStream, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createVocabulary } from '../dist/core/interner.js';
import { normaliseTree } from '../dist/core/normalise.js';
import { SentenceScorer } from '../dist/core/parseval.js';
import { parseTree } from '../dist/core/read-brackets.js';
import { TreeArena, TreeBuilder, yieldOf } from '../dist/core/tree.js';
import { writeTree } from '../dist/core/write-brackets.js';
import { directVectors } from '../dist/features/direct-vectors.js';
import { MsgpackWriter } from '../dist/formats/msgpack.js';
import { loadPipeline } from '../dist/io/load-pipeline.js';
import { readTreebank } from '../dist/io/read-treebank.js';
import { KBestParser, PcfgTrainer, DEFAULT_PCFG_SETTINGS } from '../dist/parser/index.js';
import { createSentenceChain } from '../dist/prepare/sentence-chain.js';
import { parseCandidates } from '../dist/stages/parse-candidates.js';
import { scoreCandidates } from '../dist/stages/score-candidates.js';
import { option } from './lib/args.mjs';
import { writeGeneratedLists } from './lib/gen-trees.mjs';

// The 2-worker target is stated for >= 4,000 sentences: below that, each worker's one-time JIT
// compilation (measured: most of the V8 helper threads' CPU in a 5-second run) weighs on 2 workers twice.
const SPEED = Number(option('speed', 4000));
const SMALL = Number(option('small', 5000));
const LARGE = Number(option('large', 200000));
const MID = Number(option('mid', 40000));
const REPS = Number(option('reps', 2));
const BASELINE = option('baseline', null);
const SKIP_MEMORY = process.argv.includes('--skip-memory');
const K = 50;
const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-bench-prepare-'));
const pipelineFile = join(root, 'pipelines/default.json');
const n0 = (x) => Math.round(x).toLocaleString('en-US');

async function writeLines(file, lines) {
  const s = createWriteStream(file);
  for (const l of lines) if (!s.write(l + '\n')) await new Promise((r) => s.once('drain', r));
  await new Promise((r) => s.end(r));
}

/** Generated lists: gold trees and candidates with random relabels. */

/** Parsed lists: the embedded PCFG's 50-best for the demo training sentences. */
async function parsed(name) {
  const vocab = createVocabulary();
  const trees = [];
  for await (const r of readTreebank(join(root, 'demo-corpus/huts-train.trees'), { vocab })) trees.push(normaliseTree(r.tree));
  const trainer = new PcfgTrainer(DEFAULT_PCFG_SETTINGS);
  for (const t of trees) trainer.add(t);
  const parser = new KBestParser(trainer.finish());
  const gold = join(dir, `${name}.trees`);
  const dump = join(dir, `${name}.jsonl`);
  await writeLines(gold, trees.map((t) => writeTree(t)));
  await writeLines(dump, trees.map((t, s) => JSON.stringify({ id: String(s + 1), fold: null, source: { parser: 'pcfg', fingerprint: 'bench' }, candidates: parser.parse(yieldOf(t), K) })));
  return { gold, dump, bytes: statSync(dump).size };
}

function jobsOf(input, limit) {
  const golds = readFileSync(input.gold, 'utf8').split('\n');
  return readFileSync(input.dump, 'utf8').trim().split('\n').slice(0, limit).map((l, pos) => {
    const r = JSON.parse(l);
    return { pos, id: r.id, fold: null, gold: golds[Number(r.id) - 1], candidates: r.candidates };
  });
}

/** Best of `reps` timings of each fn over the jobs, the fns taken in turn (so drift hits all alike); candidates/s each. */
function rates(jobs, fns, reps = 3) {
  const n = jobs.reduce((a, j) => a + j.candidates.length, 0);
  const best = fns.map(() => Infinity);
  for (let r = 0; r < reps; r++) {
    fns.forEach((fn, k) => {
      const t0 = process.hrtime.bigint();
      for (const j of jobs) fn(j);
      best[k] = Math.min(best[k], Number(process.hrtime.bigint() - t0) / 1e9);
    });
  }
  return best.map((t) => n / t);
}

/** The format-1 record of a sentence: 8 bytes per stored bucket of every whole vector. */
function format1Bytes(w, job, vectors, counts) {
  w.reset();
  w.mapHeader(5);
  w.str('id'); w.str(job.id); w.str('fold'); w.nil(); w.str('gold'); w.int(counts.gold); w.str('flag'); w.nil();
  w.str('cands'); w.arrayHeader(vectors.length);
  vectors.forEach((v, k) => {
    w.mapHeader(6);
    w.str('score'); w.float64(job.candidates[k].score); w.str('rank'); w.int(k);
    w.str('matched'); w.int(counts.counts[k].matched); w.str('test'); w.int(counts.counts[k].test);
    w.str('idx'); w.bin(Uint32Array.from(v.idx)); w.str('val'); w.bin(Float32Array.from(v.val));
  });
  return w.length;
}

function inProcess(label, input) {
  const pipeline = loadPipeline(pipelineFile);
  const jobs = jobsOf(input, 600);
  const vocab = createVocabulary();
  // The floor builds its trees as the chain does: into an arena handed out again per list.
  const arena = new TreeArena();
  const builder = new TreeBuilder(vocab, arena);
  const chain = createSentenceChain(pipeline);
  const [floor, diff] = rates(jobs, [
    (j) => {
      arena.reset();
      for (const c of j.candidates) normaliseTree(parseTree(c.tree, vocab, { builder }), {}, builder);
    },
    (j) => chain.run(j),
  ]);
  const parse = parseCandidates(pipeline.parse);
  const score = scoreCandidates(pipeline.scoring);
  const w = new MsgpackWriter();
  let f1 = 0;
  const opts = { templates: pipeline.templates, bits: pipeline.hashing.bits, seed: 0 };
  const [direct] = rates(jobs.slice(0, 200), [(j) => {
    const v = createVocabulary();
    const trees = parse(j.candidates, v);
    const counts = score(parseTree(j.gold, v), trees);
    f1 += format1Bytes(w, j, directVectors(opts, trees.map((tree, rank) => ({ tree, score: j.candidates[rank].score, rank }))), counts);
  }], 1);
  const work = chain.extractor.work;
  console.log(`[${label}] one thread, in process (${jobs.length} lists):`);
  console.log(`  read-only floor: parse + normalise      ${n0(floor)} candidates/s`);
  console.log(`  direct path, format 1 (the oracle)      ${n0(direct)} candidates/s`);
  console.log(`  prepare chain, format 3                 ${n0(diff)} candidates/s   ${(diff / floor).toFixed(2)} of the floor (target >= 0.33), ${(diff / direct).toFixed(2)}x the direct path`);
  console.log(`  per candidate: ${(work.computed / work.candidates).toFixed(0)} features computed, ${(work.stored / work.candidates).toFixed(0)} entries stored`);
  return { f1PerCandidate: f1 / (200 * K) };
}

/** Runs prepare in a fresh process; seconds, peak RSS (MB), shard directory bytes. */
function prepare(input, workers, name, tool = root, pipeline = pipelineFile) {
  const out = join(dir, `out-${name}-${workers}`);
  const script = join(dir, `run-${name}-${workers}.mjs`);
  // A script file, not --eval: worker threads inherit execArgv.
  writeFileSync(script, `
    const { runPrepare } = await import(${JSON.stringify(join(tool, 'dist/prepare/run-prepare.js'))}).catch(() => import(${JSON.stringify(join(tool, 'dist/commands/prepare.js'))}));
    const t0 = process.hrtime.bigint();
    const s = await runPrepare({ gold: ${JSON.stringify(input.gold)}, nbest: [${JSON.stringify(input.dump)}], pipeline: ${JSON.stringify(pipeline)}, out: ${JSON.stringify(out)}, workers: ${workers}, quiet: true });
    const secs = Number(process.hrtime.bigint() - t0) / 1e9;
    const cpu = process.cpuUsage();
    console.log(JSON.stringify({ secs, cpu: (cpu.user + cpu.system) / 1e6, rss: process.resourceUsage().maxRSS / 1024, candidates: s.candidates }));`);
  const r = spawnSync(process.execPath, [script], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`prepare failed: ${r.stderr}`);
  const res = JSON.parse(r.stdout.trim().split('\n').pop());
  res.bytes = readdirSync(out).reduce((a, f) => a + statSync(join(out, f)).size, 0);
  rmSync(out, { recursive: true });
  return res;
}

/** The fastest of `runs` (this machine's speed drifts by up to 1.5x over minutes: every timing is a best of REPS, interleaved). */
const best = (runs) => runs.reduce((x, y) => (y.secs < x.secs ? y : x));

function endToEnd(label, input, f1PerCandidate) {
  const runs = { one: [], two: [], base: [] };
  for (let r = 0; r < REPS; r++) {
    runs.one.push(prepare(input, 1, label));
    runs.two.push(prepare(input, 2, label));
    if (BASELINE) runs.base.push(prepare(input, 1, `${label}-baseline`, resolve(BASELINE), join(resolve(BASELINE), 'pipelines/default.json')));
  }
  const one = best(runs.one);
  const two = best(runs.two);
  console.log(`[${label}] prepare end to end, ${n0(one.candidates)} candidates (best of ${REPS}):`);
  console.log(`  1 worker                                ${n0(one.candidates / one.secs)} candidates/s`);
  console.log(`  2 workers                               ${n0(two.candidates / two.secs)} candidates/s   ${(one.secs / two.secs).toFixed(2)}x 1 worker (target >= 1.7)`);
  if (BASELINE) {
    const base = best(runs.base);
    console.log(`  baseline ${BASELINE}, 1 worker     ${n0(base.candidates / base.secs)} candidates/s   this one: ${(base.secs / one.secs).toFixed(2)}x (target >= 5)`);
    // CPU seconds (all threads) drift less than wall time on a shared machine: the work per candidate, compared.
    const cpu = (runs) => Math.min(...runs.map((r) => r.cpu));
    console.log(`  CPU seconds, 1 worker: baseline ${cpu(runs.base).toFixed(1)}, this one ${cpu(runs.one).toFixed(1)}: ${(cpu(runs.base) / cpu(runs.one)).toFixed(2)}x less work`);
  }
  console.log(`  shard directory / input JSON Lines      ${(two.bytes / input.bytes).toFixed(2)} (target <= 1.0); format 1 / format 3: ${((f1PerCandidate * two.candidates) / two.bytes).toFixed(1)} (target >= 5)`);
  return two;
}

console.log(`sheaf prepare benchmark; data in ${dir}`);
const gen = await writeGeneratedLists(dir, 'generated', SPEED, K, 1);
const genF1 = inProcess('generated', gen).f1PerCandidate;
const genRun = endToEnd('generated', gen, genF1);
const real = await parsed('parsed');
const realF1 = inProcess('parsed', real).f1PerCandidate;
endToEnd('parsed', real, realF1);

// Linear cost: 2 workers at two sizes of generated 50-best data.
const half = await writeGeneratedLists(dir, 'half', Math.max(200, Math.floor(SPEED / 4)), K, 4);
const halfRun = best(Array.from({ length: REPS }, () => prepare(half, 2, 'half')));
const perCandidate = (genRun.secs - halfRun.secs) / (genRun.candidates - halfRun.candidates);
console.log(`linear cost (2 workers, generated): ${n0(halfRun.candidates)} candidates in ${halfRun.secs.toFixed(1)} s, ${n0(genRun.candidates)} in ${genRun.secs.toFixed(1)} s: ${(perCandidate * 1e6).toFixed(1)} µs per added candidate`);
console.log(`1M sentences x 50 extrapolated: ${((perCandidate * 50e6 + halfRun.secs) / 60).toFixed(0)} min (target <= 15 min)`);

if (!SKIP_MEMORY) {
  const small = await writeGeneratedLists(dir, 'small', SMALL, 10, 2);
  const s = prepare(small, 2, 'small');
  rmSync(small.dump);
  const mid = await writeGeneratedLists(dir, 'mid', MID, 10, 5);
  const md = prepare(mid, 2, 'mid');
  rmSync(mid.dump);
  const large = await writeGeneratedLists(dir, 'large', LARGE, 10, 3);
  const l = prepare(large, 2, 'large');
  rmSync(large.dump);
  console.log(`peak RSS, 2 workers, 10 candidates: ${n0(SMALL)} sentences ${s.rss.toFixed(0)} MB, ${n0(LARGE)} sentences ${l.rss.toFixed(0)} MB: ratio ${(l.rss / s.rss).toFixed(2)} (target <= 400 MB, ratio <= 1.15)`);
  console.log(`  after warm-up: ${n0(MID)} sentences ${md.rss.toFixed(0)} MB, ${n0(LARGE)} / ${n0(MID)}: ${(l.rss / md.rss).toFixed(2)}`);
}
rmSync(dir, { recursive: true });
