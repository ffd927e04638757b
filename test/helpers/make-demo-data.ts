/**
 * Writes test inputs into a folder: a fold plan (folds.json, k folds by
 * position) and one synthetic n-best dump per fold, provenance-stamped, from
 * a gold treebank (fast, and with lists that sometimes miss the gold tree).
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { createVocabulary } from '../../src/core/interner.js';
import { readTreebank } from '../../src/io/read-treebank.js';
import { seededRandom, syntheticCandidates } from './synthetic-nbest.js';

export interface DemoData {
  plan: string;
  dumps: string[];
  sentences: number;
}

export async function makeDemoData(gold: string, dir: string, options: { folds?: number; nbest?: number; seed?: number } = {}): Promise<DemoData> {
  const k = options.folds ?? 5;
  const nbest = options.nbest ?? 20;
  const rand = seededRandom(options.seed ?? 1);
  const vocab = createVocabulary();
  mkdirSync(join(dir, 'plan'), { recursive: true });
  const ids: string[][] = Array.from({ length: k }, () => []);
  const lines: string[][] = Array.from({ length: k }, () => []);
  let n = 0;
  for await (const rec of readTreebank(gold, { vocab })) {
    const fold = n++ % k;
    ids[fold].push(rec.id);
    const source = { parser: 'synthetic-demo', fingerprint: `sha256:demo-fold-${fold}` };
    lines[fold].push(JSON.stringify({ id: rec.id, fold, source, candidates: syntheticCandidates(rec.tree, nbest, rand, vocab) }));
  }
  const folds = ids.map((list, fold) => ({ fold, ids: list, model: { parser: 'synthetic-demo', fingerprint: `sha256:demo-fold-${fold}` } }));
  const plan = join(dir, 'plan');
  writeFileSync(join(plan, 'folds.json'), JSON.stringify({ format: 'sheaf-folds/1', k, folds }) + '\n');
  const dumps = lines.map((l, fold) => {
    const file = join(dir, `nbest-fold-${fold}.jsonl`);
    writeFileSync(file, l.join('\n') + '\n');
    return file;
  });
  return { plan, dumps, sentences: n };
}
