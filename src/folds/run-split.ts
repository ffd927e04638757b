/**
 * `sheaf split`: a gold treebank → a fold plan. Writes PLAN_DIR/folds.json
 * (formats/fold-plan.ts) and each fold's held-out trees as
 * PLAN_DIR/heldout-<k>.jsonl (`{"id", "tree"}` per line: ids survive the
 * split), and with `writeTrain` each fold's training part as
 * PLAN_DIR/train-<k>.jsonl. The trees are streamed (the `blocks` method reads
 * the file twice); in memory stay the ids.
 *
 * A fold's digest is the sha256 of its held-out file; re-splitting into the
 * same folder keeps a fold's recorded base model when its digest is unchanged.
 */
import { createHash } from 'node:crypto';
import { closeSync, existsSync, openSync, readFileSync, renameSync, rmSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { DataError, UsageError } from '../core/errors.js';
import { IdTable } from '../core/id-table.js';
import { createVocabulary } from '../core/interner.js';
import { FOLDS_FORMAT, parseFoldPlan, type FoldEntry, type FoldPlan } from '../formats/fold-plan.js';
import { saveFoldPlan, FOLDS_FILE } from '../io/fold-plan-file.js';
import { readTreeTexts } from '../io/read-treebank.js';
import { claimOutputFolder } from '../io/output-folder.js';
import { environmentError, removeTemporaries } from '../io/fs-faults.js';
import { RejectsLog } from '../io/rejects-log.js';
import type { RejectRecord } from '../records.js';
import { blockFold, hashFold, type FoldMethod } from './assign-folds.js';

export interface SplitOptions {
  gold: string;
  folds: number;
  seed?: number;
  method?: FoldMethod;
  writeTrain?: boolean;
  out: string;
  quiet?: boolean;
  /** Write into a folder that holds other files. */
  force?: boolean;
}

export interface SplitSummary {
  out: string;
  k: number;
  method: FoldMethod;
  seed: number;
  sentences: number;
  rejected: number;
  perFold: number[];
  /** Folds whose recorded base model was kept (same held-out trees as before). */
  modelsKept: number;
}

export const heldoutName = (k: number) => `heldout-${k}.jsonl`;
/** The files split writes under a temporary name (what a failed split removes; nothing else in the folder). */
const SPLIT_TEMPORARY = /^(folds\.json|heldout-\d+\.jsonl|train-\d+\.jsonl|rejects\.jsonl)\.tmp$/;
export const trainName = (k: number) => `train-${k}.jsonl`;

/** Writes lines to several files, buffered, each under NAME.tmp until finished. */
class FoldFiles {
  private readonly fds: number[];
  private readonly parts: string[][];
  private readonly sizes: number[];
  readonly hashes = new Array<ReturnType<typeof createHash>>();

  constructor(private readonly paths: string[]) {
    this.fds = paths.map((p) => openSync(`${p}.tmp`, 'w'));
    this.parts = paths.map(() => []);
    this.sizes = paths.map(() => 0);
    for (let k = 0; k < paths.length; k++) this.hashes.push(createHash('sha256'));
  }

  write(k: number, line: string): void {
    this.parts[k].push(line);
    this.sizes[k] += line.length;
    if (this.sizes[k] > 1 << 20) this.flush(k);
  }

  private flush(k: number): void {
    if (this.parts[k].length === 0) return;
    const b = Buffer.from(this.parts[k].join(''), 'utf8');
    this.hashes[k].update(b);
    let off = 0;
    try {
      while (off < b.length) off += writeSync(this.fds[k], b, off, b.length - off);
    } catch (e) {
      throw environmentError(e, this.paths[k], 'write');
    }
    this.parts[k] = [];
    this.sizes[k] = 0;
  }

  /** Writes what is buffered (the last writes: a full disk shows here, before any file is renamed). */
  flushAll(): void {
    for (let k = 0; k < this.paths.length; k++) this.flush(k);
  }

  /** Closes every file and gives it its final name (after flushAll); their sha256. */
  rename(): string[] {
    return this.paths.map((p, k) => {
      const fd = this.fds[k];
      this.fds[k] = -1;
      closeSync(fd);
      renameSync(`${p}.tmp`, p);
      return `sha256:${this.hashes[k].digest('hex')}`;
    });
  }

  /** Closes what is still open (after a failure; the caller removes the temporary files). */
  abandon(): void {
    for (let k = 0; k < this.fds.length; k++) {
      if (this.fds[k] < 0) continue;
      try {
        closeSync(this.fds[k]);
      } catch {
        // Nothing more to do.
      }
      this.fds[k] = -1;
    }
  }
}

export async function runSplit(o: SplitOptions, log: (line: string) => void = () => {}): Promise<SplitSummary> {
  const k = o.folds;
  const method = o.method ?? 'hash';
  const seed = o.seed ?? 0;
  if (!Number.isInteger(k) || k < 2) throw new UsageError(`expected \`--folds\` to be an integer ≥ 2, got \`${o.folds}\``);
  if (!Number.isInteger(seed) || seed < 0 || seed > 4294967295) throw new UsageError(`expected \`--seed\` to be an integer from 0 to 4294967295, got \`${o.seed}\``);
  if (method !== 'hash' && method !== 'blocks') throw new UsageError(`expected \`--method\` to be \`hash\` or \`blocks\`, got \`${method}\``);
  if (method === 'blocks' && o.gold === '-') throw new UsageError('`--method blocks` reads the treebank twice (to count it first): give a file, not `-`');
  claimOutputFolder(o.out, 'plan', { force: o.force });
  const open: { abandon(): void }[] = [];
  try {
    return await splitInto(o, k, method, seed, open, log);
  } catch (e) {
    // split starts over when run again: leave no half-written file behind (a full disk stays full otherwise).
    for (const f of open) f.abandon();
    removeTemporaries(o.out, SPLIT_TEMPORARY);
    throw environmentError(e, o.out, 'write', 'run the same command again');
  }
}

async function splitInto(o: SplitOptions, k: number, method: FoldMethod, seed: number, open: { abandon(): void }[], log: (line: string) => void): Promise<SplitSummary> {
  const previous = existsSync(join(o.out, FOLDS_FILE)) ? safePlan(join(o.out, FOLDS_FILE)) : null;

  const rejects = new RejectsLog(o.out, 0);
  open.push({ abandon: () => rejects.abandon() });
  const rejected: RejectRecord[] = [];
  const onBad = (e: DataError) => {
    const r: RejectRecord = { file: e.file ?? o.gold, line: e.line ?? null, column: e.column ?? null, id: e.id ?? null, code: e.code, reason: e.reason };
    rejected.push(r);
    rejects.write(r);
  };
  // Blocks need the count first.
  let total = 0;
  if (method === 'blocks') {
    for await (const _ of readTreeTexts(o.gold, { vocab: createVocabulary(), onBad: () => {} })) total++;
    if (total === 0) throw new UsageError(`\`${o.gold}\` holds no readable tree: nothing to split`);
  }
  const heldout = new FoldFiles(Array.from({ length: k }, (_, f) => join(o.out, heldoutName(f))));
  open.push(heldout);
  const train = o.writeTrain ? new FoldFiles(Array.from({ length: k }, (_, f) => join(o.out, trainName(f)))) : null;
  if (train) open.push(train);
  const ids: string[][] = Array.from({ length: k }, () => []);
  const seen = new IdTable();
  const firstLine: number[] = [];
  let i = 0;
  try {
    for await (const rec of readTreeTexts(o.gold, { vocab: createVocabulary(), onBad })) {
      const prior = seen.add(rec.id);
      if (prior < 0) {
        throw new UsageError(`${o.gold}:${rec.line}: the id \`${rec.id}\` appears again (first at line ${firstLine[-1 - prior]}); a fold plan needs every id once — give each sentence its own id`);
      }
      firstLine.push(rec.line);
      const fold = method === 'hash' ? hashFold(rec.id, k, seed) : blockFold(i, total, k);
      i++;
      ids[fold].push(rec.id);
      const line = JSON.stringify({ id: rec.id, tree: rec.text }) + '\n';
      heldout.write(fold, line);
      if (train) for (let f = 0; f < k; f++) if (f !== fold) train.write(f, line);
    }
  } catch (e) {
    rejects.close();
    throw e;
  }
  if (i < k) throw new UsageError(`expected \`--folds\` to be at most the number of sentences (${i}), got \`${k}\`: a fold would be empty`);
  heldout.flushAll();
  train?.flushAll();
  // Every byte is written. The new fold files replace the old ones from here on: an earlier plan must not
  // describe them if this run fails before its own folds.json is written.
  rmSync(join(o.out, FOLDS_FILE), { force: true });
  const digests = heldout.rename();
  train?.rename();
  rejects.finish();
  let modelsKept = 0;
  const folds: FoldEntry[] = ids.map((list, f) => {
    const before = previous?.folds.find((x) => x.fold === f);
    const keep = before && before.digest === digests[f] && previous!.k === k ? before.model : null;
    if (keep) modelsKept++;
    return { fold: f, ids: list, digest: digests[f], model: keep };
  });
  const plan: FoldPlan = { format: FOLDS_FORMAT, k, seed: method === 'hash' ? seed : null, method, folds };
  saveFoldPlan(o.out, plan);
  const summary: SplitSummary = { out: o.out, k, method, seed, sentences: i, rejected: rejected.length, perFold: ids.map((x) => x.length), modelsKept };
  if (!o.quiet) {
    const n = (x: number) => x.toLocaleString('en-US');
    log(`sheaf split: ${n(i)} sentences into ${k} folds (${method}${method === 'hash' ? `, seed ${seed}` : ''}): ${summary.perFold.map(n).join(', ')} held out${o.writeTrain ? '; training parts written' : ''}${rejected.length ? `; ${n(rejected.length)} refused (rejects.jsonl)` : ''}${modelsKept ? `; kept the base model of ${modelsKept} unchanged fold(s)` : ''}`);
  }
  return summary;
}

function safePlan(file: string): FoldPlan | null {
  try {
    return parseFoldPlan(readFileSync(file, 'utf8'), file);
  } catch {
    return null;
  }
}
