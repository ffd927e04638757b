/** `sheaf demo`: argv → runDemo (src/demo/run-demo.ts). */
import type { Argv } from 'yargs';
import { runDemo } from '../demo/run-demo.js';
import type { CommandModule } from './command.js';

export const demoCommand: CommandModule = {
  name: 'demo',
  describe: 'run the job end to end on the shipped demo corpus (as far as it is built)',
  builder: (y: Argv) =>
    y
      .option('out', { alias: 'o', type: 'string', description: 'keep everything in this folder (default: a temporary folder)' })
      .option('json', { type: 'boolean', default: false, description: 'print one JSON summary on stdout instead of the table' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('force', { type: 'boolean', default: false, description: 'with -o: write into a folder holding other files' })
      .option('workers', { type: 'number', description: 'worker threads (default: all cores)' })
      .example('$0 demo', 'prepare the demo corpus and print base and oracle F1')
      .example('$0 demo -o demo-run --json', 'keep the outputs and print a JSON summary'),
  handler: async (args) => {
    const json = args.json as boolean;
    const summary = await runDemo(
      { out: args.out as string | undefined, quiet: args.quiet as boolean, workers: args.workers as number | undefined, force: args.force as boolean },
      json ? () => {} : (l) => console.log(l),
      (l) => console.error(l),
    );
    if (json) console.log(JSON.stringify(summary));
    return 0;
  },
};
