/**
 * `sheaf prepare`, orchestrated: n-best dumps + gold treebank + pipeline →
 * shard directory.
 *
 * Main thread: read dumps in order, join each list with its gold tree and
 * check its provenance (stages/align-gold.ts), batch, and write results in
 * input order. Workers: the per-sentence chain (sentence-chain.ts). Every
 * input record ends as a written sentence or a line of rejects.jsonl; the
 * totals are checked to reconcile before the manifest is written.
 */
import { createHash, type Hash } from 'node:crypto';
import { appendFileSync, closeSync, existsSync, fstatSync, openSync, readFileSync, readSync, realpathSync, statSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join } from 'node:path';
import { DataError, UsageError } from '../core/errors.js';
import { bucketOf, murmur3String } from '../core/murmur3.js';
import { NameBook } from '../core/name-book.js';
import type { FoldPlan } from '../formats/fold-plan.js';
import { emptyState, headerLine, lastState, shardLine, type WriterState } from '../formats/journal.js';
import { formatManifest, RECORD_LAYOUT, SHARD_FORMAT, type NamesSummary, type ShardManifest, type Totals } from '../formats/manifest.js';
import { formatNames } from '../formats/names-file.js';
import { PART_FILE, shareSize } from '../formats/part-file.js';
import { encodePipelineFiles, PIPELINE_FILES } from '../formats/pipeline-files.js';
import { fileSha256, removeIfExists, writeFileAtomic } from '../io/files.js';
import { loadFoldPlan } from '../io/fold-plan-file.js';
import { GoldIndex } from '../io/gold-index.js';
import { loadPipeline, type LoadedPipeline } from '../io/load-pipeline.js';
import { claimOutputFolder } from '../io/output-folder.js';
import { createProgress } from '../io/progress.js';
import { readNbest } from '../io/read-nbest.js';
import { MANIFEST, readManifest } from '../io/read-shards.js';
import { RejectsLog, REJECTS } from '../io/rejects-log.js';
import { ShardWriter, type EncodedSentence } from '../io/shard-writer.js';
import { OrderedBatches, OrderedPool } from '../pool/ordered-pool.js';
import type { ModelIdentity, RejectRecord, SentenceJob, SentenceResult } from '../records.js';
import { HASH_RULE } from '../stages/hash-features.js';
import { joinVerdict, type PlannedFold } from '../stages/align-gold.js';
import { TOOL_VERSION } from '../version.js';
import type { SentenceWorkerInit } from './sentence-worker.js';
import { environmentError } from '../io/fs-faults.js';
import { clearPrepareOutput, JOURNAL, keepWhatResumeNeeds } from './output-dir.js';
import { parsePartSpec, PartOutput, partIsCurrent, samePart, type PartSpec } from './part-output.js';

export interface PrepareOptions {
  gold: string;
  nbest: string[];
  pipeline: string;
  out: string;
  plan?: string;
  workers?: number;
  strict?: boolean;
  quiet?: boolean;
  /** Sentences per batch sent to a worker. */
  batch?: number;
  /** Test hook: behave as if killed once this many shards are complete. */
  stopAfterShards?: number;
  /** Replace an output from other inputs or config, or write into a folder holding other files. */
  force?: boolean;
  /** Fail (status 1) when more than this share of the records read is rejected (default 0.5). */
  maxRejectRate?: number;
  /** Process only the records at input positions p with p mod `of` = `index` (`sheaf merge` joins the parts). */
  part?: PartSpec;
}

/** Thrown by the stopAfterShards test hook. */
export class SimulatedStop extends Error {}

export interface PrepareSummary extends Totals {
  out: string;
  upToDate: boolean;
  /** Complete shards found and kept from an interrupted run (0 for a fresh one). */
  resumedShards: number;
  shards: number;
  seconds: number;
}

interface InputInfo {
  path: string;
  bytes: number | null;
  mtimeMs: number | null;
}

