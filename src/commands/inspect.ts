/** `sheaf inspect`: argv → inspectShards (src/inspect/inspect-shards.ts). */
import type { Argv } from 'yargs';
import { inspectShards } from '../inspect/inspect-shards.js';
import { LineOutput } from '../io/line-output.js';
import type { CommandModule } from './command.js';

export const inspectCommand: CommandModule = {
  name: 'inspect <dir>',
  describe: 'show the records and features of a shard directory',
  builder: (y: Argv) =>
    y
      .positional('dir', { type: 'string', describe: 'shard directory (made by sheaf prepare)' })
      .option('jsonl', { type: 'boolean', default: false, description: 'one JSON line per sentence with absolute feature vectors' })
      .option('id', { type: 'string', description: 'only the sentence with this id' })
      .option('names', { type: 'boolean', default: false, description: 'add the kept key names of each bucket (needs names.json)' })
      .example('$0 inspect shards/ --jsonl', 'every sentence as JSON Lines')
      .example('$0 inspect shards/ --id 17 --names', 'one sentence, its candidates and their named features'),
  handler: async (args) => {
    const out = new LineOutput();
    const status = await inspectShards({ dir: args.dir as string, jsonl: args.jsonl as boolean, id: args.id as string | undefined, names: args.names as boolean }, (l) => out.line(l), () => out.closed);
    await out.flush();
    return status;
  },
};
