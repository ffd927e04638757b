/**
 * `sheaf train`: a shard directory → a model directory. Streams the shards
 * once per epoch (memory: the weights plus a window of lists), visiting lists
 * in a seeded shuffle within a window over the shards in manifest order, so
 * the order — and the model's bytes — depend only on the data's order and the
 * seed. Keeps only buckets that vary in at least `cutoff` sentences (from the
 * shards' count files). After each epoch the re-ranked F1 on the dev shards
 * picks the epoch kept.
 */
import { createHash } from 'node:crypto';
import { existsSync, readFileSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { F1Table } from '../core/f1-table.js';
import { UsageError } from '../core/errors.js';
import { decodeCounts } from '../formats/counts-file.js';
import type { ShardManifest } from '../formats/manifest.js';
import { MODEL_FORMAT, type EpochFigures, type ModelInfo } from '../formats/model.js';
import { parseNames, formatNames } from '../formats/names-file.js';
import { PIPELINE_FILES } from '../formats/pipeline-files.js';
import { fileInside, writeFileAtomic } from '../io/files.js';
import { claimOutputFolder } from '../io/output-folder.js';
import { saveModel } from '../io/model-dir.js';
import { readManifest, readRankingListDir } from '../io/read-shards.js';
import { TOOL_VERSION } from '../version.js';
import { seededRandom } from '../core/random.js';
import { minimize } from './lbfgs.js';
import { LoglinearObjective } from './loglinear.js';
import { AveragedPerceptron } from './perceptron.js';
import { pick, scores, type RankingList } from './ranking.js';
import { makeFolder } from '../io/fs-faults.js';

export interface TrainOptions {
  shards: string;
  out: string;
  dev?: string;
  method?: 'perceptron' | 'loglinear';
  epochs?: number;
  cutoff?: number;
  l2?: number;
  seed?: number;
  /** Lists shuffled together. */
  window?: number;
  quiet?: boolean;
  /** Write into a folder that holds other files. */
  force?: boolean;
}

export interface TrainSummary {
  out: string;
  method: string;
  bestEpoch: number;
  epochs: (EpochFigures & { seconds: number })[];
  kept: number;
  nonZero: number;
  seconds: number;
}

/** The lists of a shard directory, in a seeded shuffle within windows of `window` lists. */
export async function* shuffledLists(dir: string, manifest: ShardManifest, window: number, seed: number): AsyncGenerator<RankingList> {
  const rand = seededRandom(seed);
  let buf: RankingList[] = [];
  const flush = function* (): Generator<RankingList> {
    for (let i = buf.length - 1; i > 0; i--) {
      const j = Math.floor(rand() * (i + 1));
      [buf[i], buf[j]] = [buf[j], buf[i]];
    }
    yield* buf;
    buf = [];
  };
  for await (const s of readRankingListDir(dir, manifest)) {
    buf.push(s);
    if (buf.length >= window) yield* flush();
  }
  yield* flush();
}

/** A digest of a shard directory's data: the sha256 of its shard files, in order. */
export function shardsDigest(m: ShardManifest): string {
  return `sha256:${createHash('sha256').update(m.shards.map((s) => s.sha256).join('\n')).digest('hex')}`;
}

/** Buckets that vary in at least `cutoff` sentences, over every shard's count file. */
export function cutoffMask(dir: string, m: ShardManifest, cutoff: number): { mask: Uint8Array; kept: number } {
  const counts = new Uint32Array(2 ** m.hashing.bits);
  for (const sh of m.shards) {
    const c = decodeCounts(readFileSync(fileInside(dir, sh.counts)), join(dir, sh.counts));
    for (let k = 0; k < c.idx.length; k++) counts[c.idx[k]] += c.count[k];
  }
  const mask = new Uint8Array(counts.length);
  let kept = 0;
  for (let b = 0; b < counts.length; b++) {
    if (counts[b] >= cutoff && counts[b] > 0) {
      mask[b] = 1;
      kept++;
    }
  }
  return { mask, kept };
}

/** Re-ranked corpus F1 of weights w over a shard directory. */
export async function rerankedF1(dir: string, manifest: ShardManifest, w: Float64Array | Float32Array): Promise<number> {
  const t = new F1Table();
  let s = new Float64Array(64);
  for await (const list of readRankingListDir(dir, manifest)) {
    const n = list.rank.length;
    if (s.length < n) s = new Float64Array(n * 2);
    const r = n ? pick(list, scores(list, w, s)) : -1;
    t.add('reranked', list.gold, r >= 0 ? { matched: list.matched[r], test: list.test[r] } : null);
  }
  return t.row('reranked').f1;
}

function check(name: string, v: number, min: number, max: number, integer = true): void {
  if (typeof v !== 'number' || !Number.isFinite(v) || (integer && !Number.isInteger(v)) || v < min || v > max) {
    throw new UsageError(`expected \`--${name}\` to be ${integer ? 'an integer' : 'a number'} from ${min} to ${max}, got \`${v}\``);
  }
}

export async function runTrain(o: TrainOptions, log: (line: string) => void = () => {}): Promise<TrainSummary> {
  const started = Date.now();
  const method = o.method ?? 'perceptron';
  if (method !== 'perceptron' && method !== 'loglinear') throw new UsageError(`expected \`--method\` to be \`perceptron\` or \`loglinear\`, got \`${method}\``);
  const epochs = o.epochs ?? (method === 'perceptron' ? 10 : 100);
  const cutoff = o.cutoff ?? 5;
  const l2 = o.l2 ?? 1;
  const seed = o.seed ?? 0;
  const window = o.window ?? 1000;
  check('epochs', epochs, 1, 100000);
  check('cutoff', cutoff, 0, 1e9);
  check('l2', l2, 0, 1e9, false);
  check('seed', seed, 0, 4294967295);
  check('window', window, 1, 1e7);
  const m = readManifest(o.shards);
  const dm = o.dev ? readManifest(o.dev) : null;
  if (dm && dm.pipeline.digest !== m.pipeline.digest) {
    throw new UsageError(`the dev shards \`${o.dev}\` were prepared with another pipeline (${dm.pipeline.digest}) than the training shards (${m.pipeline.digest}); prepare both with the same pipeline`);
  }
  if (dm && dm.hashing.bits !== m.hashing.bits) throw new UsageError('the dev shards use another hash space than the training shards');
  claimOutputFolder(o.out, 'model', { force: o.force });
  const bits = m.hashing.bits;
  const { mask, kept } = cutoffMask(o.shards, m, cutoff);
  if (kept === 0) throw new UsageError(`no feature varies in at least ${cutoff} sentences of \`${o.shards}\`; lower \`--cutoff\``);
  const say = (l: string) => {
    if (!o.quiet) log(`sheaf train: ${l}`);
  };
  say(`${method}, ${kept.toLocaleString('en-US')} features vary in ≥ ${cutoff} sentences (of 2^${bits} buckets)`);
  const figures: EpochFigures[] = [];
  const timed: (EpochFigures & { seconds: number })[] = [];
  const best = new Float64Array(2 ** bits);
  let bestEpoch = 0;
  let bestDev = -Infinity;
  let lists = 0;
  const keep = async (epoch: number, w: Float64Array, fig: Omit<EpochFigures, 'devF1'> & { seconds: number }) => {
    const devF1 = dm ? await rerankedF1(o.dev!, dm, w) : null;
    const { seconds, ...rest } = fig;
    figures.push({ ...rest, devF1 });
    timed.push({ ...rest, devF1, seconds });
    // Without dev shards the last epoch is kept; with them, the best (the earlier on ties).
    if (devF1 === null || devF1 > bestDev) {
      bestDev = devF1 ?? bestDev;
      bestEpoch = epoch;
      best.set(w);
    }
    say(`epoch ${epoch}: ${fig.updates !== null ? `${fig.updates.toLocaleString('en-US')} updates` : `objective ${fig.objective!.toFixed(4)}`}${devF1 !== null ? `, dev F1 ${devF1.toFixed(2)}` : ''} (${fig.seconds.toFixed(1)} s)`);
  };

  if (method === 'perceptron') {
    const p = new AveragedPerceptron(2 ** bits, mask);
    const avg = new Float64Array(2 ** bits);
    for (let e = 1; e <= epochs; e++) {
      const t0 = Date.now();
      const before = p.updates;
      lists = 0;
      for await (const list of shuffledLists(o.shards, m, window, (seed + e) >>> 0)) {
        p.step(list);
        lists++;
      }
      p.averaged(avg);
      await keep(e, avg, { epoch: e, updates: p.updates - before, objective: null, seconds: (Date.now() - t0) / 1000 });
    }
  } else {
    // Coordinates of the kept buckets.
    const index = new Int32Array(2 ** bits).fill(-1);
    const buckets = new Uint32Array(kept);
    for (let b = 0, j = 0; b < mask.length; b++) if (mask[b]) { index[b] = j; buckets[j++] = b; }
    const obj = new LoglinearObjective(index, l2);
    const dense = new Float64Array(2 ** bits);
    let t0 = Date.now();
    const result = await minimize(async (x, g) => {
      obj.begin(g);
      lists = 0;
      for await (const list of readRankingListDir(o.shards, m)) {
        obj.add(list, x, g);
        lists++;
      }
      return obj.end(x, g);
    }, new Float64Array(kept), {
      maxIterations: epochs,
      onIteration: async (it, f, x) => {
        dense.fill(0);
        for (let j = 0; j < kept; j++) dense[buckets[j]] = x[j];
        await keep(it, dense, { epoch: it, updates: null, objective: f, seconds: (Date.now() - t0) / 1000 });
        t0 = Date.now();
      },
    });
    say(`L-BFGS stopped after ${result.iterations} iterations (${result.evaluations} passes over the data): ${result.converged}`);
  }

  const weights = Float32Array.from(best);
  let nonZero = 0;
  for (let b = 0; b < weights.length; b++) if (weights[b] !== 0) nonZero++;
  const info: ModelInfo = {
    format: MODEL_FORMAT,
    tool: { name: 'sheaf', version: TOOL_VERSION },
    method,
    settings: { epochs, cutoff, l2, seed, window },
    pipeline: { digest: m.pipeline.digest, config: m.pipeline.config, files: PIPELINE_FILES },
    hashing: { bits, seed: m.hashing.seed },
    trainedOn: { digest: shardsDigest(m), sentences: m.totals.written, candidates: m.totals.candidates, lists },
    dev: dm ? { digest: shardsDigest(dm), sentences: dm.totals.written } : null,
    features: { kept, nonZero },
    epochs: figures,
    bestEpoch,
    names: null,
  };
  const copies = [{ from: fileInside(o.shards, m.pipeline.files ?? PIPELINE_FILES), to: PIPELINE_FILES }].filter((c) => existsSync(c.from));
  makeFolder(o.out);
  // A folder with a model.json holds a whole model: drop the old one before writing the new.
  rmSync(join(o.out, 'model.json'), { force: true });
  if (m.names) {
    // The names of the buckets the model weighs.
    const names = parseNames(readFileSync(fileInside(o.shards, m.names.file), 'utf8'), join(o.shards, m.names.file));
    names.names = names.names.filter(([b]) => weights[b] !== 0);
    writeFileAtomic(join(o.out, 'names.json'), formatNames(names));
    info.names = 'names.json';
  }
  saveModel(o.out, info, weights, copies);
  say(`kept epoch ${bestEpoch}${dm ? ` (dev F1 ${bestDev.toFixed(2)})` : ''}; ${nonZero.toLocaleString('en-US')} non-zero weights; model in ${o.out}`);
  return { out: o.out, method, bestEpoch, epochs: timed, kept, nonZero, seconds: (Date.now() - started) / 1000 };
}
