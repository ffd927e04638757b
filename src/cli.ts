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
import { mergeCommand } from './commands/merge.js';
import { rerankCommand } from './commands/rerank.js';
import { splitCommand } from './commands/split.js';
import { statusCommand } from './commands/status.js';
import { taskCommand } from './commands/task.js';
import { trainCommand } from './commands/train.js';
import { prepareCommand } from './commands/prepare.js';
import { reportCommand } from './commands/report.js';
import type { CommandModule } from './commands/command.js';
import { TOOL_VERSION } from './version.js';

const BUILT: CommandModule[] = [splitCommand, jackknifeCommand, prepareCommand, mergeCommand, trainCommand, evalCommand, rerankCommand, inspectCommand, exportCommand, reportCommand, statusCommand, demoCommand, taskCommand];

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

/** Edit distance (Levenshtein), for "did you mean". */
function distance(a: string, b: string): number {
  let prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const cur = [i];
    for (let j = 1; j <= b.length; j++) cur[j] = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + (a[i - 1] === b[j - 1] ? 0 : 1));
    prev = cur;
  }
  return prev[b.length];
}

/** The closest of `names` to `word`, if close enough to be a slip. */
export function closest(word: string, names: readonly string[]): string | null {
  let best: string | null = null;
  let bestD = Infinity;
  for (const n of names) {
    const d = n.startsWith(word) && word.length >= 2 ? 1 : distance(word, n);
    if (d < bestD) {
      best = n;
      bestD = d;
    }
  }
  return best !== null && bestD <= Math.max(1, Math.floor(word.length / 3)) ? best : null;
}

const commandWord = (name: string) => name.split(' ')[0];
const kebab = (s: string) => s.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`);

function commandList(): string {
  // Hidden commands (describe false: what cluster tasks run) are not listed.
  const rows = BUILT.filter((c) => typeof c.describe === 'string').map((c): [string, string] => [commandWord(c.name), c.describe as string]);
  const width = Math.max(...rows.map(([n]) => n.length));
  return rows.map(([n, d]) => `  ${n.padEnd(width)}  ${d}`).join('\n');
}

/** The long option names a command takes (for "did you mean"). */
function optionNames(cmd: CommandModule): string[] {
  // getOptions() is public in yargs but missing from its type declarations.
  const o = (cmd.builder(yargs([])) as unknown as { getOptions(): { key: Record<string, boolean> } }).getOptions();
  return [...Object.keys(o.key).filter((k) => k.length > 1 && k !== 'version'), 'help', 'debug'];
}

/** The one-letter aliases a command takes. */
function shortNames(cmd: CommandModule): string[] {
  const o = (cmd.builder(yargs([])) as unknown as { getOptions(): { key: Record<string, boolean> } }).getOptions();
  return [...Object.keys(o.key).filter((k) => k.length === 1), 'h'];
}

/** A yargs validation message in sheaf's words, pointing at the command's own help. */
function usageMessage(message: string, cmd: CommandModule | null): string {
  const help = cmd ? `sheaf ${commandWord(cmd.name)} --help` : 'sheaf --help';
  const unknown = /^Unknown arguments?: (.*)$/.exec(message);
  if (unknown && cmd) {
    const names = optionNames(cmd);
    // yargs lists a dashed option twice (as given and camel-cased): keep each once.
    const given = [...new Set(unknown[1].split(', ').map((a) => kebab(a.trim())))];
    const typed = new Set(rawArgvOf.current.filter((a) => a.startsWith('-')).map((a) => a.replace(/^-+/, '').split('=')[0]));
    return given.map((a) => {
      if (!typed.has(a)) return `unexpected argument \`${a}\` (\`sheaf ${cmd.name}\` takes no more)`;
      const guess = closest(a, names);
      return `unknown option \`${a.length === 1 ? '-' : '--'}${a}\` for \`sheaf ${commandWord(cmd.name)}\`${guess ? `; did you mean \`--${guess}\`?` : ''}`;
    }).join('\n') + `\n(see \`${help}\`)`;
  }
  const missing = /^Missing required arguments?: (.*)$/.exec(message);
  if (missing) return `expected ${missing[1].split(', ').map((a) => `\`--${a}\``).join(', ')}\n(see \`${help}\`)`;
  const positional = /^Not enough non-option arguments/.exec(message);
  if (positional && cmd) {
    const names = cmd.name.split(' ').slice(1).join(' ');
    return `expected ${names} after \`sheaf ${commandWord(cmd.name)}\`\n(see \`${help}\`)`;
  }
  return `${message}\n(see \`${help}\`)`;
}

