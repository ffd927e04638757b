/**
 * The demo, end to end on the shipped corpus (invented mountain-hut logs):
 * split the training treebank into 10 folds, jackknife it with the embedded
 * k-best parser (50-best; the dev and test treebanks parsed by a model trained
 * on all folds), prepare training, dev and test shards, train the averaged
 * perceptron (dev picks the epoch), and report base, oracle and re-ranked F1
 * on the test split with a paired bootstrap.
 */
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { dir as tmpDir } from 'tmp-promise';
import type { F1Row } from '../core/f1-table.js';
import { formatEval, runEval, type EvalSummary } from '../eval/run-eval.js';
import { runSplit } from '../folds/run-split.js';
import { dumpName, runJackknife } from '../jackknife/run-jackknife.js';
import { runPrepare, type PrepareSummary } from '../prepare/run-prepare.js';
import { runTrain, type TrainSummary } from '../train/run-train.js';
import { makeFolder } from '../io/fs-faults.js';

const corpus = (name: string) => fileURLToPath(new URL(`../../demo-corpus/${name}`, import.meta.url));
export const DEMO_TRAIN = corpus('huts-train.trees');
export const DEMO_DEV = corpus('huts-dev.trees');
export const DEMO_TEST = corpus('huts-test.trees');
export const DEMO_PIPELINE = fileURLToPath(new URL('../../pipelines/demo.json', import.meta.url));

export interface DemoSummary {
  dir: string;
  base: F1Row;
  oracle: F1Row;
  reranked: F1Row;
  bootstrap: EvalSummary['bootstrap'];
  gapRecovered: number | null;
  le40: EvalSummary['le40'];
  prepare: { train: PrepareSummary; dev: PrepareSummary; test: PrepareSummary };
  train: TrainSummary;
  seconds: number;
}

export async function runDemo(options: { out?: string; quiet?: boolean; workers?: number }, print: (line: string) => void): Promise<DemoSummary> {
  const started = Date.now();
  const temp = options.out ? null : await tmpDir({ prefix: 'sheaf-demo-', unsafeCleanup: true });
  const dir = options.out ?? temp!.path;
  try {
    return await demo(dir, options, print, started, temp !== null);
  } finally {
    await temp?.cleanup();
  }
}

async function demo(dir: string, options: { out?: string; quiet?: boolean; workers?: number }, print: (line: string) => void, started: number, temporary: boolean): Promise<DemoSummary> {
  makeFolder(dir);
  const quiet = true;
  const step = (s: string) => print(`sheaf demo: ${s}`);
  step('invented hut-log treebanks: 4,000 training, 400 dev, 400 test sentences');
  const plan = join(dir, 'plan');
  const split = await runSplit({ gold: DEMO_TRAIN, folds: 10, out: plan, quiet });
  step(`split: ${split.sentences.toLocaleString('en-US')} training sentences into ${split.k} folds`);
  const nbest = join(dir, 'nbest');
  const jk = await runJackknife({ plan, out: nbest, nbest: 50, workers: options.workers, parse: [DEMO_DEV, DEMO_TEST], quiet });
  step(`jackknife: every fold parsed at 50-best by the embedded PCFG trained on the other nine; dev and test by one trained on all (${jk.seconds.toFixed(1)} s)`);
  const prep = (name: string, gold: string, dumps: string[], withPlan: boolean) =>
    runPrepare({ gold, nbest: dumps, pipeline: DEMO_PIPELINE, out: join(dir, name), plan: withPlan ? plan : undefined, workers: options.workers, quiet });
  const train = await prep('train-shards', DEMO_TRAIN, split.perFold.map((_, k) => join(nbest, `fold-${k}.jsonl.gz`)), true);
  const dev = await prep('dev-shards', DEMO_DEV, [join(nbest, dumpName(DEMO_DEV))], false);
  const test = await prep('test-shards', DEMO_TEST, [join(nbest, dumpName(DEMO_TEST))], false);
  step(`prepare: ${train.candidates.toLocaleString('en-US')} training candidates, ${dev.candidates.toLocaleString('en-US')} dev, ${test.candidates.toLocaleString('en-US')} test`);
  const model = join(dir, 'model');
  const train2 = await runTrain({ shards: join(dir, 'train-shards'), dev: join(dir, 'dev-shards'), out: model, quiet });
  const best = train2.epochs[train2.bestEpoch - 1];
  step(`train: averaged perceptron, ${train2.epochs.length} epochs over ${train.written.toLocaleString('en-US')} lists; kept epoch ${train2.bestEpoch} (dev F1 ${best.devF1!.toFixed(2)})`);
  const e = await runEval({ shards: join(dir, 'test-shards'), model });
  print('');
  for (const l of formatEval(e, 'test split')) print(l);
  print('');
  print('base: the parser\'s own best tree; oracle: the best tree in each 50-best list (the most a re-ranker could reach);');
  print('re-ranked: the tree the trained model picks.');
  print(temporary ? 'the files were made in a temporary folder, now removed; keep them with `sheaf demo -o DIR`.' : `everything is in ${dir}`);
  print('next, on your own treebank and parser: see "The whole job, step by step" in the README (sheaf split, sheaf jackknife --train-cmd/--parse-cmd, sheaf prepare, sheaf train, sheaf eval).');
  return {
    dir, base: e.base, oracle: e.oracle, reranked: e.reranked, bootstrap: e.bootstrap, gapRecovered: e.gapRecovered, le40: e.le40,
    prepare: { train, dev, test }, train: train2, seconds: (Date.now() - started) / 1000,
  };
}
