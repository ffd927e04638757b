/** `sheaf eval`: argv → runEval (src/eval/run-eval.ts). */
import type { Argv } from 'yargs';
import { formatEval, runEval } from '../eval/run-eval.js';
import type { CommandModule } from './command.js';

export const evalCommand: CommandModule = {
  name: 'eval <shards>',
  describe: 'base, oracle and re-ranked F1 of a model on a shard directory',
  builder: (y: Argv) =>
    y
      .positional('shards', { type: 'string', describe: 'shard directory (made by sheaf prepare with the model\'s pipeline)' })
      .option('model', { type: 'string', demandOption: true, description: 'model directory (made by sheaf train)' })
      .option('samples', { type: 'number', default: 10000, description: 'bootstrap resamples' })
      .option('seed', { type: 'number', default: 0, description: 'bootstrap seed' })
      .option('json', { type: 'boolean', default: false, description: 'print one JSON object instead of the table' })
      .example('$0 eval test-shards/ --model model/', 'the F1 table with a significance test'),
  handler: async (args) => {
    const e = await runEval({ shards: args.shards as string, model: args.model as string, samples: args.samples as number, seed: args.seed as number });
    if (args.json) console.log(JSON.stringify(e));
    else for (const l of formatEval(e, 'all')) console.log(l);
    return 0;
  },
};