const rawArgvOf: { current: string[] } = { current: [] };

export async function main(rawArgv: string[]): Promise<number> {
  rawArgvOf.current = rawArgv;
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

  const first = rawArgv.find((a) => !a.startsWith('-'));
  const words = BUILT.map((c) => commandWord(c.name));
  const wantsMeta = rawArgv.some((a) => a === '--help' || a === '-h' || a === '--version');
  if (first === undefined && !wantsMeta) {
    console.error(`sheaf: expected a command. The commands:\n${commandList()}\nRun \`sheaf <command> --help\` for a command's options; \`sheaf demo\` runs the whole job on a small invented corpus.`);
    return 1;
  }
  if (first !== undefined && rawArgv.indexOf(first) === 0 && !words.includes(first)) {
    const guess = closest(first, words);
    console.error(`sheaf: unknown command \`${first}\`${guess ? `; did you mean \`sheaf ${guess}\`?` : ''}\n(see \`sheaf --help\` for the list)`);
    return 1;
  }
  const current = BUILT.find((c) => commandWord(c.name) === first) ?? null;
  if (current) {
    // Unknown options first: a misspelt option otherwise shows up as the required one it was meant to be.
    const known = new Set([...optionNames(current), ...shortNames(current)]);
    for (const a of rawArgv.slice(0, rawArgv.includes('--') ? rawArgv.indexOf('--') : undefined)) {
      if (!a.startsWith('-') || a === '-' || /^-\d/.test(a)) continue;
      const name = a.replace(/^--?/, '').split('=')[0];
      const camel = name.replace(/-([a-z])/g, (_, c: string) => c.toUpperCase());
      if (known.has(name) || known.has(kebab(camel)) || (name.startsWith('no-') && known.has(name.slice(3)))) continue;
      const guess = closest(name, optionNames(current));
      console.error(`sheaf: unknown option \`${a.split('=')[0]}\` for \`sheaf ${commandWord(current.name)}\`${guess ? `; did you mean \`--${guess}\`?` : ''}\n(see \`sheaf ${commandWord(current.name)} --help\`)`);
      return 1;
    }
  }

  let cli: Argv = yargs(argv)
    .scriptName('sheaf')
    .usage('$0 <command> [options]\n\nPrepare, train and evaluate discriminative re-rankers over n-best parses.')
    .option('debug', { type: 'boolean', description: 'show stack traces of errors', global: true })
    .strict()
    .demandCommand(1, 'expected a command')
    .help()
    // From sheaf's own package, whatever folder it runs in.
    .version(TOOL_VERSION)
    // Help is not wrapped: examples stay on one line, to copy and paste.
    .wrap(null)
    .exitProcess(false)
    .fail((message, error) => {
      if (error) throw error;
      throw new UsageError(usageMessage(message, current));
    });

  for (const cmd of BUILT) {
    // --version belongs to sheaf itself, not to each command. A describe of false hides the
    // command from --help (yargs takes it; its types only say string).
    cli = cli.command(cmd.name, cmd.describe as string, (y) => cmd.builder(y).version(false), async (args) => {
      const restored = Object.fromEntries(Object.entries(args).map(([k, v]) => [k, restoreDash(v)]));
      exitCode = await cmd.handler(restored);
    });
  }
  try {
    await cli.parseAsync();
  } catch (error) {
    return report(error);
  }
  return exitCode;
}
