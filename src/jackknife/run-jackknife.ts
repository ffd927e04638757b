/**
 * `sheaf jackknife`: a fold plan → one n-best dump per fold, each parsed by a
 * base model trained on the other folds, plus dumps of other treebanks
 * (`--parse`) by a model trained on all folds.
 *
 * Incremental: models are cached under their fingerprint (the parser and its
 * settings or commands, and the digest of the training part); each output is
 * recorded in NBEST_DIR/jackknife.json with what made it (model, input digest,
 * list depth), so a re-run re-makes only what changed and says why. Outputs
 * are written under NAME.tmp and renamed, and recorded as each finishes, so a
 * killed run redoes only the unfinished ones. Each fold's model identity is
 * written into the plan's folds.json, so `prepare --plan` checks lists
 * against it.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { basename, join } from 'node:path';
import pLimit from 'p-limit';
import { EnvironmentError, UsageError } from '../core/errors.js';
import { writeTree } from '../core/write-brackets.js';
import { emptyJackknifeState, formatJackknifeState, parseJackknifeState, staleReason, type JackknifeState, type OutputRecord } from '../formats/jackknife-state.js';
import { fileSha256, writeFileAtomic } from '../io/files.js';
import { claimOutputFolder } from '../io/output-folder.js';
import { loadFoldPlan, saveFoldPlan } from '../io/fold-plan-file.js';
import { withFileLock } from '../io/file-lock.js';
import { GzipLines } from '../io/gzip-lines.js';
import { checkPcfgSettings, encodeGrammar, PcfgTrainer, settingsKey, type PcfgSettings } from '../parser/index.js';
import type { ParseResult } from '../parser/index.js';
import { OrderedBatches, OrderedPool } from '../pool/ordered-pool.js';
import type { ModelIdentity } from '../records.js';
import { heldoutName } from '../folds/run-split.js';
import { externalParser, parseExternal, readExternalOutput, trainExternal, type ExternalParser } from './external.js';
import type { ParseJob, ParseWorkerInit } from './parse-worker.js';
import { normalisedTrees, sentencesOf, treebankDigest } from './treebank-parts.js';
import { environmentError, makeFolder } from '../io/fs-faults.js';

export interface JackknifeOptions {
  plan: string;
  out: string;
  nbest?: number;
  workers?: number;
  parse?: string[];
  trainCmd?: string;
  parseCmd?: string;
  /** Settings of the embedded parser (strings from the command line, or values). */
  pcfg?: Record<string, unknown>;
  quiet?: boolean;
  /** Write into a folder that holds other files. */
  force?: boolean;
  /**
   * Only decide: record the folds' models in the plan and list the stale
   * outputs (summary.stale) without making any (what a cluster submission does first).
   */
  decideOnly?: boolean;
  /**
   * Make only these outputs (a cluster task): the plan is left alone (the
   * submission recorded it) and jackknife.json is updated under a lock, as
   * other tasks write it too.
   */
  only?: string[];
}

export interface JackknifeSummary {
  out: string;
  parser: string;
  outputs: { file: string; fold: number | null; sentences: number; remade: boolean; why: string }[];
  remade: number;
  upToDate: number;
  seconds: number;
  /** With `decideOnly`: the outputs that must be (re)made, and what each will be made from (as jackknife.json will record it). */
  stale?: string[];
  planned?: Record<string, Omit<OutputRecord, 'sentences' | 'sha256' | 'why'>>;
}

export const STATE_FILE = 'jackknife.json';
export const EMBEDDED = 'sheaf-pcfg';
const TREEBANK_EXT = /\.(trees|mrg|jsonl|txt)$/;

/** The dump name of a `--parse` file: its base name without .gz and one treebank extension. */
export function dumpName(file: string): string {
  return `${basename(file).replace(/\.gz$/, '').replace(TREEBANK_EXT, '')}.jsonl.gz`;
}

interface Target {
  file: string;
  fold: number | null;
  /** Treebanks of the training part. */
  train: string[];
  /** The treebank whose sentences are parsed. */
  input: string;
}

