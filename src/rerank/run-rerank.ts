/**
 * `sheaf rerank`: an n-best dump (file or `-`) and a model → the chosen tree
 * of every list, to stdout, in input order, exactly one line per input record
 * (so the output stays aligned with its input): the re-ranked tree, or — for
 * a record that cannot be re-ranked — its base 1-best when that parses, else
 * an empty line; stderr says why and counts them. A candidate whose tree does
 * not parse is left out of its list (named on stderr), not the list. Lists are featurised with
 * the model's own pipeline on the worker pool; memory is bounded by the batches
 * in flight.
 */
import { availableParallelism } from 'node:os';
import { UsageError } from '../core/errors.js';
import { loadModel } from '../io/model-dir.js';
import { readNbest } from '../io/read-nbest.js';
import { OrderedBatches, OrderedPool } from '../pool/ordered-pool.js';
import { rebuildPipeline } from '../pipeline/pipeline.js';
import type { CandidateText } from '../records.js';
import type { RerankInit, RerankJob, RerankResult } from './rerank-worker.js';

export interface RerankOptions {
  dump: string;
  model: string;
  jsonl?: boolean;
  workers?: number;
}

export interface RerankSummary {
  read: number;
  reranked: number;
  fellBack: number;
  empty: number;
  /** Candidates left out of lists that were re-ranked, as their trees do not parse. */
  candidatesSkipped: number;
}

type Item = { id: string | null; candidates: CandidateText[] | null; line: number | null; file: string; why?: string };

export async function runRerank(o: RerankOptions, write: (line: string) => Promise<void>, warn: (line: string) => void, stopped: () => boolean = () => false): Promise<RerankSummary> {
  const workers = o.workers ?? availableParallelism();
  if (!Number.isInteger(workers) || workers < 0 || workers > 256) throw new UsageError(`expected \`--workers\` to be an integer from 0 to 256, got \`${o.workers}\``);
  const model = loadModel(o.model);
  const pipeline = rebuildPipeline(model.info.pipeline.config, model.files);
  const init: RerankInit = { config: model.info.pipeline.config, files: model.files, weights: model.weights };
  const pool = await OrderedPool.start<RerankJob, RerankResult>({ size: workers, module: new URL('./rerank-worker.js', import.meta.url), init });
  const summary: RerankSummary = { read: 0, reranked: 0, fellBack: 0, empty: 0, candidatesSkipped: 0 };
  const out: string[] = [];
  const where = (i: Item) => `${i.file}${i.line ? `:${i.line}` : ''}${i.id !== null ? ` (id \`${i.id}\`)` : ''}`;
  const consume = (i: Item, r: RerankResult | undefined) => {
    if (!r) {
      summary.empty++;
      warn(`sheaf rerank: ${where(i)}: ${i.why}; wrote an empty line`);
      out.push(o.jsonl ? JSON.stringify({ id: i.id, rank: null, score: null, tree: null, why: i.why }) : '');
      return;
    }
    const tree = r.rank >= 0 ? i.candidates![r.rank].tree : null;
    if (r.score === null) {
      if (r.rank >= 0) summary.fellBack++;
      else summary.empty++;
      warn(`sheaf rerank: ${where(i)}: not re-ranked (${r.why}); wrote ${r.rank >= 0 ? 'its base 1-best' : 'an empty line'}`);
    } else {
      summary.reranked++;
      for (const k of r.skipped) {
        summary.candidatesSkipped++;
        warn(`sheaf rerank: ${where(i)}: candidate ${k.rank} left out (${k.why}); re-ranked among the others`);
      }
    }
    if (o.jsonl) out.push(JSON.stringify({ id: i.id, rank: r.rank >= 0 ? r.rank : null, score: r.score, tree, ...(r.score === null ? { why: r.why } : r.skipped.length > 0 ? { skipped: r.skipped.map((k) => k.rank) } : {}) }));
    else out.push(tree === null ? '' : tree.replace(/\s+/g, ' ').trim());
  };
  const batches = new OrderedBatches<Item, RerankJob, RerankResult>(pool, { batchSize: 8, maxInFlight: Math.max(2, pool.size * 3) }, consume);
  try {
    for await (const item of readNbest(o.dump, { maxCandidates: pipeline.maxCandidates })) {
      if (stopped()) break;
      summary.read++;
      if ('reject' in item) await batches.push({ id: item.reject.id, candidates: null, line: item.reject.line, file: item.reject.file, why: item.reject.reason });
      else await batches.push({ id: item.record.id, candidates: item.record.candidates, line: item.record.line || null, file: item.record.file }, { candidates: item.record.candidates });
      for (const l of out.splice(0)) await write(l);
    }
    await batches.finish();
    for (const l of out.splice(0)) await write(l);
  } finally {
    await pool.close();
  }
  return summary;
}
