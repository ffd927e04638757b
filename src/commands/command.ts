/** The shape every command module exports (see src/cli.ts). */
import type { Argv } from 'yargs';

export interface CommandModule {
  name: string;
  describe: string;
  builder: (y: Argv) => Argv;
  /** Returns the exit status. Throws UsageError / DataError for status 1. */
  handler: (args: Record<string, unknown>) => Promise<number>;
}
