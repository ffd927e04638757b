/**
 * The command line: argv in, exit status out. Commands live in
 * src/commands/*, each exporting a `run` over validated options; this file
 * only parses, prints and maps errors to exit codes:
 * 0 ok, 1 bad input or usage, 2 internal error.
 */
import yargs, { type Argv } from 'yargs';
import { DataError, UsageError } from './core/errors.js';
import { environmentError } from './io/fs-faults.js';
import { demoCommand } from './commands/demo.js';
import { evalCommand } from './commands/eval.js';
import { exportCommand } from './commands/export.js';
import { inspectCommand } from './commands/inspect.js';
import { jackknifeCommand } from './commands/jackknife.js';
import { rerankCommand } from './commands/rerank.js';
import { splitCommand } from './commands/split.js';
import { trainCommand } from './commands/train.js';
import { prepareCommand } from './commands/prepare.js';
import type { CommandModule } from './commands/command.js';

/** Commands of the design that later work will build; they refuse to run. */
const PLANNED: [string, string][] = [
  ['merge', 'merge shard directories made as parts (--part I/N) into one'],
  ['report', 'one self-contained HTML page with charts of shards and a model'],
  ['status', 'state of cluster tasks submitted for an output folder'],
];

const BUILT: CommandModule[] = [splitCommand, jackknifeCommand, prepareCommand, trainCommand, evalCommand, rerankCommand, inspectCommand, exportCommand, demoCommand];

/**
 * yargs takes a lone `-` as the end of an option's values; DESIGN.md wants
 * `-` to mean stdin/stdout wherever a path goes. So `-` is swapped for a
 * marker before parsing and back after.
 */
const DASH = '\u2063-';
function restoreDash(value: unknown): unknown {
  if (value === DASH) return '-';
  if (Array.isArray(value)) return value.map(restoreDash);
  return value;
}

export async function main(rawArgv: string[]): Promise<number> {
  const argv = rawArgv.map((a) => (a === '-' ? DASH : a));
  let exitCode = 0;
  const debug = argv.includes('--debug');
  const report = (raw: unknown): number => {
    // A fault of the environment (permissions, a full disk, a read-only file system) is no bug of ours: status 1.
    const error = environmentError(raw, 'the output', 'write');
    if (error instanceof UsageError || error instanceof DataError) {
      console.error(`sheaf: ${error.message}`);
      if (debug && error.stack) console.error(error.stack);
      return 1;
    }
    console.error(`sheaf: internal error: ${error instanceof Error ? (debug ? error.stack : error.message) : String(error)}`);
    if (!debug) console.error('(run again with --debug for the stack)');
    return 2;
  };

  let cli: Argv = yargs(argv)
    .scriptName('sheaf')
    .usage('$0 <command> [options]\n\nPrepare, train and evaluate discriminative re-rankers over n-best parses.')
    .option('debug', { type: 'boolean', description: 'show stack traces of errors', global: true })
    .strict()
    .demandCommand(1, 'expected a command; see the list above')
    .recommendCommands()
    .help()
    .version()
    .wrap(Math.min(100, process.stdout.columns || 100))
    .exitProcess(false)
    .fail((message, error) => {
      if (error) throw error;
      throw new UsageError(`${message}\n(see \`sheaf --help\`)`);
    });

  for (const cmd of BUILT) {
    cli = cli.command(cmd.name, cmd.describe, cmd.builder, async (args) => {
      const restored = Object.fromEntries(Object.entries(args).map(([k, v]) => [k, restoreDash(v)]));
      exitCode = await cmd.handler(restored);
    });
  }
  for (const [name, describe] of PLANNED) {
    cli = cli.command(`${name}`, `${describe} (not available yet)`, (y) => y.strict(false), () => {
      throw new UsageError(`\`sheaf ${name}\` is not available yet in this version; see the README for what is built`);
    });
  }
  try {
    await cli.parseAsync();
  } catch (error) {
    return report(error);
  }
  return exitCode;
}
