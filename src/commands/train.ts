/** `sheaf train`: argv → runTrain (src/train/run-train.ts). */
import type { Argv } from 'yargs';
import { runTrain } from '../train/run-train.js';
import type { CommandModule } from './command.js';

export const trainCommand: CommandModule = {
  name: 'train <shards>',
  describe: 'train a re-ranker on a shard directory',
  builder: (y: Argv) =>
    y
      .positional('shards', { type: 'string', describe: 'training shard directory (made by sheaf prepare)' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'model directory' })
      .option('dev', { type: 'string', description: 'dev shard directory: picks the epoch kept' })
      .option('method', { choices: ['perceptron', 'loglinear'] as const, default: 'perceptron' as const, description: 'averaged perceptron, or log-linear (L-BFGS)' })
      .option('epochs', { type: 'number', description: 'passes over the data (perceptron: 10; log-linear: at most 100 iterations)' })
      .option('cutoff', { type: 'number', default: 5, description: 'keep features that vary in at least this many sentences' })
      .option('l2', { type: 'number', default: 1, description: 'log-linear: L2 penalty λ (objective + λ/2 ‖w‖²)' })
      .option('seed', { type: 'number', default: 0, description: 'seed of the order lists are visited in' })
      .option('force', { type: 'boolean', default: false, description: 'write into a folder holding other files' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .example('$0 train train-shards/ --dev dev-shards/ -o model/', 'averaged perceptron, 10 epochs, best on dev'),
  handler: async (args) => {
    const summary = await runTrain({
      shards: args.shards as string,
      out: args.out as string,
      dev: args.dev as string | undefined,
      method: args.method as 'perceptron' | 'loglinear',
      epochs: args.epochs as number | undefined,
      cutoff: args.cutoff as number,
      l2: args.l2 as number,
      seed: args.seed as number,
      quiet: args.quiet as boolean,
      force: args.force as boolean,
    }, (l) => console.error(l));
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
