/**
 * The figures of `sheaf report` as plain records: one pass over each shard
 * directory's ranking lists, plus what prepare recorded beside the shards
 * (manifest, count files, names.json) and what train recorded in a model
 * directory (model.json, names.json, the weights).
 *
 * F1 is never computed here in a way of its own: rows come from the F1 table
 * with the choices eval makes (core/f1-table.ts: base 1-best, oracle with
 * ties to the lower base rank; train/ranking.ts: the model's pick), and with
 * a model the rows by length and overall are eval's own (eval/run-eval.ts).
 */
import { existsSync, readFileSync } from 'node:fs';
import { basename, join, resolve } from 'node:path';
import { baseChoice, F1Table, oracleChoice, sentenceF1, type F1Row } from '../core/f1-table.js';
import { prf } from '../core/parseval.js';
import { UsageError } from '../core/errors.js';
import { LENGTH_BUCKETS, runEval, type EvalSummary } from '../eval/run-eval.js';
import { decodeCounts } from '../formats/counts-file.js';
import type { NamesSummary, ShardManifest } from '../formats/manifest.js';
import type { EpochFigures, ModelInfo } from '../formats/model.js';
import { parseNames } from '../formats/names-file.js';
import { topWeights } from '../inspect/inspect-model.js';
import { loadModel, type LoadedModel } from '../io/model-dir.js';
import { readManifest, readRankingListDir } from '../io/read-shards.js';
import { pick, scored, scores } from '../train/ranking.js';

export type System = 'base' | 'oracle' | 're-ranked';

export interface LengthRow {
  /** The bucket's name as eval gives it (`1–10`, `41+`). */
  words: string;
  sentences: number;
  base: F1Row;
  oracle: F1Row;
  reranked: F1Row | null;
}

/** A sentence where the base 1-best falls short of the list's best. */
export interface GapSentence {
  id: string;
  /** 1-based number of the sentence in shard order. */
  number: number;
  words: number;
  candidates: number;
  /** Sentence F1 as percentages. */
  base: number;
  oracle: number;
  reranked: number | null;
  /** 1-based position of the oracle's choice in the base ranking. */
  oraclePosition: number;
}

export interface TemplateShare {
  template: string;
  /** Distinct buckets the template fired, summed over sentences. */
  fired: number;
  /** … of which vary between the candidates of their sentence. */
  varying: number;
}

export interface ShardDirFigures {
  /** The path as given. */
  dir: string;
  /** A short name for legends, unique among the directories of one report. */
  label: string;
  sentences: number;
  candidates: number;
  noCandidates: number;
  bits: number;
  /** Overall rows; with a model exactly eval's (`reranked` null without one). */
  base: F1Row;
  oracle: F1Row;
  reranked: F1Row | null;
  /** With a model: eval's whole summary for this directory. */
  eval: EvalSummary | null;
  byLength: LengthRow[];
  /** Corpus F1 of the oracle restricted to base ranks < depth, for depth 1 … the longest list. */
  oracleAtDepth: { depth: number; f1: number }[];
  /** How many sentences have lists of each size. */
  listSizes: { candidates: number; sentences: number }[];
  /** Per base rank, how many sentences have the oracle's choice there. */
  oracleRanks: number[];
  /** Per base rank, how many sentences have the model's choice there (with a model). */
  rerankedRanks: number[] | null;
  /** The sentences with the largest base → oracle gap (at most `gapRows`). */
  gaps: GapSentence[];
  hashing: {
    /** Buckets that vary in at least `threshold` sentences, from the count files. */
    varyingAtLeast: { threshold: number; buckets: number }[];
    /** What prepare measured when it kept names (null when it did not). */
    names: NamesSummary | null;
  };
  templates: TemplateShare[];
}

export interface ModelFigures {
  dir: string;
  method: ModelInfo['method'];
  epochs: EpochFigures[];
  bestEpoch: number;
  features: ModelInfo['features'];
  cutoff: number;
  trainedOn: number;
  /** Highest then lowest weights, with their kept key names (empty without names.json). */
  top: { side: 'highest' | 'lowest'; bucket: number; weight: number; names: string[] }[];
  namesKept: boolean;
}

export interface ReportData {
  shards: ShardDirFigures[];
  model: ModelFigures | null;
}

export interface ReportDataOptions {
  shards: string[];
  model?: string;
  /** Highest and lowest weights to list (each). */
  top?: number;
  /** Bootstrap resamples and seed handed to eval. */
  samples?: number;
  seed?: number;
  /** Sentences listed with the largest base → oracle gap. */
  gapRows?: number;
}

/** Thresholds of the occupancy chart: buckets varying in at least T sentences. */
export const THRESHOLDS = [1, 2, 3, 5, 10, 20, 50, 100, 200, 500, 1000];

