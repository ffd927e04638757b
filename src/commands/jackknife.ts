/** `sheaf jackknife`: argv → runJackknife (src/jackknife/run-jackknife.ts). */
import { availableParallelism } from 'node:os';
import type { Argv } from 'yargs';
import { formatSubmission, submitJackknife } from '../cluster/submit.js';
import { UsageError } from '../core/errors.js';
import { runJackknife } from '../jackknife/run-jackknife.js';
import type { CommandModule } from './command.js';

export const jackknifeCommand: CommandModule = {
  name: 'jackknife',
  describe: 'parse every fold with a base model trained on the other folds',
  builder: (y: Argv) =>
    y
      .option('plan', { type: 'string', demandOption: true, description: 'plan folder made by sheaf split' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'n-best folder (fold-<k>.jsonl.gz, jackknife.json)' })
      .option('nbest', { type: 'number', default: 50, description: 'candidates per sentence' })
      .option('workers', { type: 'number', default: availableParallelism(), description: 'worker threads (embedded parser) or parallel commands (external)' })
      .option('parse', { type: 'string', array: true, description: 'also parse these treebanks with a model trained on all folds' })
      .option('pcfg', { type: 'string', array: true, description: 'embedded parser setting, NAME=VALUE (horizontal, vertical, unknownThreshold, lexicalSmoothing, maxUnaryChain, beam, derivationFactor)' })
      .option('train-cmd', { type: 'string', description: 'external parser: training command template with {train} {model}' })
      .option('parse-cmd', { type: 'string', description: 'external parser: parsing command template with {model} {input} {output}' })
      .option('force', { type: 'boolean', default: false, description: 'write into a folder holding other files' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout' })
      .option('engine', { choices: ['local', 'slurm'], default: 'local', description: 'run here, or as a Slurm array job (one task per stale fold, one for the --parse files)' })
      .option('slurm-opt', { type: 'string', array: true, description: 'with --engine slurm: an sbatch option, in long form (--slurm-opt=--partition=main --slurm-opt=--time=04:00:00)' })
      .example('$0 jackknife --plan plan/ --parse huts-dev.trees huts-test.trees -o nbest/', 'the embedded parser, 50-best')
      .example('$0 jackknife --plan plan/ -o nbest/ --engine slurm --slurm-opt=--cpus-per-task=4', 'each stale fold as a Slurm array task with 4 CPUs')
      .example('$0 jackknife --plan plan/ --train-cmd "myparser train {train} {model}" --parse-cmd "myparser parse {model} {input} {output}" -o nbest/', 'a parser of your own'),
  handler: async (args) => {
    const pcfg: Record<string, unknown> = {};
    for (const kv of (args.pcfg as string[] | undefined) ?? []) {
      const eq = kv.indexOf('=');
      if (eq <= 0) throw new UsageError(`expected \`--pcfg NAME=VALUE\`, got \`${kv}\``);
      pcfg[kv.slice(0, eq)] = kv.slice(eq + 1);
    }
    const slurmOpts = (args['slurm-opt'] as string[] | undefined) ?? [];
    if (args.engine !== 'slurm' && slurmOpts.length > 0) throw new UsageError('`--slurm-opt` goes with `--engine slurm`');
    const options = {
      plan: args.plan as string,
      out: args.out as string,
      nbest: args.nbest as number,
      workers: args.workers as number,
      parse: args.parse as string[] | undefined,
      trainCmd: args['train-cmd'] as string | undefined,
      parseCmd: args['parse-cmd'] as string | undefined,
      pcfg,
      quiet: args.quiet as boolean,
      force: args.force as boolean,
    };
    if (args.engine === 'slurm') {
      const submitted = await submitJackknife(options, slurmOpts, (l) => { if (!args.quiet) console.error(l); });
      if (args.json) console.log(JSON.stringify(submitted));
      else for (const l of formatSubmission(submitted, args.out as string)) console.log(l);
      return 0;
    }
    const summary = await runJackknife(options, (l) => console.error(l));
    if (args.json) console.log(JSON.stringify(summary));
    return 0;
  },
};
