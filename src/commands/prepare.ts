/** `sheaf prepare`: argv → runPrepare (src/prepare/run-prepare.ts). */
import { availableParallelism } from 'node:os';
import type { Argv } from 'yargs';
import { formatSubmission, submitPrepare } from '../cluster/submit.js';
import { UsageError } from '../core/errors.js';
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
      .option('max-reject-rate', { type: 'number', default: 0.5, description: 'fail (status 1) when more than this share of the n-best lists is rejected' })
      .option('force', { type: 'boolean', default: false, description: 'replace shards prepared from other inputs, or write into a folder holding other files' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .option('part', { type: 'string', description: 'I/N: process only the records at input positions p with p mod N = I (I from 0); join the N parts with `sheaf merge`' })
      .option('engine', { choices: ['local', 'slurm'], default: 'local', description: 'run here, or as Slurm jobs (an array of --tasks parts, then a merge)' })
      .option('tasks', { type: 'number', description: 'with --engine slurm: how many parts (array tasks) to cut the run into' })
      .option('slurm-opt', { type: 'string', array: true, description: 'with --engine slurm: an sbatch option for every job, in long form (--slurm-opt=--partition=main --slurm-opt=--mem=4G)' })
      .example('$0 prepare --gold huts-train.trees --nbest fold-*.jsonl.gz --pipeline default -o shards/', 'prepare training shards')
      .example('$0 prepare --gold huts-train.trees --nbest fold-*.jsonl.gz --pipeline default -o shards/ --engine slurm --tasks 8 --slurm-opt=--time=01:00:00', '8 parts on Slurm, merged into shards/ when all have run')
      .example('$0 prepare --gold huts-train.trees --nbest fold-*.jsonl.gz --pipeline default --part 1/4 -o parts/1', 'the second of four parts (then `sheaf merge parts/* -o shards/`)'),
  handler: async (args) => {
    const slurmOpts = (args['slurm-opt'] as string[] | undefined) ?? [];
    if (args.engine !== 'slurm' && (args.tasks !== undefined || slurmOpts.length > 0)) throw new UsageError('`--tasks` and `--slurm-opt` go with `--engine slurm`');
    const options = {
      gold: args.gold as string,
      nbest: args.nbest as string[],
      pipeline: args.pipeline as string,
      out: args.out as string,
      plan: args.plan as string | undefined,
      workers: args.workers as number,
      strict: args.strict as boolean,
      maxRejectRate: args.maxRejectRate as number,
      force: args.force as boolean,
      quiet: args.quiet as boolean,
      part: args.part === undefined ? undefined : parsePartSpec(String(args.part)),
    };
    if (args.engine === 'slurm') {
      if (args.tasks === undefined) throw new UsageError('`--engine slurm` needs `--tasks N`: how many parts to run as array tasks');
      const submitted = await submitPrepare(options, args.tasks as number, slurmOpts);
      if (args.json) console.log(JSON.stringify(submitted));
      else for (const l of formatSubmission(submitted, args.out as string)) console.log(l);
      return 0;
    }
    const summary = await runPrepare(options);
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