export async function reportData(o: ReportDataOptions): Promise<ReportData> {
  if (o.shards.length === 0) throw new UsageError('expected at least one shard directory (made by `sheaf prepare`)');
  const top = o.top ?? 15;
  if (!Number.isInteger(top) || top < 1 || top > 1000) throw new UsageError(`expected \`--top\` to be an integer from 1 to 1000, got \`${o.top}\``);
  const seen = new Set<string>();
  for (const d of o.shards) {
    const key = resolve(d);
    if (seen.has(key)) throw new UsageError(`the shard directory \`${d}\` is given twice; give each directory once`);
    seen.add(key);
  }
  const model = o.model !== undefined ? loadModel(o.model) : null;
  const labels = shortLabels(o.shards);
  const shards: ShardDirFigures[] = [];
  for (const [k, dir] of o.shards.entries()) {
    const m = readManifest(dir);
    const ev = model ? await runEval({ shards: dir, model: o.model!, samples: o.samples, seed: o.seed }) : null;
    shards.push(await shardFigures(dir, labels[k], m, model, ev, o.gapRows ?? 10));
  }
  return { shards, model: model ? modelFigures(model, top) : null };
}

/** Base names where they tell the directories apart, else the paths as given. */
export function shortLabels(dirs: string[]): string[] {
  const base = dirs.map((d) => basename(d.replace(/[\\/]+$/, '')) || d);
  return new Set(base).size === base.length ? base : dirs.slice();
}

async function shardFigures(dir: string, label: string, m: ShardManifest, model: LoadedModel | null, ev: EvalSummary | null, gapRows: number): Promise<ShardDirFigures> {
  const t = new F1Table();
  // Oracle at depth d (index d - 1): summed counts of each sentence's best candidate among ranks < d
  // (dm, dt); a list that ends at depth e adds its best once to tm[e], tt[e], counted at every depth > e.
  let dm = new Float64Array(64);
  let dt = new Float64Array(64);
  let tm = new Float64Array(65);
  let tt = new Float64Array(65);
  let depthMax = 0;
  let goldSum = 0;
  const sizes = new Map<number, number>();
  const oracleRanks: number[] = [];
  const gaps: GapSentence[] = [];
  let sentences = 0;
  let candidates = 0;
  let noCandidates = 0;
  let s = new Float64Array(64);
  for await (const list of readRankingListDir(dir, m)) {
    sentences++;
    const n = list.rank.length;
    candidates += n;
    if (n === 0) noCandidates++;
    sizes.set(n, (sizes.get(n) ?? 0) + 1);
    const sentence = scored(list);
    const b = baseChoice(sentence);
    const or = oracleChoice(sentence);
    let r = -1;
    if (model) {
      if (s.length < n) s = new Float64Array(n * 2);
      r = n ? pick(list, scores(list, model.weights, s)) : -1;
    }
    const lb = LENGTH_BUCKETS.find(([lo, hi]) => list.len >= lo && list.len <= hi) ?? LENGTH_BUCKETS[0];
    const bucket = `len:${bucketName(lb)}:`;
    for (const prefix of ['', bucket]) {
      t.addChoice(`${prefix}base`, sentence, b);
      t.addChoice(`${prefix}oracle`, sentence, or);
      if (model) t.addChoice(`${prefix}reranked`, sentence, r);
    }
    if (or >= 0) oracleRanks[list.rank[or]] = (oracleRanks[list.rank[or]] ?? 0) + 1;

    // Depth curve: walk the candidates in base-rank order, keeping the best so far
    // (a later one replaces it only when strictly better: ties to the lower rank).
    goldSum += list.gold;
    const order = Array.from(list.rank.keys()).sort((x, y) => list.rank[x] - list.rank[y]);
    const depthEnd = n ? list.rank[order[n - 1]] + 1 : 0;
    if (depthEnd > dm.length) {
      const grow = (a: Float64Array, size: number) => {
        const g = new Float64Array(size);
        g.set(a);
        return g;
      };
      const size = Math.max(depthEnd, 2 * dm.length);
      [dm, dt, tm, tt] = [grow(dm, size), grow(dt, size), grow(tm, size + 1), grow(tt, size + 1)];
    }
    let best = -1;
    let bestF = -1;
    let at = 0;
    for (let d = 1; d <= depthEnd; d++) {
      while (at < n && list.rank[order[at]] < d) {
        const c = order[at++];
        const f = sentenceF1(list.gold, { matched: list.matched[c], test: list.test[c] });
        if (f > bestF) {
          bestF = f;
          best = c;
        }
      }
      if (best >= 0) {
        dm[d - 1] += list.matched[best];
        dt[d - 1] += list.test[best];
      }
    }
    if (best >= 0) {
      tm[depthEnd] += list.matched[best];
      tt[depthEnd] += list.test[best];
    }
    depthMax = Math.max(depthMax, depthEnd);

    const f1Of = (k: number) => (k >= 0 ? 100 * sentenceF1(list.gold, { matched: list.matched[k], test: list.test[k] }) : 0);
    const gap: GapSentence = { id: list.id, number: sentences, words: list.len, candidates: n, base: f1Of(b), oracle: f1Of(or), reranked: model ? f1Of(r) : null, oraclePosition: or >= 0 ? list.rank[or] + 1 : 0 };
    keepLargestGaps(gaps, gap, gapRows);
  }
  const oracleAtDepth: { depth: number; f1: number }[] = [];
  let carryM = 0;
  let carryT = 0;
  for (let d = 1; d <= depthMax; d++) {
    carryM += tm[d - 1];
    carryT += tt[d - 1];
    oracleAtDepth.push({ depth: d, f1: prf({ matched: dm[d - 1] + carryM, test: dt[d - 1] + carryT, gold: goldSum }).f1 });
  }

  const rows = (prefix: string) => ({ base: t.row(`${prefix}base`), oracle: t.row(`${prefix}oracle`), reranked: model ? t.row(`${prefix}reranked`) : null });
  const byLength: LengthRow[] = ev
    ? ev.byLength.map((x) => ({ words: x.words, sentences: x.base.sentences, base: x.base, oracle: x.oracle, reranked: x.reranked }))
    : LENGTH_BUCKETS.filter((lb) => t.has(`len:${bucketName(lb)}:base`)).map((lb) => {
        const r = rows(`len:${bucketName(lb)}:`);
        return { words: bucketName(lb), sentences: r.base.sentences, ...r };
      });
  const all = ev ? { base: ev.base, oracle: ev.oracle, reranked: ev.reranked } : rows('');
  return {
    dir,
    label,
    sentences,
    candidates,
    noCandidates,
    bits: m.hashing.bits,
    ...all,
    eval: ev,
    byLength,
    oracleAtDepth,
    listSizes: [...sizes].sort((a, b) => a[0] - b[0]).map(([c, n]) => ({ candidates: c, sentences: n })),
    oracleRanks: Array.from(oracleRanks, (x) => x ?? 0),
    rerankedRanks: ev ? ev.chosenRanks : null,
    gaps,
    hashing: { varyingAtLeast: varyingAtLeast(dir, m), names: m.names ?? null },
    templates: templateShares(m),
  };
}

