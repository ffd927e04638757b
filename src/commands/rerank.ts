/** `sheaf rerank`: argv → runRerank (src/rerank/run-rerank.ts). */
import { availableParallelism } from 'node:os';
import type { Argv } from 'yargs';
import { LineOutput } from '../io/line-output.js';
import { runRerank } from '../rerank/run-rerank.js';
import type { CommandModule } from './command.js';

export const rerankCommand: CommandModule = {
  name: 'rerank <dump>',
  describe: 'pick the best tree of each n-best list with a model',
  builder: (y: Argv) =>
    y
      .positional('dump', { type: 'string', describe: 'n-best dump (JSONL or a JSON array; .gz; - for stdin)' })
      .option('model', { type: 'string', demandOption: true, description: 'model directory (made by sheaf train)' })
      .option('jsonl', { type: 'boolean', default: false, description: 'one JSON line per list: id, chosen rank, model score, tree' })
      .option('workers', { type: 'number', default: availableParallelism(), description: 'worker threads (0: run in the main thread)' })
      .option('quiet', { type: 'boolean', default: false, description: 'no notes on stderr' })
      .example('$0 rerank new-lists.jsonl.gz --model model/ > best.trees', 'one tree per list, in input order'),
  handler: async (args) => {
    const out = new LineOutput();
    const quiet = args.quiet as boolean;
    const s = await runRerank({ dump: args.dump as string, model: args.model as string, jsonl: args.jsonl as boolean, workers: args.workers as number }, (l) => out.line(l), (l) => { if (!quiet) console.error(l); }, () => out.closed);
    await out.flush();
    if (!quiet) console.error(`sheaf rerank: ${s.read.toLocaleString('en-US')} lists: ${s.reranked.toLocaleString('en-US')} re-ranked, ${s.fellBack.toLocaleString('en-US')} given their base 1-best, ${s.empty.toLocaleString('en-US')} empty lines${s.candidatesSkipped ? `; ${s.candidatesSkipped.toLocaleString('en-US')} candidate(s) left out as their trees do not parse` : ''}`);
    return 0;
  },
};
