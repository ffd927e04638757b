/** `sheaf export`: argv → runExport (src/export/run-export.ts). */
import type { Argv } from 'yargs';
import { runExport } from '../export/run-export.js';
import { LineOutput } from '../io/line-output.js';
import type { CommandModule } from './command.js';

export const exportCommand: CommandModule = {
  name: 'export <shards>',
  describe: 'write shards as sparse ranking text for other trainers',
  builder: (y: Argv) =>
    y
      .positional('shards', { type: 'string', describe: 'shard directory' })
      .option('format', { choices: ['svmlight'] as const, default: 'svmlight' as const, description: 'svmlight: target qid:n index:value … # id rank' })
      .example('$0 export shards/ --format svmlight > train.svm', 'for a ranking trainer of your choice'),
  handler: async (args) => {
    const out = new LineOutput();
    await runExport({ shards: args.shards as string, format: args.format as string }, (l) => out.line(l), () => out.closed);
    await out.flush();
    return 0;
  },
};
