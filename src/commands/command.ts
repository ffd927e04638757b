/** The shape every command module exports (see src/cli.ts). */
import type { Argv } from 'yargs';

export interface CommandModule {
  name: string;
  /** false hides the command from --help (internal commands). */
  describe: string | false;
  builder: (y: Argv) => Argv;
  /** Returns the exit status. Throws UsageError / DataError for status 1. */
  handler: (args: Record<string, unknown>) => Promise<number>;
}
