/**
 * `sheaf prepare`: n-best dumps + gold treebank + pipeline → shard directory.
 *
 * Main thread: read dumps in order, join each sentence with its gold tree,
 * check provenance against the fold plan, batch, and write results in input
 * order. Workers: parse, score, extract, hash, prune, encode. Every input
 * record ends as a written sentence or a line of rejects.jsonl, and the
 * totals are checked to reconcile before the manifest is written.
 */
import { createHash, type Hash } from 'node:crypto';
import { existsSync, mkdirSync, readFileSync, renameSync, statSync, unlinkSync, writeFileSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import type { Argv } from 'yargs';
import { DataError, UsageError } from '../core/errors.js';
import { loadPipeline } from '../io/load-pipeline.js';
import { GoldIndex } from '../io/gold-index.js';
import { readNbest } from '../io/read-nbest.js';
import { createProgress } from '../io/progress.js';
import { clearOutput, emptyState, fileSha256, JOURNAL, MANIFEST, readJournal, REJECTS, ShardWriter, startJournal, type WriterState } from '../io/write-shards.js';
import { SentencePool } from '../prepare/pool.js';
import type { SentenceJob, SentenceResult } from '../prepare/sentence-job.js';
import type { RejectRecord } from '../records.js';
import type { CommandModule } from './command.js';
import { TOOL_VERSION } from '../version.js';
import { NameBook } from '../core/feature-sink.js';
import { bucketOf, murmur3String } from '../core/murmur3.js';

export const SHARDS_FORMAT = 'sheaf-shards/1';
export const FOLDS_FORMAT = 'sheaf-folds/1';

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
}

/** Thrown by the stopAfterShards test hook. */
export class SimulatedStop extends Error {}

export interface PrepareSummary {
  out: string;
  upToDate: boolean;
  resumedFromShard: number;
  shards: number;
  read: number;
  written: number;
  rejected: number;
  candidates: number;
  noCandidates: number;
  goldTrees: number;
  goldRejected: number;
  goldWithoutNbest: number;
  seconds: number;
}

interface InputInfo {
  path: string;
  bytes: number | null;
  mtimeMs: number | null;
}

function inputInfo(path: string): InputInfo {
  if (path === '-') return { path, bytes: null, mtimeMs: null };
  try {
    const s = statSync(path);
    if (!s.isFile()) throw new UsageError(`expected \`${path}\` to be a file`);
    return { path, bytes: s.size, mtimeMs: s.mtimeMs };
  } catch (e) {
    if (e instanceof UsageError) throw e;
    throw new UsageError(`cannot read \`${path}\`: no such file (expected a path to an existing file, or \`-\` for stdin)`, { cause: e });
  }
}

interface Plan {
  file: string;
  folds: { fold: number; ids: string[]; model: { parser: string; fingerprint: string } | null }[];
}

function loadPlan(dir: string): Plan {
  const file = join(dir, 'folds.json');
  let raw: any;
  try {
    raw = JSON.parse(readFileSync(file, 'utf8'));
  } catch (e) {
    throw new UsageError(`cannot read the fold plan \`${file}\`: ${(e as Error).message}`, { cause: e });
  }
  if (raw?.format !== FOLDS_FORMAT || !Array.isArray(raw.folds)) {
    throw new UsageError(`${file}: expected a fold plan {"format": "${FOLDS_FORMAT}", "folds": [{"fold", "ids", "model"}]}`);
  }
  raw.folds.forEach((f: any, k: number) => {
    if (!Number.isInteger(f?.fold) || !Array.isArray(f.ids)) throw new UsageError(`${file}: folds[${k}]: expected {"fold": integer, "ids": [...], "model": {"parser", "fingerprint"} | null}`);
  });
  return { file, folds: raw.folds };
}

type Item =
  | { kind: 'reject'; reject: RejectRecord; seq: number }
  | { kind: 'job'; seq: number; id: string; file: string; line: number | null; fold: number | null; source: { parser: string; fingerprint: string } | null };

interface Batch {
  items: Item[];
  results: Promise<SentenceResult[]> | null;
}

