/** `sheaf merge`: argv → runMerge (src/merge/run-merge.ts). */
import type { Argv } from 'yargs';
import { runMerge } from '../merge/run-merge.js';
import type { CommandModule } from './command.js';

export const mergeCommand: CommandModule = {
  name: 'merge <parts..>',
  describe: 'merge the parts of a prepare run (--part I/N) into one shard directory, checked complete and disjoint',
  builder: (y: Argv) =>
    y
      .positional('parts', { type: 'string', array: true, description: 'the part folders (every part of one run, in any order)' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'shard directory to write' })
      .option('force', { type: 'boolean', default: false, description: 'write into a folder holding other files' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .example('$0 merge parts/0 parts/1 parts/2 parts/3 -o shards/', 'join four parts into the shards one machine would have written'),
  handler: async (args) => {
    const summary = await runMerge({ parts: args.parts as string[], out: args.out as string, quiet: args.quiet as boolean, force: args.force as boolean });
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
