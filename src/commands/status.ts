/** `sheaf status`: argv → runStatus (src/cluster/run-status.ts). */
import type { Argv } from 'yargs';
import { formatStatus, runStatus } from '../cluster/run-status.js';
import type { CommandModule } from './command.js';

export const statusCommand: CommandModule = {
  name: 'status <dir>',
  describe: 'state of the cluster tasks submitted for an output folder (--engine slurm), and their outputs',
  builder: (y: Argv) =>
    y
      .positional('dir', { type: 'string', description: 'the output folder given to jackknife or prepare with --engine slurm' })
      .option('json', { type: 'boolean', default: false, description: 'print the report as one JSON object' })
      .example('$0 status shards/', 'which parts ran, which wait, whether the merge is done'),
  handler: async (args) => {
    const report = await runStatus(args.dir as string);
    if (args.json) console.log(JSON.stringify(report));
    else for (const l of formatStatus(report)) console.log(l);
    return 0;
  },
};
