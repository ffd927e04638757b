/** `sheaf inspect`: argv → inspectShards (src/inspect/inspect-shards.ts). */
import type { Argv } from 'yargs';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { inspectModel } from '../inspect/inspect-model.js';
import { inspectShards } from '../inspect/inspect-shards.js';
import { LineOutput } from '../io/line-output.js';
import type { CommandModule } from './command.js';

export const inspectCommand: CommandModule = {
  name: 'inspect <dir>',
  describe: 'show records, features and top weights of shards or a model',
  builder: (y: Argv) =>
    y
      .positional('dir', { type: 'string', describe: 'shard directory (made by sheaf prepare) or model directory (made by sheaf train)' })
      .option('jsonl', { type: 'boolean', default: false, description: 'one JSON line per sentence with absolute feature vectors' })
      .option('id', { type: 'string', description: 'only the sentence with this id' })
      .option('names', { type: 'boolean', default: false, description: 'add the kept key names of each bucket (needs names.json)' })
      .option('top', { type: 'number', default: 20, description: 'a model: how many highest and lowest weights to show' })
      .example('$0 inspect shards/ --jsonl', 'every sentence as JSON Lines')
      .example('$0 inspect shards/ --id 17 --names', 'one sentence, its candidates and their named features')
      .example('$0 inspect model/ --top 30', 'the 30 highest and lowest weighted features of a model'),
  handler: async (args) => {
    const out = new LineOutput();
    if (existsSync(join(args.dir as string, 'model.json'))) {
      const st = await inspectModel({ dir: args.dir as string, top: args.top as number, jsonl: args.jsonl as boolean }, (l) => out.line(l));
      await out.flush();
      return st;
    }
    const status = await inspectShards({ dir: args.dir as string, jsonl: args.jsonl as boolean, id: args.id as string | undefined, names: args.names as boolean }, (l) => out.line(l), () => out.closed);
    await out.flush();
    return status;
  },
};
