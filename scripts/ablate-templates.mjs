#!/usr/bin/env node
// Experiment (not a test): which feature templates carry the re-ranker's gain.
//   npm run build && node scripts/ablate-templates.mjs [--pipeline demo] [--nbest 50] [--epochs 10]
// Jackknifes the demo training split once (10 folds, embedded parser, N-best,
// dev split parsed by the full model), then for the full pipeline and for the
// pipeline without each template in turn: prepares train and dev shards,
// trains the averaged perceptron with dev selection, and prints dev F1 (base,
// oracle, re-ranked) and the loss against the full set. Prints; asserts nothing.
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runEval } from '../dist/eval/run-eval.js';
import { runSplit } from '../dist/folds/run-split.js';
import { dumpName, runJackknife } from '../dist/jackknife/run-jackknife.js';
import { runPrepare } from '../dist/prepare/run-prepare.js';
import { runTrain } from '../dist/train/run-train.js';
import { option } from './lib/args.mjs';

const root = fileURLToPath(new URL('..', import.meta.url));
const pipelineFile = join(root, 'pipelines', `${option('pipeline', 'demo')}.json`);
const nbest = Number(option('nbest', '50'));
const epochs = Number(option('epochs', '10'));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-ablate-'));
const at = (n) => join(dir, n);
const fmt = (x) => x.toFixed(2);

try {
  const gold = join(root, 'demo-corpus/huts-train.trees');
  const dev = join(root, 'demo-corpus/huts-dev.trees');
  const split = await runSplit({ gold, folds: 10, out: at('plan'), quiet: true });
  await runJackknife({ plan: at('plan'), out: at('nbest'), nbest, parse: [dev], quiet: true });
  const dumps = split.perFold.map((_, k) => join(at('nbest'), `fold-${k}.jsonl.gz`));
  const devDump = join(at('nbest'), dumpName(dev));

  const base = JSON.parse(readFileSync(pipelineFile, 'utf8'));
  // Paths inside a pipeline resolve against its file: make them absolute for the copies.
  const absolute = (block) => (block.path ? { ...block, path: resolve(dirname(pipelineFile), block.path) } : block);
  const extract = base.stages.find((s) => s.stage === 'extract-features.v1');
  const templates = extract.templates.map((t) => t.template);
  const variants = [['(all templates)', null], ...templates.map((t) => [`without ${t}`, t])];

  const rows = [];
  for (const [label, drop] of variants) {
    const p = {
      ...base,
      description: label,
      stages: base.stages.map((s) => (s === extract ? { ...s, templates: s.templates.filter((t) => t.template !== drop).map(absolute) } : s)),
    };
    const file = at(`pipeline-${rows.length}.json`);
    writeFileSync(file, JSON.stringify(p, null, 2));
    const tag = `v${rows.length}`;
    await runPrepare({ gold, nbest: dumps, plan: at('plan'), pipeline: file, out: at(`${tag}-train`), quiet: true });
    await runPrepare({ gold: dev, nbest: [devDump], pipeline: file, out: at(`${tag}-dev`), quiet: true });
    const t = await runTrain({ shards: at(`${tag}-train`), dev: at(`${tag}-dev`), out: at(`${tag}-model`), epochs, quiet: true });
    const e = await runEval({ shards: at(`${tag}-dev`), model: at(`${tag}-model`), samples: 1000, seed: 1 });
    rows.push({ label, base: e.base.f1, oracle: e.oracle.f1, reranked: e.reranked.f1, epoch: t.bestEpoch, kept: t.kept });
    rmSync(at(`${tag}-train`), { recursive: true, force: true });
    const r = rows[rows.length - 1];
    console.log(`${label.padEnd(30)} dev F1 base ${fmt(r.base)}  oracle ${fmt(r.oracle)}  re-ranked ${fmt(r.reranked)}  (best epoch ${r.epoch}, ${r.kept} features kept)${rows.length > 1 ? `  loss ${fmt(rows[0].reranked - r.reranked)}` : ''}`);
  }
  console.log('');
  console.log('gain over base carried by each template (re-ranked F1 lost when it is dropped):');
  for (const r of [...rows.slice(1)].sort((a, b) => (rows[0].reranked - b.reranked) - (rows[0].reranked - a.reranked))) {
    console.log(`  ${r.label.replace('without ', '').padEnd(22)} ${fmt(rows[0].reranked - r.reranked).padStart(6)}`);
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