function inputInfo(path: string): InputInfo {
  if (path === '-') return { path, bytes: null, mtimeMs: null };
  let s;
  try {
    s = statSync(path);
  } catch (e) {
    throw new UsageError(`cannot read \`${path}\`: no such file (expected a path to an existing file, or \`-\` for stdin)`, { cause: e });
  }
  if (!s.isFile()) throw new UsageError(`expected \`${path}\` to be a file`);
  return { path, bytes: s.size, mtimeMs: s.mtimeMs };
}

/** The same dump named twice (overlapping globs) would be read twice: refuse it before reading anything. */
function refuseRepeatedDumps(paths: string[]): void {
  const seen = new Map<string, string>();
  for (const p of paths) {
    const key = p === '-' ? '-' : realpathSync(p);
    const first = seen.get(key);
    if (first !== undefined) {
      throw new UsageError(first === p
        ? `\`${p}\` is named twice after \`--nbest\` (overlapping globs?); name each dump once`
        : `\`${first}\` and \`${p}\` after \`--nbest\` are the same file (overlapping globs?); name each dump once`);
    }
    seen.set(key, p);
  }
}

/** Where the plan puts each gold sentence. */
function plannedFolds(plan: FoldPlan | null, gold: GoldIndex): Map<number, ModelIdentity | null> {
  const models = new Map<number, ModelIdentity | null>();
  if (!plan) return models;
  for (const f of plan.folds) {
    models.set(f.fold, f.model);
    for (const id of f.ids) {
      const k = gold.ordinal(id);
      if (k >= 0) gold.setFold(k, f.fold);
    }
  }
  return models;
}

type Item =
  | { kind: 'reject'; reject: RejectRecord; seq: number; bytesAt: number }
  | { kind: 'job'; seq: number; id: string; file: string; line: number | null; fold: number | null; source: ModelIdentity | null; bytesAt: number; goldAt: string };

export async function runPrepare(o: PrepareOptions): Promise<PrepareSummary> {
  try {
    return await prepareOnce(o);
  } catch (e) {
    // A failed run keeps what a resume needs (completed shards, the journal, the rejects so far), nothing else.
    if (!(e instanceof SimulatedStop)) keepWhatResumeNeeds(o.out);
    throw environmentError(e, o.out, 'write', 'run the same command again: it resumes after the shards completed so far');
  }
}