export async function runJackknife(o: JackknifeOptions, log: (line: string) => void = () => {}): Promise<JackknifeSummary> {
  try {
    return await jackknifeOnce(o, log);
  } catch (e) {
    throw environmentError(e, o.out, 'write', 'run the same command again: the outputs finished so far are kept');
  }
}

async function jackknifeOnce(o: JackknifeOptions, log: (line: string) => void): Promise<JackknifeSummary> {
  const started = Date.now();
  const nbest = o.nbest ?? 50;
  if (!Number.isInteger(nbest) || nbest < 1 || nbest > 10000) throw new UsageError(`expected \`--nbest\` to be an integer from 1 to 10000, got \`${o.nbest}\``);
  const workers = o.workers ?? availableParallelism();
  if (!Number.isInteger(workers) || workers < 0 || workers > 256) throw new UsageError(`expected \`--workers\` to be an integer from 0 to 256, got \`${o.workers}\``);
  if ((o.trainCmd === undefined) !== (o.parseCmd === undefined)) throw new UsageError('expected both `--train-cmd` and `--parse-cmd` (an external parser needs both), or neither (the embedded parser)');
  const external = o.trainCmd !== undefined ? externalParser(o.trainCmd, o.parseCmd!) : null;
  if (external && o.pcfg && Object.keys(o.pcfg).length > 0) throw new UsageError('`--pcfg` sets the embedded parser; it cannot go with `--train-cmd` / `--parse-cmd`');
  const settings = external ? null : checkPcfgSettings(o.pcfg ?? {});
  const { plan } = loadFoldPlan(o.plan);
  const heldout = plan.folds.map((f) => join(o.plan, heldoutName(f.fold)));
  for (const f of heldout) if (!existsSync(f)) throw new UsageError(`the plan \`${o.plan}\` has no held-out file \`${f}\`; make the plan with \`sheaf split\``);
  const parseFiles = o.parse ?? [];
  for (const f of parseFiles) if (!existsSync(f)) throw new UsageError(`cannot read \`${f}\` (given to \`--parse\`): no such file`);
  const names = new Map<string, string>();
  for (const f of plan.folds) names.set(`fold-${f.fold}.jsonl.gz`, `fold ${f.fold}`);
  for (const f of parseFiles) {
    const n = dumpName(f);
    if (names.has(n)) throw new UsageError(`\`--parse ${f}\` would write \`${n}\`, which ${names.get(n)} also writes; rename one of the files`);
    names.set(n, `\`${f}\``);
  }
  claimOutputFolder(o.out, 'nbest', { force: o.force });
  makeFolder(join(o.out, 'models'));
  makeFolder(join(o.out, 'logs'));
  const stateFile = join(o.out, STATE_FILE);
  const state: JackknifeState = existsSync(stateFile) ? parseJackknifeState(readFileSync(stateFile, 'utf8')) : emptyJackknifeState();

  // Digests of every held-out part: a fold trains on all the others.
  const foldDigest = await Promise.all(heldout.map(treebankDigest));
  const targets: Target[] = plan.folds.map((f, k) => ({ file: `fold-${f.fold}.jsonl.gz`, fold: f.fold, train: heldout.filter((_, j) => j !== k), input: heldout[k] }));
  for (const f of parseFiles) targets.push({ file: dumpName(f), fold: null, train: heldout, input: f });
  for (const f of o.only ?? []) {
    if (!targets.some((t) => t.file === f)) throw new UsageError(`this task makes \`${f}\`, which the plan \`${o.plan}\` and the \`--parse\` files no longer give; submit the jackknife again`);
  }
  const chosen = o.only ? targets.filter((t) => o.only!.includes(t.file)) : targets;

  const summary: JackknifeSummary = { out: o.out, parser: external ? external.name : EMBEDDED, outputs: [], remade: 0, upToDate: 0, seconds: 0, ...(o.decideOnly ? { stale: [], planned: {} } : {}) };
  const failures: string[] = [];
  const limit = pLimit(Math.max(1, external ? workers || 1 : 1));
  const n = (x: number) => x.toLocaleString('en-US');
  const planModels = new Map<number, ModelIdentity>();

  const runTarget = async (t: Target) => {
    const trainDigest = digestOf(t.fold === null ? foldDigest : foldDigest.filter((_, j) => plan.folds[j].fold !== t.fold));
    const model: ModelIdentity = external
      ? { parser: external.name, fingerprint: digestOf([external.digest, trainDigest]) }
      : { parser: EMBEDDED, fingerprint: digestOf([settingsKey(settings!), trainDigest]) };
    const input = await treebankDigest(t.input);
    const outFile = join(o.out, t.file);
    const had = state.outputs[t.file];
    const fileOk = Boolean(had) && existsSync(outFile) && fileSha256(outFile) === had.sha256;
    const why = staleReason(had, { fold: t.fold, model, input, nbest }, fileOk);
    const what = t.fold === null ? `\`${t.file}\`` : `fold ${t.fold}`;
    if (t.fold !== null) planModels.set(t.fold, model);
    if (why === null) {
      summary.upToDate++;
      summary.outputs.push({ file: t.file, fold: t.fold, sentences: had.sentences, remade: false, why: had.why });
      return;
    }
    if (o.decideOnly) {
      summary.stale!.push(t.file);
      summary.planned![t.file] = { fold: t.fold, model, input, nbest };
      summary.outputs.push({ file: t.file, fold: t.fold, sentences: had?.sentences ?? 0, remade: false, why });
      return;
    }
    const t0 = Date.now();
    const lists = external
      ? await externalTarget(external, t, model, nbest, o.out, what)
      : await embeddedTarget(settings!, t, model, nbest, o.out, workers);
    const out = new GzipLines(outFile);
    let sentences = 0;
    let sha256: string;
    try {
      for await (const { id, candidates } of lists) {
        out.line(JSON.stringify({ id, fold: t.fold, source: model, candidates }));
        sentences++;
      }
      sha256 = out.finish();
    } catch (e) {
      out.abandon();
      throw e;
    }
    const record: OutputRecord = { fold: t.fold, model, input, nbest, sentences, sha256, why };
    state.outputs[t.file] = record;
    if (o.only) {
      // Other tasks write the state too: re-read it under a lock and change only this output's entry.
      await withFileLock(`${stateFile}.lock`, () => {
        const now = existsSync(stateFile) ? parseJackknifeState(readFileSync(stateFile, 'utf8')) : emptyJackknifeState();
        now.outputs[t.file] = record;
        writeFileAtomic(stateFile, formatJackknifeState(now));
      });
    } else writeFileAtomic(stateFile, formatJackknifeState(state));
    summary.remade++;
    summary.outputs.push({ file: t.file, fold: t.fold, sentences, remade: true, why });
    if (!o.quiet) log(`sheaf jackknife: ${what}: ${n(sentences)} sentences at ${nbest}-best in ${((Date.now() - t0) / 1000).toFixed(1)} s (${why})`);
  };

  // A fault of the machine (a full disk …) would fail every output alike, and a bug is a bug: no output
  // queued after one starts, those running finish (or fail), then the run stops with the first.
  let fatal: { error: unknown } | null = null;
  await Promise.all(chosen.map((t) => limit(async () => {
    if (fatal) return;
    try {
      await runTarget(t);
    } catch (e) {
      if (!(e instanceof UsageError) || e instanceof EnvironmentError) {
        fatal ??= { error: e };
        return;
      }
      failures.push(e.message);
      if (!o.quiet) log(`sheaf jackknife: ${t.fold === null ? t.file : `fold ${t.fold}`} failed: ${e.message}`);
    }
  })));
  if (fatal) throw (fatal as { error: unknown }).error;

  // Record each fold's base model in the plan (even for outputs found up to date).
  let changed = false;
  for (const f of plan.folds) {
    const m = planModels.get(f.fold);
    if (m && (f.model?.fingerprint !== m.fingerprint || f.model?.parser !== m.parser)) {
      f.model = m;
      changed = true;
    }
  }
  if (changed && !o.only) saveFoldPlan(o.plan, plan);
  summary.outputs.sort((a, b) => a.file.localeCompare(b.file));
  summary.seconds = (Date.now() - started) / 1000;
  if (failures.length > 0) throw new UsageError(`${failures.length} output(s) failed (the others are kept):\n${failures.join('\n')}`);
  if (!o.quiet && !o.decideOnly) {
    log(summary.remade === 0
      ? `sheaf jackknife: ${o.out} is up to date (${summary.upToDate} outputs); nothing to do`
      : `sheaf jackknife: re-made ${summary.remade} output(s), ${summary.upToDate} up to date, in ${summary.seconds.toFixed(1)} s; reasons in ${stateFile}`);
  }
  return summary;
}