/** A length bucket's name as eval writes it. */
export const bucketName = ([lo, hi]: [number, number]) => (hi === Infinity ? `${lo}+` : `${lo}–${hi}`);

/** Keeps `list` as the `n` largest gaps (oracle − base), ties to the earlier sentence. */
function keepLargestGaps(list: GapSentence[], g: GapSentence, n: number): void {
  const size = g.oracle - g.base;
  if (size <= 0) return;
  const before = (a: GapSentence) => a.oracle - a.base >= size;
  let k = list.length;
  while (k > 0 && !before(list[k - 1])) k--;
  if (k >= n) return;
  list.splice(k, 0, g);
  if (list.length > n) list.pop();
}

/** Buckets that vary in at least T sentences of the directory, from the summed count files. */
function varyingAtLeast(dir: string, m: ShardManifest): { threshold: number; buckets: number }[] {
  const sum = new Map<number, number>();
  for (const sh of m.shards) {
    const file = join(dir, sh.counts);
    if (!existsSync(file)) throw new UsageError(`\`${dir}\`: the manifest names the count file \`${sh.counts}\`, which is missing; run \`sheaf prepare\` again`);
    const c = decodeCounts(readFileSync(file), file);
    for (let k = 0; k < c.idx.length; k++) sum.set(c.idx[k], (sum.get(c.idx[k]) ?? 0) + c.count[k]);
  }
  const at = new Array<number>(THRESHOLDS.length).fill(0);
  for (const v of sum.values()) for (let k = 0; k < THRESHOLDS.length && v >= THRESHOLDS[k]; k++) at[k]++;
  return THRESHOLDS.map((threshold, k) => ({ threshold, buckets: at[k] }));
}

/** Per template, fired and varying buckets summed over the directory's shards, in pipeline order. */
function templateShares(m: ShardManifest): TemplateShare[] {
  const out = new Map<string, TemplateShare>();
  for (const sh of m.shards) {
    for (const [template, [fired, varying]] of Object.entries(sh.templates ?? {})) {
      const t = out.get(template) ?? { template, fired: 0, varying: 0 };
      t.fired += fired;
      t.varying += varying;
      out.set(template, t);
    }
  }
  return [...out.values()];
}

function modelFigures(model: LoadedModel, top: number): ModelFigures {
  const info = model.info;
  let names = new Map<number, string[]>();
  const namesFile = info.names ? join(model.dir, info.names) : null;
  if (namesFile && existsSync(namesFile)) names = new Map(parseNames(readFileSync(namesFile, 'utf8'), namesFile).names);
  const { highest, lowest } = topWeights(model.weights, top);
  // A model with fewer non-zero weights than 2 × top would list some twice.
  const low = lowest.filter((b) => !highest.includes(b));
  const row = (side: 'highest' | 'lowest', b: number) => ({ side, bucket: b, weight: model.weights[b], names: names.get(b) ?? [] });
  return {
    dir: model.dir,
    method: info.method,
    epochs: info.epochs,
    bestEpoch: info.bestEpoch,
    features: info.features,
    cutoff: info.settings.cutoff,
    trainedOn: info.trainedOn.sentences,
    top: [...highest.map((b) => row('highest', b)), ...low.map((b) => row('lowest', b))],
    namesKept: names.size > 0,
  };
}