async function prepareOnce(o: PrepareOptions): Promise<PrepareSummary> {
  const started = Date.now();
  const workers = o.workers ?? availableParallelism();
  if (!Number.isInteger(workers) || workers < 0 || workers > 256) throw new UsageError(`expected \`--workers\` to be an integer from 0 to 256, got \`${o.workers}\``);
  if (o.nbest.length === 0) throw new UsageError('expected at least one n-best dump after `--nbest`');
  const maxRejectRate = o.maxRejectRate ?? 0.5;
  if (!(maxRejectRate >= 0 && maxRejectRate <= 1)) throw new UsageError(`expected \`--max-reject-rate\` to be a number from 0 to 1, got \`${o.maxRejectRate}\``);
  const fromStdin = [o.gold, ...o.nbest].filter((f) => f === '-').length;
  if (fromStdin > 1) throw new UsageError('expected at most one input on stdin (`-`): the gold treebank and the n-best dumps are read at different times, so only one of them can come from a pipe');
  if (o.part) parsePartSpec(`${o.part.index}/${o.part.of}`);
  const batchSize = o.batch ?? 16;
  // Validate everything before reading any data.
  const pipeline = loadPipeline(o.pipeline);
  const planned = o.plan ? loadFoldPlan(o.plan) : null;
  const plan = planned?.plan ?? null;
  const inputs = { gold: inputInfo(o.gold), nbest: o.nbest.map(inputInfo), plan: planned ? inputInfo(planned.file) : null };
  refuseRepeatedDumps(o.nbest);
  const claim = claimOutputFolder(o.out, 'shards', { force: o.force });
  const usesStdin = fromStdin > 0;
  const progress = createProgress({ quiet: o.quiet ?? false, label: 'sheaf prepare', totalBytes: usesStdin ? null : inputs.nbest.reduce((a, i) => a + (i.bytes ?? 0), 0) });

  // A complete output with the same inputs and config: nothing to do.
  const earlier = claim.fresh ? null : earlierOutput(o, pipeline, inputs, planned?.file ?? null);
  if (earlier?.upToDate) {
    const m = earlier.upToDate;
    progress.done(`sheaf prepare: ${o.out} is up to date (same inputs and pipeline); nothing to do`);
    checkRejectRate(m.totals, maxRejectRate, o.out);
    return { out: o.out, upToDate: true, resumedShards: 0, shards: m.shards.length, ...m.totals, seconds: (Date.now() - started) / 1000 };
  }
  if (earlier && earlier.differences.length > 0 && !o.force) {
    throw new UsageError(`\`${o.out}\` holds shards prepared from other inputs or config (${earlier.differences.join('; ')}); choose another folder, or add --force to replace them`);
  }

  // Resume from the journal when the inputs and config are unchanged.
  const header = o.part ? { format: SHARD_FORMAT, pipeline: pipeline.digest, inputs, part: o.part } : { format: SHARD_FORMAT, pipeline: pipeline.digest, inputs };
  // A run that keeps names restarts rather than resumes: names come from the sentences it processes.
  const keepsNames = pipeline.hashing.names > 0;
  let state: WriterState | null = null;
  if (!usesStdin && !keepsNames && existsSync(join(o.out, JOURNAL))) {
    state = lastState(readFileSync(join(o.out, JOURNAL), 'utf8'), header);
    if (state && !state.shards.every((s) => existsSync(join(o.out, s.file)) && fileSha256(join(o.out, s.file)) === s.sha256)) state = null;
  }
  const resuming = state !== null;
  if (!state) {
    clearPrepareOutput(o.out);
    state = emptyState();
  } else removeIfExists(join(o.out, `${MANIFEST}.tmp`));
  const resumedShards = state.shards.length;

  const rejects = new RejectsLog(o.out, state.rejectsBytes);
  const part = o.part ? new PartOutput(o.out, o.part, state) : null;
  const templateIds = pipeline.config.templates.map((t) => t.template);
  const writer = new ShardWriter(o.out, { limits: pipeline.shards, bits: pipeline.hashing.bits, compressed: pipeline.encode.compression === 'gzip', templates: templateIds }, state, (k, st) => {
    st.rejectsBytes = rejects.bytes;
    part?.shardDone(k);
    appendFileSync(join(o.out, JOURNAL), shardLine(k, st));
  });

  const digests = new Map<string, Hash>();
  const tapFor = (key: string) => {
    const h = createHash('sha256');
    digests.set(key, h);
    return (c: Buffer) => h.update(c);
  };
  let goldRejected = 0;
  const strictStop = (r: RejectRecord): never => {
    throw new DataError(r.code, `${r.reason} (stopped by --strict)`, { file: r.file, line: r.line ?? undefined, id: r.id ?? undefined });
  };
  const spill = join(o.out, '.gold-spill.tmp');
  let gold: GoldIndex | null = null;
  let pool: OrderedPool<SentenceJob, SentenceResult> | null = null;
  let seq = 0;
  const perFile: number[] = [];
  let namesSummary: NamesSummary | null = null;
  let keys: string[] | null = null;
  try {
    gold = await GoldIndex.build(o.gold, spill, (r) => {
      goldRejected++;
      if (o.strict) strictStop(r);
      if (!resuming) rejects.write(r);
    }, tapFor(`gold:${o.gold}`));
    if (!resuming) {
      state.rejectsBytes = rejects.bytes;
      writeFileAtomic(join(o.out, JOURNAL), headerLine(header, state));
    }
    const models = plannedFolds(plan, gold);
    const init: SentenceWorkerInit = { config: pipeline.config, files: pipeline.files };
    pool = await OrderedPool.start<SentenceJob, SentenceResult>({ size: workers, module: new URL('./sentence-worker.js', import.meta.url), init });
    // Input bytes read so far, and those of the records finished (what progress shows).
    let bytesRead = 0;
    let bytesDone = 0;
    const consume = (item: Item, res: SentenceResult | undefined) => {
      if (item.kind === 'reject') {
        rejects.write(item.reject);
        part?.rejected(item.seq);
        writer.rejected(item.seq + 1);
      } else if (res && 'bytes' in res) {
        // Candidates dropped from a kept list: one rejects line each (with --strict, the first stops the run).
        for (const d of res.dropped) {
          const r: RejectRecord = { file: item.file, line: item.line, column: null, id: item.id, candidate: d.rank, code: d.code, reason: d.reason + item.goldAt };
          if (o.strict) strictStop(r);
          rejects.write({ ...r, reason: `${d.reason}; dropped, the list is kept with its other candidates${item.goldAt}` });
          part?.rejected(item.seq);
        }
        part?.sentence(res, item.fold, item.source, item.seq);
        writer.sentence(res as EncodedSentence, item.fold, item.source, item.seq + 1);
        if (o.stopAfterShards !== undefined && state!.shards.length >= o.stopAfterShards) throw new SimulatedStop('stopped by the test hook');
      } else if (res) {
        const r: RejectRecord = { file: item.file, line: item.line, column: null, id: item.id, code: res.code, reason: res.reason + item.goldAt };
        if (o.strict) strictStop(r);
        rejects.write(r);
        part?.rejected(item.seq);
        writer.rejected(item.seq + 1);
      }
      bytesDone = item.bytesAt;
      progress.update({ sentences: state!.written + state!.rejected, candidates: state!.candidates, bytesDone });
    };
    const batches = new OrderedBatches<Item, SentenceJob, SentenceResult>(pool, { batchSize, maxInFlight: Math.max(2, pool.size * 3) }, consume);
    const addReject = async (r: RejectRecord) => {
      if (o.strict) strictStop(r);
      await batches.push({ kind: 'reject', reject: r, seq, bytesAt: bytesRead });
    };

    for (const file of o.nbest) {
      const tap = tapFor(`nbest:${perFile.length}`);
      const before = seq;
      for await (const item of readNbest(file, { maxCandidates: pipeline.maxCandidates, tap: (c) => { tap(c); bytesRead += c.length; } })) {
        // A part reads every record (ids and duplicates are judged over the whole input) but processes only its share.
        const skip = seq < state.consumed || (part !== null && !part.holds(seq));
        if ('reject' in item) {
          if (!skip) await addReject(item.reject);
          seq++;
          continue;
        }
        const rec = item.record;
        const k = gold.ordinal(rec.id);
        const firstSight = k >= 0 && gold.markSeen(k);
        if (skip) {
          seq++;
          continue;
        }
        const line = rec.line > 0 ? rec.line : null;
        const where = rec.line > 0 ? '' : ` (array element ${rec.index})`;
        const fold = k >= 0 ? gold.fold(k) : -1;
        const plannedFold: PlannedFold | undefined | null = plan ? (fold >= 0 ? { fold, model: models.get(fold) ?? null } : undefined) : null;
        const refusal = joinVerdict(rec.id, k >= 0, firstSight, plannedFold, rec.fold, rec.source);
        if (refusal) {
          const positions = refusal.code === 'no-gold' && gold.byPosition ? ` (the ids of \`${o.gold}\` are tree positions; trees it refused are in the rejects)` : '';
          await addReject({ file, line, column: null, id: rec.id, code: refusal.code, reason: refusal.reason + positions + where });
        } else {
          await batches.push(
            { kind: 'job', seq, id: rec.id, file, line, fold: rec.fold, source: rec.source, bytesAt: bytesRead, goldAt: gold.origin(k) },
            { pos: seq, id: rec.id, fold: rec.fold, gold: gold.tree(k), candidates: rec.candidates },
          );
        }
        seq++;
      }
      perFile.push(seq - before);
    }
    await batches.finish();
    if (keepsNames) {
      keys = (await pool.collect()).flat() as string[];
      namesSummary = writeNames(o.out, keys, pipeline.hashing);
    }
  } catch (e) {
    rejects.close();
    part?.close();
    writer.abort();
    throw e;
  } finally {
    await pool?.close();
    gold?.close();
    removeIfExists(spill);
  }
  writer.close();
  rejects.finish();

  // A part's totals are those of its share; part.json records the whole input's count.
  const read = part ? shareSize(seq, part.spec) : seq;
  if (state.written + state.rejected !== read) {
    throw new Error(`totals do not reconcile: read ${read}, written ${state.written}, rejected ${state.rejected}`);
  }
  const digestOf = (key: string) => `sha256:${digests.get(key)!.digest('hex')}`;
  const totals: Totals = {
    read,
    written: state.written,
    rejected: state.rejected,
    candidatesRead: state.candidates + (state.candidatesDropped ?? 0),
    candidates: state.candidates,
    candidatesDropped: state.candidatesDropped ?? 0,
    noCandidates: state.noCandidates,
    goldTrees: gold!.size,
    goldRejected,
    goldWithoutNbest: gold!.unseen(),
  };
  const manifest: ShardManifest = {
    format: SHARD_FORMAT,
    tool: { name: 'sheaf', version: TOOL_VERSION },
    pipeline: { digest: pipeline.digest, config: pipeline.config, files: PIPELINE_FILES },
    hashing: { bits: pipeline.hashing.bits, seed: pipeline.hashing.seed, rule: HASH_RULE, dropUniform: pipeline.hashing.dropUniform },
    compression: { method: pipeline.encode.compression, level: pipeline.encode.level, unit: 'sentence' },
    record: RECORD_LAYOUT,
    inputs: {
      gold: { path: o.gold, bytes: inputs.gold.bytes, sha256: digestOf(`gold:${o.gold}`) },
      nbest: o.nbest.map((f, k) => ({ path: f, bytes: inputs.nbest[k].bytes, sha256: digestOf(`nbest:${k}`), records: perFile[k] })),
      plan: planned ? { path: planned.file, sha256: fileSha256(planned.file) } : null,
    },
    folds: state.folds,
    shards: state.shards,
    totals,
    rejects: { file: REJECTS, count: state.rejected + goldRejected + totals.candidatesDropped },
    names: namesSummary,
  };
  part?.finish(seq, state, keys);
  writeFileAtomic(join(o.out, PIPELINE_FILES), encodePipelineFiles(pipeline.files));
  writeFileAtomic(join(o.out, MANIFEST), formatManifest(manifest));
  removeIfExists(join(o.out, JOURNAL));
  const summary: PrepareSummary = { out: o.out, upToDate: false, resumedShards, shards: state.shards.length, ...totals, seconds: (Date.now() - started) / 1000 };
  const n = (x: number) => x.toLocaleString('en-US');
  progress.done(`sheaf prepare: read ${n(read)} n-best lists: wrote ${n(state.written)} (${n(state.candidates)} candidates${totals.candidatesDropped ? `; ${n(totals.candidatesDropped)} dropped: their tree does not parse or their words differ from the gold's` : ''}) in ${n(state.shards.length)} shard(s), rejected ${n(state.rejected)}${resumedShards ? `; resumed after ${n(resumedShards)} complete shard(s)` : ''}; ${n(totals.goldWithoutNbest)} gold sentence(s) had no n-best list; ${summary.seconds.toFixed(1)} s`);
  checkRejectRate(totals, maxRejectRate, o.out);
  return summary;
}

/** The most frequent reject codes of a rejects log (its first 64 MiB), as `code (count)`. */
function commonReasons(file: string): string {
  const counts = new Map<string, number>();
  let text = '';
  try {
    const fd = openSync(file, 'r');
    try {
      const buf = Buffer.alloc(Math.min(64 << 20, fstatSync(fd).size));
      text = buf.subarray(0, readSync(fd, buf, 0, buf.length, 0)).toString('utf8');
    } finally {
      closeSync(fd);
    }
  } catch {
    return '';
  }
  for (const m of text.matchAll(/"code":"([a-z-]+)"/g)) counts.set(m[1], (counts.get(m[1]) ?? 0) + 1);
  const top = [...counts].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1)).slice(0, 3);
  return top.map(([c, k]) => `\`${c}\` (${k.toLocaleString('en-US')})`).join(', ');
}