function digestOf(parts: string[]): string {
  return `sha256:${createHash('sha256').update(parts.join('\n')).digest('hex')}`;
}

/** The embedded parser: train (or load the cached model), then parse on the worker pool. */
async function* embeddedTarget(settings: PcfgSettings, t: Target, model: ModelIdentity, nbest: number, out: string, workers: number): AsyncGenerator<{ id: string; candidates: ParseResult[] }> {
  const modelFile = join(out, 'models', `${model.fingerprint.replace(/^sha256:/, '')}.pcfg`);
  let grammar: Uint8Array;
  if (existsSync(modelFile)) grammar = readFileSync(modelFile);
  else {
    const trainer = new PcfgTrainer(settings);
    for await (const { tree } of normalisedTrees(t.train)) trainer.add(tree);
    grammar = encodeGrammar(trainer.finish());
    writeFileAtomic(modelFile, grammar);
  }
  const init: ParseWorkerInit = { grammar, nbest };
  const pool = await OrderedPool.start<ParseJob, ParseResult[]>({ size: workers, module: new URL('./parse-worker.js', import.meta.url), init });
  const done: { id: string; candidates: ParseResult[] }[] = [];
  const batches = new OrderedBatches<string, ParseJob, ParseResult[]>(pool, { batchSize: 4, maxInFlight: Math.max(2, pool.size * 3) }, (id, r) => done.push({ id, candidates: r ?? [] }));
  try {
    for await (const s of sentencesOf(t.input)) {
      await batches.push(s.id, { words: s.words });
      while (done.length > 0) yield done.shift()!;
    }
    await batches.finish();
    while (done.length > 0) yield done.shift()!;
  } finally {
    await pool.close();
  }
}

