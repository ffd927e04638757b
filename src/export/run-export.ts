/**
 * `sheaf export SHARD_DIR --format svmlight`: one line per candidate, for
 * trainers that read ranking data in the svmlight / libsvm style:
 *   <target> qid:<n> <index>:<value> … # <id> <rank>
 * target = the candidate's F1 as a fraction in [0, 1]; qid = the 1-based
 * sentence number in shard order; index = bucket + 1 (the format counts from
 * 1), ascending, with the candidate's absolute (reference + difference)
 * values. Sentences without candidates write no line.
 */
import { sentenceF1 } from '../core/f1-table.js';
import { addVectors } from '../core/sparse-vector.js';
import { UsageError } from '../core/errors.js';
import { readManifest, readShardDir } from '../io/read-shards.js';

export interface ExportOptions {
  shards: string;
  format: string;
}

export async function runExport(o: ExportOptions, write: (line: string) => Promise<void>, stopped: () => boolean = () => false): Promise<{ sentences: number; lines: number }> {
  if (o.format !== 'svmlight') throw new UsageError(`expected \`--format\` to be \`svmlight\`, got \`${o.format}\``);
  const m = readManifest(o.shards);
  let qid = 0;
  let lines = 0;
  for await (const s of readShardDir(o.shards, m)) {
    if (stopped()) break;
    qid++;
    for (const c of s.cands) {
      const v = addVectors(s.ref!, c.diff);
      const parts: string[] = [String(sentenceF1(s.gold, c)), `qid:${qid}`];
      for (let k = 0; k < v.idx.length; k++) parts.push(`${v.idx[k] + 1}:${v.val[k]}`);
      parts.push(`# ${s.id} ${c.rank}`);
      await write(parts.join(' '));
      lines++;
    }
  }
  return { sentences: qid, lines };
}
