#!/usr/bin/env node
// Benchmark (not a test) for `prepare --part I/N` and `sheaf merge`. Generates
// its own input (random 20–30-word trees, 50-best lists of relabelled copies:
// the generated lists of bench-prepare.mjs) and prints figures measured in one
// run; asserts nothing. Every run is a fresh process with 1 worker thread (a
// cluster task with one CPU), so its time and peak RSS are its own. Times are
// CPU seconds of the process (all threads): on a shared machine they vary
// less than wall time, and they are what a cluster bills; wall seconds beside.
//
// At two corpus sizes:
//   - one machine: prepare, 1 worker (the reference);
//   - 4 parts, one after the other: each part's time, and their sum against
//     one machine's (what reading every input in every part costs);
//   - part 0 of 1000: a part with (almost) nothing to do — the fixed cost of
//     reading all inputs and building the gold index, per record;
//   - merge of the 4 parts: MB/s of shards written, its time against one
//     machine's prepare, peak RSS (bounded: flat across sizes);
//   - the merged folder against one machine's, by sha256 of every file.
// Then the linear costs per record and per candidate, which README's "Beyond
// one machine" extrapolates to 10M sentences x 50 candidates.
//
//   node scripts/bench-merge.mjs [--small 1000] [--large 4000]
import { createHash } from 'node:crypto';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { option } from './lib/args.mjs';
import { writeGeneratedLists } from './lib/gen-trees.mjs';

const SMALL = Number(option('small', 1000));
const LARGE = Number(option('large', 4000));
const K = 50;
const PARTS = 4;
const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-bench-merge-'));
const pipeline = join(root, 'pipelines/default.json');
const n0 = (x) => Math.round(x).toLocaleString('en-US');
const mb = (b) => b / 2 ** 20;


/** Runs `fn` of a dist module in a fresh process: wall seconds, CPU seconds (all threads), peak RSS (MB). */
function fresh(name, module, fn, options) {
  const script = join(dir, `run-${name}.mjs`);
  writeFileSync(script, `
    const { ${fn} } = await import(${JSON.stringify(join(root, 'dist', module))});
    const t0 = process.hrtime.bigint();
    const s = await ${fn}(${JSON.stringify(options)});
    const secs = Number(process.hrtime.bigint() - t0) / 1e9;
    const u = process.resourceUsage();
    console.log(JSON.stringify({ secs, cpu: (u.userCPUTime + u.systemCPUTime) / 1e6, rss: u.maxRSS / 1024, candidates: s.candidates }));`);
  const r = spawnSync(process.execPath, [script], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`${name} failed: ${r.stderr}`);
  return JSON.parse(r.stdout.trim().split('\n').pop());
}

const prepare = (name, input, out, part) => fresh(name, 'prepare/run-prepare.js', 'runPrepare', { gold: input.gold, nbest: [input.dump], pipeline, out, workers: 1, quiet: true, ...(part ? { part } : {}) });

/** sha256 of every file of a folder, by name. */
const digests = (d) => Object.fromEntries(readdirSync(d).filter((f) => statSync(join(d, f)).isFile()).sort().map((f) => [f, createHash('sha256').update(readFileSync(join(d, f))).digest('hex')]));
const shardBytes = (d) => JSON.parse(readFileSync(join(d, 'manifest.json'), 'utf8')).shards.reduce((a, s) => a + s.bytes, 0);