/** Status 1 when nothing was written or more than the allowed share of the lists read was rejected. */
function checkRejectRate(t: Totals, max: number, out: string): void {
  const n = (x: number) => x.toLocaleString('en-US');
  if (t.read > 0 && t.written > 0 && t.rejected / t.read <= max) return;
  const reasons = commonReasons(join(out, REJECTS));
  const where = `${reasons ? `most often ${reasons}; ` : ''}the reasons are in ${join(out, REJECTS)}`;
  if (t.read === 0) throw new DataError('nothing-written', `read no n-best list at all: the dumps are empty (${t.goldTrees > 0 ? `the gold treebank has ${n(t.goldTrees)} trees` : 'and so is the gold treebank'}); check that \`--nbest\` names the base parser's output`);
  if (t.written === 0) throw new DataError('nothing-written', `wrote no sentence: all ${n(t.read)} n-best lists read were rejected (${where})${/no-gold|bad-json|bad-field|yield-mismatch/.test(reasons.split(',')[0]) ? '; were `--gold` and `--nbest` given the right files?' : ''}`);
  if (t.rejected / t.read > max) {
    throw new DataError('too-many-rejects', `rejected ${n(t.rejected)} of ${n(t.read)} n-best lists (${((100 * t.rejected) / t.read).toFixed(1)} %, over the limit of ${(100 * max).toFixed(0)} % set by \`--max-reject-rate\`; ${where}); the shards that were written are complete`);
  }
}

