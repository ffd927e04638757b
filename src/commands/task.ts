/** `sheaf task`: what sheaf's batch scripts run on a cluster node (not for people; hidden from --help). */
import type { Argv } from 'yargs';
import { runTask } from '../cluster/run-task.js';
import type { CommandModule } from './command.js';

export const taskCommand: CommandModule = {
  name: 'task <file>',
  describe: false,
  builder: (y: Argv) =>
    y
      .positional('file', { type: 'string', description: 'task file written by `--engine slurm`' })
      .option('index', { type: 'number', description: 'the array task to run' })
      .option('merge', { type: 'boolean', default: false, description: 'run the merge task' }),
  handler: async (args) => {
    await runTask({ file: args.file as string, index: args.index as number | undefined, merge: args.merge as boolean }, (l) => console.error(l));
    return 0;
  },
};
