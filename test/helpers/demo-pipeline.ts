/**
 * The shipped demo pipeline (pipelines/demo.json) as an object for tests to
 * write where they need it: its lexicon path made absolute, with the shard
 * size and (when given) the names setting of the test.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** A stage of a pipeline object by its id (for tests that change more options). */
export const stageOf = (p: any, id: string): any => p.stages.find((s: any) => s.stage === id);

export function demoPipeline(o: { sentencesPerShard: number; names?: number }): any {
  const p = JSON.parse(readFileSync(join(root, 'pipelines/demo.json'), 'utf8'));
  stageOf(p, 'write-shards.v1').sentencesPerShard = o.sentencesPerShard;
  stageOf(p, 'extract-features.v1').templates.find((t: any) => t.template === 'lexicon.v1').path = join(root, 'demo-corpus/lexicon.tsv');
  if (o.names !== undefined) stageOf(p, 'hash-features.v2').names = o.names;
  return p;
}