/**
 * What an earlier run left in the output folder: its manifest when it is a
 * complete output of the same inputs and config (nothing to do), else what
 * differs from this run (empty when nothing does: an interrupted or damaged
 * output of the same job, which this run resumes or redoes).
 */
function earlierOutput(o: PrepareOptions, pipeline: LoadedPipeline, inputs: { gold: InputInfo; nbest: InputInfo[]; plan: InputInfo | null }, planFile: string | null): { upToDate: ShardManifest | null; differences: string[] } {
  const stdin = [o.gold, ...o.nbest].includes('-');
  const partOf = (p: PartSpec | null | undefined) => (p ? `part ${p.index}/${p.of}` : 'a whole run');
  if (existsSync(join(o.out, MANIFEST))) {
    let m: ShardManifest;
    try {
      m = readManifest(o.out);
    } catch {
      // A damaged manifest: nothing to compare with, the output is redone.
      return { upToDate: null, differences: [] };
    }
    if (stdin) return { upToDate: null, differences: ['an input comes from stdin, which cannot be compared with the earlier inputs'] };
    const differences: string[] = [];
    if (m.pipeline.digest !== pipeline.digest) differences.push(`pipeline ${m.pipeline.digest.slice(0, 15)}… then, ${pipeline.digest.slice(0, 15)}… now`);
    if (m.inputs.gold.sha256 !== fileSha256(o.gold)) differences.push(m.inputs.gold.path === o.gold ? `the gold treebank \`${o.gold}\` has changed` : `gold treebank \`${m.inputs.gold.path}\` then, \`${o.gold}\` now`);
    const before = m.inputs.nbest.map((x) => x.sha256);
    const now = o.nbest.map(fileSha256);
    if (JSON.stringify(before) !== JSON.stringify(now)) {
      const paths = (l: readonly string[]) => (l.length <= 3 ? l.map((p) => `\`${p}\``).join(', ') : `${l.length} files`);
      const then = m.inputs.nbest.map((x) => x.path);
      differences.push(JSON.stringify(then) === JSON.stringify(o.nbest) ? `n-best dumps ${paths(o.nbest)} have changed` : `n-best dumps ${paths(then)} then, ${paths(o.nbest)} now`);
    }
    if ((m.inputs.plan?.sha256 ?? null) !== (planFile ? fileSha256(planFile) : null)) differences.push(m.inputs.plan ? (planFile ? 'another fold plan' : 'a fold plan then, none now') : 'no fold plan then, one now');
    if (!samePart(o.out, o.part)) differences.push(`${existsSync(join(o.out, PART_FILE)) ? 'another part' : 'a whole run'} then, ${partOf(o.part)} now`);
    const complete = m.shards.every((s) => existsSync(join(o.out, s.file)) && statSync(join(o.out, s.file)).size === s.bytes && statSync(join(o.out, s.counts), { throwIfNoEntry: false })?.isFile() === true)
      && (!o.part || partIsCurrent(o.out));
    return { upToDate: differences.length === 0 && complete ? m : null, differences };
  }
  if (existsSync(join(o.out, JOURNAL))) {
    // An interrupted run: its journal names its inputs (paths, sizes, times) and pipeline.
    let header: { pipeline?: string; inputs?: { gold?: InputInfo; nbest?: InputInfo[]; plan?: InputInfo | null }; part?: PartSpec } | undefined;
    try {
      header = JSON.parse(readFileSync(join(o.out, JOURNAL), 'utf8').split('\n', 1)[0]).header;
    } catch {
      return { upToDate: null, differences: [] };
    }
    if (!header) return { upToDate: null, differences: [] };
    if (stdin) return { upToDate: null, differences: ['an input comes from stdin, which cannot be compared with the interrupted run\'s inputs'] };
    const differences: string[] = [];
    if (header.pipeline !== pipeline.digest) differences.push('another pipeline');
    const same = (a: InputInfo | null | undefined, b: InputInfo | null) => JSON.stringify(a ?? null) === JSON.stringify(b);
    if (!same(header.inputs?.gold, inputs.gold)) differences.push(`gold treebank \`${header.inputs?.gold?.path ?? '?'}\` then (or it has changed since)`);
    if (JSON.stringify(header.inputs?.nbest ?? null) !== JSON.stringify(inputs.nbest)) differences.push('other n-best dumps (or they have changed since)');
    if (!same(header.inputs?.plan, inputs.plan)) differences.push('another fold plan');
    if (JSON.stringify(header.part ?? null) !== JSON.stringify(o.part ?? null)) differences.push(`${partOf(header.part)} then, ${partOf(o.part)} now`);
    return { upToDate: null, differences };
  }
  return { upToDate: null, differences: [] };
}

/**
 * names.json: for each occupied bucket, the smallest few canonical keys seen
 * (deterministic whatever the worker count), and the collision rate against
 * the expected N/(2m).
 */
function writeNames(dir: string, keys: string[], hashing: { bits: number; seed: number; names: number }): NamesSummary {
  const book = new NameBook(hashing.names);
  book.merge(keys, (k) => bucketOf(murmur3String(k, hashing.seed), hashing.bits));
  const c = book.collisions();
  writeFileAtomic(join(dir, 'names.json'), formatNames({ bits: hashing.bits, seed: hashing.seed, perBucket: hashing.names, names: book.entries() }));
  return { file: 'names.json', perBucket: hashing.names, keys: c.keys, buckets: c.buckets, collisionRate: c.rate, expectedRate: c.keys / (2 * 2 ** hashing.bits) };
}