/** An external parser: write its training treebank and input, run its commands, read its output. */
async function* externalTarget(p: ExternalParser, t: Target, model: ModelIdentity, nbest: number, out: string, what: string): AsyncGenerator<{ id: string; candidates: { tree: string; score: number }[] }> {
  const hex = model.fingerprint.replace(/^sha256:/, '');
  const modelDir = join(out, 'models', hex);
  const stem = t.file.replace(/\.jsonl\.gz$/, '');
  if (!existsSync(join(modelDir, '.sheaf-trained'))) {
    mkdirSync(modelDir, { recursive: true });
    const trainFile = join(out, 'logs', `${stem}.train.trees`);
    const lines: string[] = [];
    for await (const { tree } of normalisedTrees(t.train)) lines.push(writeTree(tree));
    writeFileSync(trainFile, lines.join('\n') + '\n');
    await trainExternal(p, trainFile, modelDir, nbest, join(out, 'logs', `${stem}.train.stderr`), `${what}: training`);
    writeFileSync(join(modelDir, '.sheaf-trained'), `${model.fingerprint}\n`);
  }
  const ids: string[] = [];
  const input: string[] = [];
  for await (const s of sentencesOf(t.input)) {
    ids.push(s.id);
    input.push(s.words.join(' '));
  }
  const inputFile = join(out, 'logs', `${stem}.input.txt`);
  const outputFile = join(out, 'logs', `${stem}.output`);
  writeFileSync(inputFile, input.join('\n') + '\n');
  await parseExternal(p, modelDir, inputFile, outputFile, nbest, join(out, 'logs', `${stem}.parse.stderr`), `${what}: parsing`);
  const lists = readExternalOutput(outputFile, ids.length, nbest, what);
  for (let k = 0; k < ids.length; k++) yield { id: ids[k], candidates: lists[k] };
}
