/** `sheaf split`: argv → runSplit (src/folds/run-split.ts). */
import type { Argv } from 'yargs';
import { runSplit } from '../folds/run-split.js';
import type { CommandModule } from './command.js';

export const splitCommand: CommandModule = {
  name: 'split <gold>',
  describe: 'cut a gold treebank into k folds for jackknifing',
  builder: (y: Argv) =>
    y
      .positional('gold', { type: 'string', describe: 'gold treebank (brackets or JSONL; .gz; - for stdin)' })
      .option('folds', { alias: 'k', type: 'number', demandOption: true, description: 'number of folds (≥ 2)' })
      .option('seed', { type: 'number', default: 0, description: 'seed of the id hash (method hash)' })
      .option('method', { choices: ['hash', 'blocks'] as const, default: 'hash' as const, description: 'hash: by a seeded hash of the id (adding sentences moves no old one); blocks: contiguous blocks' })
      .option('write-train', { type: 'boolean', default: false, description: 'also write each fold\'s training part (k − 1 copies of the corpus)' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'plan folder' })
      .option('force', { type: 'boolean', default: false, description: 'write into a folder holding other files' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .example('$0 split huts-train.trees --folds 10 -o plan/', 'ten folds by id hash'),
  handler: async (args) => {
    const summary = await runSplit({
      gold: args.gold as string,
      folds: args.folds as number,
      seed: args.seed as number,
      method: args.method as 'hash' | 'blocks',
      writeTrain: args['write-train'] as boolean,
      out: args.out as string,
      quiet: args.quiet as boolean,
      force: args.force as boolean,
    }, (l) => console.error(l));
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