async function size(label, sentences, seed) {
  const input = await writeGeneratedLists(dir, label, sentences, K, seed);
  const one = prepare(`${label}-one`, input, join(dir, `${label}-one`));
  const parts = [];
  for (let I = 0; I < PARTS; I++) parts.push(prepare(`${label}-part${I}`, input, join(dir, `${label}-part-${I}`), { index: I, of: PARTS }));
  const idle = prepare(`${label}-idle`, input, join(dir, `${label}-idle`), { index: 0, of: 1000 });
  const merged = join(dir, `${label}-merged`);
  const merge = fresh(`${label}-merge`, 'merge/run-merge.js', 'runMerge', { parts: parts.map((_, I) => join(dir, `${label}-part-${I}`)), out: merged, quiet: true });
  const a = digests(merged);
  const b = digests(join(dir, `${label}-one`));
  const same = JSON.stringify(a) === JSON.stringify(b);
  const bytes = shardBytes(merged);
  // What the part folders hold besides their shards: side files, reject positions, count files, manifests.
  const folderBytes = (d) => readdirSync(d).reduce((x, f) => x + statSync(join(d, f)).size, 0);
  const partDirs = parts.map((_, I) => join(dir, `${label}-part-${I}`));
  const partTotal = partDirs.reduce((x, d) => x + folderBytes(d), 0);
  const sideTotal = partDirs.reduce((x, d) => x + readdirSync(d).filter((f) => f.endsWith('.part.msgpack')).reduce((y, f) => y + statSync(join(d, f)).size, 0), 0);
  const partSecs = parts.map((p) => p.cpu);
  const sum = partSecs.reduce((x, y) => x + y, 0);
  console.log(`[${label}] ${n0(sentences)} sentences x ${K}: input ${mb(input.bytes).toFixed(1)} MB, shards ${mb(bytes).toFixed(1)} MB (${(bytes / one.candidates).toFixed(0)} bytes per candidate)`);
  console.log(`  one machine, 1 worker                  ${one.cpu.toFixed(2)} s CPU (${one.secs.toFixed(2)} s wall)   ${n0(one.candidates / one.cpu)} candidates per CPU second   peak RSS ${one.rss.toFixed(0)} MB`);
  console.log(`  ${PARTS} parts, 1 worker each               ${partSecs.map((x) => x.toFixed(2)).join(' + ')} s CPU = ${sum.toFixed(2)} s: ${(sum / one.cpu).toFixed(2)}x one machine; the largest part ${(Math.max(...partSecs) / one.cpu).toFixed(2)} of it (wall ${Math.max(...parts.map((p) => p.secs)).toFixed(2)} s); peak RSS ${Math.max(...parts.map((p) => p.rss)).toFixed(0)} MB`);
  console.log(`  part 0 of 1000 (reading only)          ${idle.cpu.toFixed(2)} s CPU: ${((idle.cpu / sentences) * 1e6).toFixed(0)} µs per input record`);
  console.log(`  merge of ${PARTS} parts                      ${merge.cpu.toFixed(2)} s CPU (${merge.secs.toFixed(2)} s wall)   ${(mb(bytes) / merge.cpu).toFixed(0)} MB of shards per CPU second   ${(merge.cpu / one.cpu).toFixed(3)} of one machine's prepare   peak RSS ${merge.rss.toFixed(0)} MB`);
  console.log(`  part folders                           ${mb(partTotal).toFixed(1)} MB in all: ${(partTotal / folderBytes(merged)).toFixed(2)}x the merged folder; side files ${mb(sideTotal).toFixed(1)} MB (${(sideTotal / sentences).toFixed(0)} bytes per sentence)`);
  console.log(`  merged folder = one machine's, every file by sha256: ${same ? 'yes' : 'NO'} (${Object.keys(a).length} files)`);
  return { sentences, candidates: one.candidates, one, parts, idle, merge, bytes };
}

console.log(`sheaf merge benchmark; data in ${dir}`);
const s = await size('small', SMALL, 11);
const l = await size('large', LARGE, 12);
const d = (f) => f(l) - f(s);
const perCandidate = d((x) => x.one.cpu) / d((x) => x.candidates);
const readPerRecord = d((x) => x.idle.cpu) / d((x) => x.sentences);
const mergePerByte = d((x) => x.merge.cpu) / d((x) => x.bytes);
const bytesPerCandidate = l.bytes / l.candidates;
console.log('linear costs, from the two sizes (difference of CPU seconds over difference of work):');
console.log(`  prepare, 1 worker:   ${(perCandidate * 1e6).toFixed(1)} µs per added candidate`);
console.log(`  reading every input in a part: ${(readPerRecord * 1e6).toFixed(0)} µs per added record (of ${K} candidates)`);
console.log(`  merge:               ${(mergePerByte * 2 ** 20 * 1e3).toFixed(1)} ms per added MB of shards (${(1 / (mergePerByte * 2 ** 20)).toFixed(0)} MB per CPU second)`);
console.log(`  shards:              ${bytesPerCandidate.toFixed(0)} bytes per candidate`);
console.log(`  peak RSS: merge ${s.merge.rss.toFixed(0)} → ${l.merge.rss.toFixed(0)} MB (x${(l.merge.rss / s.merge.rss).toFixed(2)} for x${(LARGE / SMALL).toFixed(0)} the data); a part ${Math.max(...s.parts.map((p) => p.rss)).toFixed(0)} → ${Math.max(...l.parts.map((p) => p.rss)).toFixed(0)} MB`);
rmSync(dir, { recursive: true });
