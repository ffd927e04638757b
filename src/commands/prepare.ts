/** `sheaf prepare`: argv → runPrepare (src/prepare/run-prepare.ts). */
import { availableParallelism } from 'node:os';
import type { Argv } from 'yargs';
import { parsePartSpec } from '../prepare/part-output.js';
import { runPrepare } from '../prepare/run-prepare.js';
import type { CommandModule } from './command.js';

export const prepareCommand: CommandModule = {
  name: 'prepare',
  describe: 'score, featurise and hash n-best lists into binary shards',
  builder: (y: Argv) =>
    y
      .option('gold', { type: 'string', demandOption: true, description: 'gold treebank (brackets or JSONL; .gz; - for stdin)' })
      .option('nbest', { type: 'string', array: true, demandOption: true, description: 'n-best dump(s): JSONL or a JSON array; .gz' })
      .option('pipeline', { type: 'string', demandOption: true, description: 'pipeline file, or a shipped pipeline: default, demo' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'shard directory' })
      .option('plan', { type: 'string', description: 'fold plan directory (folds.json): refuse lists from a base model that saw the sentence' })
      .option('workers', { type: 'number', default: availableParallelism(), description: 'worker threads (0: run in the main thread)' })
      .option('strict', { type: 'boolean', default: false, description: 'stop at the first bad record instead of rejecting it' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .option('part', { type: 'string', description: 'I/N: process only the records at input positions p with p mod N = I (I from 0); join the N parts with `sheaf merge`' })
      .example('$0 prepare --gold huts-train.trees --nbest fold-*.jsonl.gz --pipeline default -o shards/', 'prepare training shards')
      .example('$0 prepare --gold huts-train.trees --nbest fold-*.jsonl.gz --pipeline default --part 1/4 -o parts/1', 'the second of four parts (then `sheaf merge parts/* -o shards/`)'),
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
      part: args.part === undefined ? undefined : parsePartSpec(String(args.part)),
    });
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