export async function runPrepare(o: PrepareOptions): Promise<PrepareSummary> {
  const started = Date.now();
  const workers = o.workers ?? availableParallelism();
  if (!Number.isInteger(workers) || workers < 0 || workers > 256) throw new UsageError(`expected \`--workers\` to be an integer from 0 to 256, got \`${o.workers}\``);
  if (o.nbest.length === 0) throw new UsageError('expected at least one n-best dump after `--nbest`');
  const batchSize = o.batch ?? 16;
  // Validate everything before reading any data.
  const pipeline = loadPipeline(o.pipeline);
  const plan = o.plan ? loadPlan(o.plan) : null;
  const inputs = { gold: inputInfo(o.gold), nbest: o.nbest.map(inputInfo), plan: plan ? inputInfo(plan.file) : null };
  mkdirSync(o.out, { recursive: true });
  const usesStdin = [o.gold, ...o.nbest].includes('-');
  const progress = createProgress({ quiet: o.quiet ?? false, totalBytes: usesStdin ? null : inputs.nbest.reduce((a, i) => a + (i.bytes ?? 0), 0) });

  // A complete output with the same inputs and config: nothing to do.
  if (!usesStdin && existsSync(join(o.out, MANIFEST))) {
    const m = JSON.parse(readFileSync(join(o.out, MANIFEST), 'utf8'));
    const same = m.pipeline?.digest === pipeline.digest
      && m.inputs?.gold?.sha256 === fileSha256(o.gold)
      && JSON.stringify(m.inputs?.nbest?.map((x: any) => x.sha256)) === JSON.stringify(o.nbest.map(fileSha256))
      && (m.inputs?.plan?.sha256 ?? null) === (plan ? fileSha256(plan.file) : null)
      && m.shards?.every((s: any) => existsSync(join(o.out, s.file)) && statSync(join(o.out, s.file)).size === s.bytes);
    if (same) {
      progress.done(`sheaf prepare: ${o.out} is up to date (same inputs and pipeline); nothing to do`);
      const t = m.totals;
      return { out: o.out, upToDate: true, resumedFromShard: m.shards.length, shards: m.shards.length, read: t.read, written: t.written, rejected: t.rejected, candidates: t.candidates, noCandidates: t.noCandidates, goldTrees: t.goldTrees, goldRejected: t.goldRejected, goldWithoutNbest: t.goldWithoutNbest, seconds: (Date.now() - started) / 1000 };
    }
  }

  // Resume from the journal when the inputs and config are unchanged.
  const header = { format: SHARDS_FORMAT, pipeline: pipeline.digest, inputs };
  // A run that keeps names restarts rather than resumes: names come from the sentences it processes.
  const keepsNames = pipeline.hashing.names > 0;
  let state: WriterState | null = usesStdin || keepsNames ? null : readJournal(o.out, header);
  if (state) {
    const ok = state.shards.every((s) => existsSync(join(o.out, s.file)) && fileSha256(join(o.out, s.file)) === s.sha256);
    if (!ok) state = null;
  }
  const resuming = state !== null;
  if (!state) {
    clearOutput(o.out);
    state = emptyState();
  } else {
    // Drop anything written after the last complete shard.
    for (const f of [`${MANIFEST}.tmp`]) if (existsSync(join(o.out, f))) unlinkSync(join(o.out, f));
  }
  const resumedFromShard = state.shards.length;
  const writer = new ShardWriter(o.out, pipeline.shards, pipeline.hashing.bits, state);

  const digests = new Map<string, Hash>();
  const tapFor = (path: string) => {
    const h = createHash('sha256');
    digests.set(path, h);
    return (c: Buffer) => h.update(c);
  };
  let goldRejected = 0;
  const strictStop = (r: RejectRecord): never => {
    throw new DataError(r.code as never, `${r.reason} (stopped by --strict)`, { file: r.file, line: r.line ?? undefined, id: r.id ?? undefined });
  };
  const spill = join(o.out, '.gold-spill.tmp');
  const gold = await GoldIndex.build(o.gold, spill, (r) => {
    goldRejected++;
    if (o.strict) strictStop(r);
    if (!resuming) writer.reject(r, null);
  }, tapFor(`gold:${o.gold}`));
  if (!resuming) {
    state.rejectsBytes = statSync(join(o.out, `${REJECTS}.tmp`)).size;
    startJournal(o.out, header, state);
  }
  const models = new Map<number, { parser: string; fingerprint: string } | null>();
  if (plan) {
    for (const f of plan.folds) {
      models.set(f.fold, f.model ?? null);
      for (const id of f.ids) {
        const k = gold.ordinal(String(id));
        if (k >= 0) gold.setFold(k, f.fold);
      }
    }
  }

  const pool = new SentencePool(workers, resolve(o.pipeline), pipeline);
  const queue: Batch[] = [];
  let current: Batch = { items: [], results: null };
  let jobs: SentenceJob[] = [];
  let seq = 0;
  let bytesDone = 0;
  let namesSummary: NamesSummary | null = null;

  const dispatch = () => {
    if (current.items.length === 0) return;
    current.results = jobs.length > 0 ? pool.submit(jobs) : Promise.resolve([]);
    queue.push(current);
    current = { items: [], results: null };
    jobs = [];
  };
  const drainOne = async () => {
    const b = queue.shift()!;
    const results = await b.results!;
    let r = 0;
    for (const item of b.items) {
      if (item.kind === 'reject') {
        writer.reject(item.reject, item.seq + 1);
        continue;
      }
      const res = results[r++];
      if ('bytes' in res) {
        writer.sentence(res.bytes, res.candidates, res.varying, item.fold, item.source, item.seq + 1);
        if (o.stopAfterShards !== undefined && state!.shards.length >= o.stopAfterShards) throw new SimulatedStop('stopped by the test hook');
      } else {
        const rej: RejectRecord = { file: item.file, line: item.line, id: item.id, code: res.code, reason: res.reason };
        if (o.strict) strictStop(rej);
        writer.reject(rej, item.seq + 1);
      }
    }
    progress.update(state!.written, state!.candidates, bytesDone);
  };
  const addReject = (r: RejectRecord) => {
    if (o.strict) strictStop(r);
    current.items.push({ kind: 'reject', reject: r, seq: seq });
  };

  try {
    for (const file of o.nbest) {
      const tap = tapFor(`nbest:${file}`);
      for await (const item of readNbest(file, { maxCandidates: pipeline.parse.maxCandidates, tap: (c) => { tap(c); bytesDone += c.length; } })) {
        const skip = seq < state.consumed;
        if ('reject' in item) {
          if (!skip) addReject(item.reject);
          seq++;
          continue;
        }
        const rec = item.record;
        const line = rec.line > 0 ? rec.line : null;
        const k = gold.ordinal(rec.id);
        const firstSight = k >= 0 && gold.markSeen(k);
        if (skip) {
          seq++;
          continue;
        }
        const where = rec.line > 0 ? '' : ` (array element ${rec.index})`;
        if (k < 0) {
          addReject({ file, line, id: rec.id, code: 'no-gold', reason: `no gold tree has the id \`${rec.id}\`${where}` });
        } else if (!firstSight) {
          addReject({ file, line, id: rec.id, code: 'duplicate-id', reason: `the id \`${rec.id}\` was already read from a dump; this list is refused${where}` });
        } else if (plan && gold.fold(k) < 0) {
          addReject({ file, line, id: rec.id, code: 'leak', reason: `sentence \`${rec.id}\` is in no fold of the plan, so nothing shows its base model did not see it` });
        } else if (plan && rec.fold !== gold.fold(k)) {
          addReject({ file, line, id: rec.id, code: 'leak', reason: `sentence \`${rec.id}\` is in fold ${gold.fold(k)} of the plan, but this list comes from the base model of fold ${rec.fold ?? 'none'}: that model may have seen it` });
        } else if (plan && models.get(gold.fold(k)) && models.get(gold.fold(k))!.fingerprint !== rec.source?.fingerprint) {
          const m = models.get(gold.fold(k))!;
          addReject({ file, line, id: rec.id, code: 'leak', reason: `sentence \`${rec.id}\` (fold ${gold.fold(k)}): the plan's base model for that fold is \`${m.parser}\` ${m.fingerprint}, but the list says ${rec.source ? `\`${rec.source.parser}\` ${rec.source.fingerprint}` : 'nothing about its source'}` });
        } else {
          current.items.push({ kind: 'job', seq, id: rec.id, file, line, fold: rec.fold, source: rec.source });
          jobs.push({ seq, id: rec.id, fold: rec.fold, gold: gold.tree(k), candidates: rec.candidates });
        }
        seq++;
        if (jobs.length >= batchSize || current.items.length >= batchSize * 8) dispatch();
        while (queue.length >= Math.max(2, pool.size * 3)) await drainOne();
      }
    }
    dispatch();
    while (queue.length > 0) await drainOne();
    if (keepsNames) namesSummary = writeNames(o.out, await pool.seenKeys(), pipeline.hashing);
  } finally {
    await pool.close();
    gold.close();
  }
  writer.finish();
  if (existsSync(spill)) unlinkSync(spill);

  const read = seq;
  if (state.written + state.rejected !== read) {
    throw new Error(`totals do not reconcile: read ${read}, written ${state.written}, rejected ${state.rejected}`);
  }
  const digestOf = (key: string) => `sha256:${digests.get(key)!.digest('hex')}`;
  const goldWithoutNbest = gold.unseen();
  const manifest = {
    format: SHARDS_FORMAT,
    tool: { name: 'sheaf', version: TOOL_VERSION },
    pipeline: { digest: pipeline.digest, config: pipeline.config },
    hashing: {
      bits: pipeline.hashing.bits,
      seed: pipeline.hashing.seed,
      rule: 'h = signed MurmurHash3 x86_32 of the key\'s UTF-8 bytes; index = |h| mod 2^bits; value sign + if h >= 0 else -',
      pseudoConstant: pipeline.hashing.pseudoConstant,
    },
    record: {
      map: ['id', 'fold', 'gold', 'flag', 'cands'],
      candidate: ['score', 'rank', 'matched', 'test', 'idx', 'val'],
      idx: 'bin: uint32 little-endian, ascending',
      val: 'bin: float32 little-endian',
    },
    inputs: {
      gold: { path: o.gold, bytes: inputs.gold.bytes, sha256: digestOf(`gold:${o.gold}`) },
      nbest: o.nbest.map((f, k) => ({ path: f, bytes: inputs.nbest[k].bytes, sha256: digestOf(`nbest:${f}`) })),
      plan: plan ? { path: plan.file, sha256: fileSha256(plan.file) } : null,
    },
    folds: state.folds,
    shards: state.shards,
    totals: {
      read,
      written: state.written,
      rejected: state.rejected,
      candidates: state.candidates,
      noCandidates: state.noCandidates,
      goldTrees: gold.size,
      goldRejected,
      goldWithoutNbest,
    },
    rejects: { file: REJECTS, count: state.rejected + goldRejected },
    names: namesSummary,
  };
  writeFileSync(join(o.out, `${MANIFEST}.tmp`), JSON.stringify(manifest, null, 2) + '\n');
  renameSync(join(o.out, `${MANIFEST}.tmp`), join(o.out, MANIFEST));
  if (existsSync(join(o.out, JOURNAL))) unlinkSync(join(o.out, JOURNAL));
  const summary: PrepareSummary = {
    out: o.out, upToDate: false, resumedFromShard, shards: state.shards.length, read, written: state.written, rejected: state.rejected,
    candidates: state.candidates, noCandidates: state.noCandidates, goldTrees: gold.size, goldRejected, goldWithoutNbest, seconds: (Date.now() - started) / 1000,
  };
  progress.done(`sheaf prepare: read ${read} sentences: wrote ${state.written} (${state.candidates} candidates) in ${state.shards.length} shard(s), rejected ${state.rejected}${resumedFromShard ? `; resumed after shard ${resumedFromShard - 1}` : ''}; ${goldWithoutNbest} gold sentence(s) had no n-best list; ${summary.seconds.toFixed(1)}s`);
  return summary;
}

interface NamesSummary {
  file: string;
  perBucket: number;
  keys: number;
  buckets: number;
  collisionRate: number;
  expectedRate: number;
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
  const summary: NamesSummary = {
    file: 'names.json',
    perBucket: hashing.names,
    keys: c.keys,
    buckets: c.buckets,
    collisionRate: c.rate,
    expectedRate: c.keys / (2 * 2 ** hashing.bits),
  };
  const byBucket = book.entries().sort((a, b) => a[0] - b[0]);
  const body = `{"bits": ${hashing.bits}, "seed": ${hashing.seed}, "perBucket": ${hashing.names}, "names": {\n${byBucket.map(([b, ks]) => `${JSON.stringify(String(b))}: ${JSON.stringify(ks)}`).join(',\n')}\n}}\n`;
  writeFileSync(join(dir, 'names.json.tmp'), body);
  renameSync(join(dir, 'names.json.tmp'), join(dir, 'names.json'));
  return summary;
}

export const prepareCommand: CommandModule = {
  name: 'prepare',
  describe: 'score, featurise and hash n-best lists into binary shards',
  builder: (y: Argv) =>
    y
      .option('gold', { type: 'string', demandOption: true, description: 'gold treebank (brackets or JSONL; .gz; - for stdin)' })
      .option('nbest', { type: 'string', array: true, demandOption: true, description: 'n-best dump(s): JSONL or a JSON array; .gz' })
      .option('pipeline', { type: 'string', demandOption: true, description: 'pipeline file (pipelines/*.json)' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'shard directory' })
      .option('plan', { type: 'string', description: 'fold plan directory (folds.json): refuse lists from a base model that saw the sentence' })
      .option('workers', { type: 'number', default: availableParallelism(), description: 'worker threads (0: run in the main thread)' })
      .option('strict', { type: 'boolean', default: false, description: 'stop at the first bad record instead of rejecting it' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .example('$0 prepare --gold huts.mrg --nbest fold-*.jsonl.gz --pipeline pipelines/default.json -o shards/', 'prepare training shards'),
  handler: async (args) => {
    const summary = await runPrepare({
      gold: args.gold as string,
      nbest: args.nbest as string[],
      pipeline: args.pipeline as string,
      out: args.out as string,
      plan: args.plan as string | undefined,
      workers: args.workers as number,
      strict: args.strict as boolean,
      quiet: args.quiet as boolean,
    });
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
