#!/usr/bin/env node
// Benchmark (not a test) for `sheaf prepare`. Generates its own 50-best data
// (~25-word sentences) and prints, from one run:
//   - candidates/s of prepare with 1 worker, as a ratio to reading + JSON.parse
//     of the same dump (the floor); target >= 0.5
//   - speed-up of 2 workers over 1; target >= 1.7 on 2 cores
//   - peak RSS at SMALL and LARGE sentences; target <= 400 MB, ratio <= 1.1
//   - shard bytes / input JSONL bytes; target <= 0.25
//   - extrapolated time for 1M sentences x 50 candidates; target <= 10 min
//
//   node scripts/bench-prepare.mjs [speedSentences=4000] [small=5000] [large=50000]
import { spawnSync } from 'node:child_process';
import { createReadStream, createWriteStream, mkdtempSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { fileURLToPath } from 'node:url';
import { perturb, randomTree, rng } from './lib/gen-trees.mjs';

const [SPEED, SMALL, LARGE] = [Number(process.argv[2] ?? 4000), Number(process.argv[3] ?? 5000), Number(process.argv[4] ?? 50000)];
const K = 50;
const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-bench-prepare-'));
const pipeline = join(root, 'pipelines/default.json');

async function generate(name, sentences, seed) {
  const rand = rng(seed);
  const gold = join(dir, `${name}.trees`);
  const dump = join(dir, `${name}.jsonl`);
  const g = createWriteStream(gold);
  const d = createWriteStream(dump);
  for (let s = 0; s < sentences; s++) {
    const tree = randomTree(rand, 20 + Math.floor(rand() * 11));
    g.write(tree + '\n');
    const cands = [];
    for (let k = 0; k < K; k++) cands.push({ tree: k === 3 ? tree : perturb(rand, tree, 0.15), score: Math.round((-40 - k * 0.4 - rand()) * 1000) / 1000 });
    if (!d.write(JSON.stringify({ id: String(s + 1), fold: null, source: { parser: 'bench', fingerprint: 'none' }, candidates: cands }) + '\n')) {
      await new Promise((r) => d.once('drain', r));
    }
  }
  await Promise.all([new Promise((r) => g.end(r)), new Promise((r) => d.end(r))]);
  return { gold, dump, bytes: statSync(dump).size };
}

/** Runs prepare in a fresh process; returns seconds and peak RSS (MB). */
function prepare(input, workers, name) {
  const out = join(dir, `out-${name}-${workers}`);
  const code = `
    const { runPrepare } = await import(${JSON.stringify(join(root, 'dist/commands/prepare.js'))});
    const t0 = process.hrtime.bigint();
    const s = await runPrepare({ gold: ${JSON.stringify(input.gold)}, nbest: [${JSON.stringify(input.dump)}], pipeline: ${JSON.stringify(pipeline)}, out: ${JSON.stringify(out)}, workers: ${workers}, quiet: true });
    const secs = Number(process.hrtime.bigint() - t0) / 1e9;
    console.log(JSON.stringify({ secs, rss: process.resourceUsage().maxRSS / 1024, candidates: s.candidates, written: s.written }));`;
  // A script file, not --eval: worker threads inherit execArgv.
  const script = join(dir, `run-${name}-${workers}.mjs`);
  writeFileSync(script, code);
  const r = spawnSync(process.execPath, [script], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`prepare failed: ${r.stderr}`);
  const res = JSON.parse(r.stdout.trim().split('\n').pop());
  res.shardBytes = readdirSync(out).filter((f) => /^shard-\d+\.msgpack$/.test(f)).reduce((a, f) => a + statSync(join(out, f)).size, 0);
  rmSync(out, { recursive: true });
  return res;
}

async function floor(input) {
  const t0 = process.hrtime.bigint();
  let n = 0;
  const rl = createInterface({ input: createReadStream(input.dump), crlfDelay: Infinity });
  for await (const line of rl) n += JSON.parse(line).candidates.length;
  return { secs: Number(process.hrtime.bigint() - t0) / 1e9, candidates: n };
}

const mb = (x) => `${x.toFixed(0)} MB`;
console.log(`generating ${SPEED}, ${SMALL} and ${LARGE} sentences × ${K} candidates (20–30 words) in ${dir}`);
const speedData = await generate('speed', SPEED, 1);
const f = await floor(speedData);
const one = prepare(speedData, 1, 'speed');
const two = prepare(speedData, 2, 'speed');
const floorRate = f.candidates / f.secs;
const oneRate = one.candidates / one.secs;
const twoRate = two.candidates / two.secs;
console.log(`floor: read + JSON.parse            ${Math.round(floorRate).toLocaleString('en-US')} candidates/s`);
console.log(`prepare, 1 worker                   ${Math.round(oneRate).toLocaleString('en-US')} candidates/s   ratio to floor ${(oneRate / floorRate).toFixed(3)} (target >= 0.5)`);
console.log(`prepare, 2 workers                  ${Math.round(twoRate).toLocaleString('en-US')} candidates/s   speed-up ${(twoRate / oneRate).toFixed(2)} (target >= 1.7)`);
console.log(`shard bytes / input JSONL bytes     ${(two.shardBytes / speedData.bytes).toFixed(2)} (target <= 0.25)`);
rmSync(speedData.dump);

const small = await generate('small', SMALL, 2);
const s = prepare(small, 2, 'small');
rmSync(small.dump);
const large = await generate('large', LARGE, 3);
const l = prepare(large, 2, 'large');
rmSync(large.dump);
console.log(`peak RSS at ${SMALL} sentences       ${mb(s.rss)}`);
console.log(`peak RSS at ${LARGE} sentences      ${mb(l.rss)}   ratio ${(l.rss / s.rss).toFixed(2)} (target <= 400 MB, ratio <= 1.1)`);
const perCandidate = l.secs / l.candidates;
console.log(`2 workers on ${LARGE} sentences:    ${Math.round(l.candidates / l.secs).toLocaleString('en-US')} candidates/s`);
console.log(`extrapolated 1M sentences × 50:     ${((perCandidate * 50e6) / 60).toFixed(0)} min (target <= 10 min)`);
rmSync(dir, { recursive: true });
