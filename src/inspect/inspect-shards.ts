/**
 * `sheaf inspect SHARD_DIR`: the format-independent view of a shard
 * directory. `--jsonl` prints one line per sentence, candidates with their
 * absolute feature vectors (reference + difference) as [[index, value], …]
 * sorted by index; the human view prints the manifest's summary and a line
 * per sentence (or a sentence's candidates in full with `--id`).
 */
import { existsSync, readFileSync } from 'node:fs';
import { baseChoice, oracleChoice, sentenceF1 } from '../core/f1-table.js';
import { addVectors, storedLength, type SparseVector } from '../core/sparse-vector.js';
import { parseNames } from '../formats/names-file.js';
import { readManifest, readShardDir } from '../io/read-shards.js';
import type { ShardSentence } from '../records.js';
import { fileInside } from '../io/files.js';

export interface InspectShardOptions {
  dir: string;
  jsonl: boolean;
  id?: string;
  names?: boolean;
}

/** The absolute vector of every candidate of a sentence. */
export function absoluteVectors(s: ShardSentence): SparseVector[] {
  return s.cands.map((c) => addVectors(s.ref!, c.diff));
}

/** One sentence as its `--jsonl` line's object. */
export function sentenceView(s: ShardSentence, names?: Map<number, string[]>): object {
  const vectors = absoluteVectors(s);
  return {
    id: s.id,
    fold: s.fold,
    gold: s.gold,
    len: s.len,
    flag: s.flag,
    cands: s.cands.map((c, k) => ({
      rank: c.rank,
      score: c.score,
      matched: c.matched,
      test: c.test,
      features: Array.from(vectors[k].idx, (b, j) => (names ? [b, vectors[k].val[j], names.get(b) ?? []] : [b, vectors[k].val[j]])),
    })),
  };
}

export async function inspectShards(o: InspectShardOptions, print: (line: string) => void | Promise<void>, stopped: () => boolean = () => false): Promise<number> {
  const manifest = readManifest(o.dir);
  let names: Map<number, string[]> | undefined;
  if (o.names) {
    const file = fileInside(o.dir, 'names.json');
    if (!existsSync(file)) print(`# ${o.dir} keeps no feature names (set \`names\` in the hashing stage to keep them)`);
    else names = new Map(parseNames(readFileSync(file, 'utf8'), file).names);
  }
  let shown = 0;
  if (!o.jsonl && o.id === undefined) {
    const t = manifest.totals;
    const n = (x: number) => x.toLocaleString('en-US');
    print(`${o.dir}: ${manifest.format}, ${n(t.written)} sentences, ${n(t.candidates)} candidates in ${manifest.shards.length} shard(s); ${n(t.rejected)} rejected; hash space 2^${manifest.hashing.bits}`);
    print(`${'id'.padEnd(14)} ${'fold'.padStart(4)} ${'words'.padStart(5)} ${'cands'.padStart(5)} ${'base F1'.padStart(7)} ${'oracle F1'.padStart(9)} ${'(rank)'.padStart(6)} ${'stored'.padStart(7)}`);
  }
  for await (const s of readShardDir(o.dir, manifest)) {
    if (stopped()) break;
    if (o.id !== undefined && s.id !== o.id) continue;
    shown++;
    if (o.jsonl) {
      await print(JSON.stringify(sentenceView(s, names)));
      continue;
    }
    if (o.id !== undefined) {
      for (const l of sentenceLines(s, names)) await print(l);
      continue;
    }
    const b = baseChoice(s);
    const k = oracleChoice(s);
    const f = (j: number) => (j < 0 ? '-' : (100 * sentenceF1(s.gold, s.cands[j])).toFixed(1));
    const stored = (s.ref ? storedLength(s.ref) : 0) + s.cands.reduce((a, c) => a + storedLength(c.diff), 0);
    await print(`${s.id.padEnd(14)} ${String(s.fold ?? '-').padStart(4)} ${String(s.len).padStart(5)} ${String(s.cands.length).padStart(5)} ${f(b).padStart(7)} ${f(k).padStart(9)} ${(k < 0 ? '' : `(${s.cands[k].rank})`).padStart(6)} ${String(stored).padStart(7)}`);
  }
  if (o.id !== undefined && shown === 0) {
    print(`# no sentence has the id \`${o.id}\` in ${o.dir}`);
    return 1;
  }
  return 0;
}

function sentenceLines(s: ShardSentence, names: Map<number, string[]> | undefined): string[] {
  const out: string[] = [];
  const print = (l: string) => out.push(l);
  print(`sentence ${s.id}: fold ${s.fold ?? '-'}, ${s.len} words, ${s.gold} gold brackets, ${s.cands.length} candidates${s.flag ? `, ${s.flag}` : ''}`);
  const vectors = absoluteVectors(s);
  s.cands.forEach((c, k) => {
    print(`  rank ${c.rank}: score ${c.score}, matched ${c.matched} of ${c.test} (F1 ${(100 * sentenceF1(s.gold, c)).toFixed(1)}), ${vectors[k].idx.length} features stored, ${storedLength(c.diff)} differ from the reference`);
    if (!names) return;
    const v = vectors[k];
    for (let j = 0; j < v.idx.length; j++) print(`      ${String(v.idx[j]).padStart(8)} ${String(v.val[j]).padStart(10)}  ${(names.get(v.idx[j]) ?? []).join(' | ')}`);
  });
  return out;
}
