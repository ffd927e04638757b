/**
 * `sheaf demo`: runs what is built so far on the shipped demo corpus (invented
 * mountain-hut logs). Today that is the tree core: read, normalise, count,
 * and show one tree with its head words. It says what is not built yet.
 */
import { fileURLToPath } from 'node:url';
import type { Argv } from 'yargs';
import { createVocabulary } from '../core/interner.js';
import { headWords } from '../core/find-heads.js';
import { normaliseTree } from '../core/normalise.js';
import { productionsOf, formatProduction } from '../core/tree-views.js';
import { writeTree } from '../core/write-brackets.js';
import { isPreterminal } from '../core/tree.js';
import type { DataError } from '../core/errors.js';
import { readTreebank } from '../io/read-treebank.js';
import type { CommandModule } from './command.js';

export const DEMO_TREEBANK = fileURLToPath(new URL('../../demo-corpus/huts.mrg', import.meta.url));

export interface DemoSummary {
  treebank: string;
  trees: number;
  rejected: number;
  words: number;
  distinctRules: number;
  emptyElementsDropped: number;
}

export async function runDemo(print: (line: string) => void): Promise<DemoSummary> {
  const vocab = createVocabulary();
  const bad: DataError[] = [];
  const rules = new Set<string>();
  let trees = 0;
  let words = 0;
  let dropped = 0;
  let example: string | null = null;
  for await (const rec of readTreebank(DEMO_TREEBANK, { vocab, onBad: (e) => bad.push(e) })) {
    const tree = normaliseTree(rec.tree);
    if (!tree) continue;
    trees++;
    words += tree.wordNodes.length;
    dropped += rec.tree.wordNodes.length - tree.wordNodes.length;
    for (const p of productionsOf(tree)) if (typeof p.rhs[0] === 'string') rules.add(formatProduction(p));
    if (example === null && dropped > 0) {
      const heads = headWords(tree);
      const lines = [`  ${writeTree(rec.tree)}`, `  normalised: ${writeTree(tree)}`, '  head words:'];
      for (let i = 0; i < tree.size; i++) {
        if (tree.isWord[i] || isPreterminal(tree, i)) continue;
        lines.push(`    ${vocab.labels.name(tree.sym[i]).padEnd(6)} ${vocab.words.name(tree.sym[heads[i]])}`);
      }
      example = `tree ${rec.id} (${rec.file.split('/').pop()}:${rec.line}):\n${lines.join('\n')}`;
    }
  }
  print(`sheaf demo: the tree core on the shipped demo corpus`);
  print(`read ${trees} trees (${words} words), ${bad.length} rejected; ${dropped} empty elements dropped; ${rules.size} distinct phrasal rules`);
  if (example) print(example);
  print('not built yet: split, jackknife, prepare, train, eval, rerank, inspect, export (the demo grows as they land)');
  return { treebank: DEMO_TREEBANK, trees, rejected: bad.length, words, distinctRules: rules.size, emptyElementsDropped: dropped };
}

export const demoCommand: CommandModule = {
  name: 'demo',
  describe: 'run what is built so far on the shipped demo corpus',
  builder: (y: Argv) => y.example('$0 demo', 'read, normalise and head-annotate the demo treebank'),
  handler: async () => {
    await runDemo((line) => console.log(line));
    return 0;
  },
};
