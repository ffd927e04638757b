/** `sheaf report`: argv → runReport (src/report/run-report.ts). */
import type { Argv } from 'yargs';
import { UsageError } from '../core/errors.js';
import { LineOutput } from '../io/line-output.js';
import type { CommandModule } from './command.js';

export const reportCommand: CommandModule = {
  name: 'report <shards..>',
  describe: 'one self-contained HTML page with charts of shards and a model',
  builder: (y: Argv) =>
    y
      .positional('shards', { type: 'string', array: true, describe: 'shard directories (made by sheaf prepare); one series per directory' })
      .option('out', { alias: 'o', type: 'string', demandOption: true, description: 'the HTML file to write (- for stdout)' })
      .option('model', { type: 'string', description: 'model directory (made by sheaf train): adds re-ranked F1, the learning curve and the top weights' })
      .option('top', { type: 'number', default: 15, description: 'how many highest and how many lowest weights to show' })
      .option('samples', { type: 'number', default: 10000, description: 'bootstrap resamples (as sheaf eval)' })
      .option('seed', { type: 'number', default: 0, description: 'bootstrap seed (as sheaf eval)' })
      .option('quiet', { type: 'boolean', default: false, description: 'no progress output' })
      .option('json', { type: 'boolean', default: false, description: 'print a JSON summary on stdout (the charts drawn and their marks)' })
      .example('$0 report work/test-shards --model work/model -o report.html', 'the test split with the model\'s choices')
      .example('$0 report work/train-shards work/dev-shards -o lists.html', 'two shard directories side by side, no model'),
  handler: async (args) => {
    const out = args.out as string;
    if (out === '-' && args.json) throw new UsageError('`--json` and `-o -` both write to stdout; pick one');
    // Loaded here, not at the top: vega and vega-lite take ~0.3 s to import, which no other command should pay.
    const { runReport } = await import('../report/run-report.js');
    const summary = await runReport({
      shards: args.shards as string[],
      model: args.model as string | undefined,
      out,
      top: args.top as number,
      samples: args.samples as number,
      seed: args.seed as number,
      quiet: args.quiet as boolean,
    }, (l) => console.error(l));
    if (out === '-') {
      // Through LineOutput: a reader that stops early (`| head`) ends the output quietly.
      const lines = new LineOutput();
      await lines.line(summary.html!.replace(/\n$/, ''));
      await lines.flush();
    } else if (args.json) console.log(JSON.stringify({ out: summary.out, bytes: summary.bytes, charts: summary.charts, seconds: summary.seconds }));
    return 0;
  },
};
