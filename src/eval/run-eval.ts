/**
 * `sheaf eval`: a model on a shard directory. Corpus labeled bracket
 * precision, recall and F1 (from summed counts) of the base model's 1-best,
 * the oracle (best candidate of each list) and the re-ranked choice, for all
 * sentences and for those of at most 40 words; a paired bootstrap of
 * re-ranked against base; the share of the base → oracle gap recovered.
 * Ties: the oracle and the model both prefer the lower base rank.
 */
import { baseChoice, F1Table, oracleChoice, type F1Row } from '../core/f1-table.js';
import { UsageError } from '../core/errors.js';
import { loadModel } from '../io/model-dir.js';
import { readManifest, readRankingListDir } from '../io/read-shards.js';
import { pick, scored, scores } from '../train/ranking.js';
import { pairedBootstrap, type BootstrapResult } from './bootstrap.js';

export interface EvalOptions {
  shards: string;
  model: string;
  samples?: number;
  seed?: number;
}

export interface Rows {
  base: F1Row;
  oracle: F1Row;
  reranked: F1Row;
}

export interface EvalSummary extends Rows {
  le40: Rows;
  /** By sentence length (words): the same rows per bucket. */
  byLength: ({ words: string } & Rows)[];
  bootstrap: { p: number; samples: number; seed: number };
  gapRecovered: number | null;
  /** Where the chosen candidate sits in the base ranking: count per base rank of the choice. */
  chosenRanks: number[];
}

export const LENGTH_BUCKETS: [number, number][] = [[1, 10], [11, 20], [21, 30], [31, 40], [41, Infinity]];
const bucketName = ([lo, hi]: [number, number]) => (hi === Infinity ? `${lo}+` : `${lo}–${hi}`);

export async function runEval(o: EvalOptions): Promise<EvalSummary> {
  const samples = o.samples ?? 10000;
  const seed = o.seed ?? 0;
  if (!Number.isInteger(samples) || samples < 1 || samples > 1e7) throw new UsageError(`expected \`--samples\` to be an integer from 1 to 10000000, got \`${o.samples}\``);
  const model = loadModel(o.model);
  const m = readManifest(o.shards);
  if (m.pipeline.digest !== model.info.pipeline.digest) {
    throw new UsageError(`the shards \`${o.shards}\` were prepared with another pipeline (${m.pipeline.digest}) than the model \`${o.model}\` needs (${model.info.pipeline.digest}); prepare them with the model's pipeline`);
  }
  const t = new F1Table();
  const gold: number[] = [];
  const ma: number[] = [];
  const ta: number[] = [];
  const mb: number[] = [];
  const tb: number[] = [];
  const chosenRanks: number[] = [];
  let s = new Float64Array(64);
  for await (const list of readRankingListDir(o.shards, m)) {
    const n = list.rank.length;
    if (s.length < n) s = new Float64Array(n * 2);
    const sentence = scored(list);
    const b = baseChoice(sentence);
    const or = oracleChoice(sentence);
    const r = n ? pick(list, scores(list, model.weights, s)) : -1;
    // Rows this sentence counts in: all, ≤ 40 words, its length bucket.
    const lb = LENGTH_BUCKETS.find(([lo, hi]) => list.len >= lo && list.len <= hi) ?? LENGTH_BUCKETS[0];
    const rows = ['', `len:${bucketName(lb)}:`];
    if (list.len <= 40) rows.push('le40:');
    for (const prefix of rows) {
      t.addChoice(`${prefix}base`, sentence, b);
      t.addChoice(`${prefix}oracle`, sentence, or);
      t.addChoice(`${prefix}reranked`, sentence, r);
    }
    gold.push(list.gold);
    ma.push(r >= 0 ? list.matched[r] : 0);
    ta.push(r >= 0 ? list.test[r] : 0);
    mb.push(b >= 0 ? list.matched[b] : 0);
    tb.push(b >= 0 ? list.test[b] : 0);
    if (r >= 0) chosenRanks[list.rank[r]] = (chosenRanks[list.rank[r]] ?? 0) + 1;
  }
  const rowsOf = (prefix: string): Rows => ({ base: t.row(`${prefix}base`), oracle: t.row(`${prefix}oracle`), reranked: t.row(`${prefix}reranked`) });
  const all = rowsOf('');
  const boot: BootstrapResult = pairedBootstrap({ gold: Float64Array.from(gold), matchedA: Float64Array.from(ma), testA: Float64Array.from(ta), matchedB: Float64Array.from(mb), testB: Float64Array.from(tb) }, samples, seed);
  const gap = all.oracle.f1 - all.base.f1;
  return {
    ...all,
    le40: rowsOf('le40:'),
    byLength: LENGTH_BUCKETS.filter((lb) => t.has(`len:${bucketName(lb)}:base`)).map((lb) => ({ words: bucketName(lb), ...rowsOf(`len:${bucketName(lb)}:`) })),
    bootstrap: { p: boot.p, samples: boot.samples, seed: boot.seed },
    gapRecovered: gap > 0 ? (all.reranked.f1 - all.base.f1) / gap : null,
    chosenRanks: Array.from(chosenRanks, (x) => x ?? 0),
  };
}

/** The F1 table as text: our own layout. */
export function formatEval(e: EvalSummary, title: string): string[] {
  const n = (x: number) => x.toLocaleString('en-US');
  const line = (name: string, r: F1Row) => `${name.padEnd(12)} ${r.precision.toFixed(2).padStart(9)} ${r.recall.toFixed(2).padStart(9)} ${r.f1.toFixed(2).padStart(9)} ${n(r.sentences).padStart(10)}`;
  const out = [`${title.padEnd(12)} ${'precision'.padStart(9)} ${'recall'.padStart(9)} ${'F1'.padStart(9)} ${'sentences'.padStart(10)}`];
  out.push(line('base', e.base), line('oracle', e.oracle), line('re-ranked', e.reranked));
  if (e.le40.base.sentences !== e.base.sentences) out.push(`${'≤ 40 words'.padEnd(12)}`, line('  base', e.le40.base), line('  oracle', e.le40.oracle), line('  re-ranked', e.le40.reranked));
  const delta = e.reranked.f1 - e.base.f1;
  out.push('');
  const p = e.bootstrap.p === 0 ? `< ${(1 / e.bootstrap.samples).toPrecision(1)} (no sample of ${n(e.bootstrap.samples)} reached twice the gain)` : `= ${e.bootstrap.p.toFixed(4)} (${n(e.bootstrap.samples)} samples)`;
  out.push(`re-ranked − base: ${delta >= 0 ? '+' : ''}${delta.toFixed(2)} F1; paired bootstrap p ${p}, seed ${e.bootstrap.seed}${e.gapRecovered !== null ? `; ${(100 * e.gapRecovered).toFixed(1)} % of the base → oracle gap recovered` : ''}`);
  return out;
}
