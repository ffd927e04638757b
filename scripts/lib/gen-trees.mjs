// Seeded generator of random parse trees of about `words` words, and of
// n-best inputs made from them, for benchmarks (not for tests: tests check
// against outside references).
import { createWriteStream, statSync } from 'node:fs';
import { join } from 'node:path';
import { seededRandom } from '../../dist/core/random.js';

/** A seeded generator of numbers in [0, 1) (mulberry32, sheaf's own). */
export const rng = seededRandom;

const PHRASES = ['NP', 'VP', 'PP', 'S', 'SBAR', 'ADJP', 'ADVP', 'NP', 'NP', 'VP', 'PP'];
const TAGS = ['DT', 'NN', 'NNS', 'VBD', 'IN', 'JJ', 'RB', 'CC', 'CD', 'PRP', 'TO', 'VB', 'NNP', 'MD'];
const WORDS = ['warden', 'porter', 'stove', 'rope', 'crate', 'ledger', 'hut', 'lamp', 'kettle', 'ridge', 'sack', 'oil',
  'carried', 'mended', 'logged', 'counted', 'the', 'a', 'two', 'and', 'of', 'to', 'up', 'flour', 'salt', 'tarp', 'pass'];

/** One tree over exactly `words` words (a random binary-ish bracketing). */
export function randomTree(rand, words) {
  const pick = (xs) => xs[Math.floor(rand() * xs.length)];
  const build = (n, label) => {
    if (n === 1) return `(${label} (${pick(TAGS)} ${pick(WORDS)}))`;
    // Cut n words into 2..4 parts, each strictly smaller than n.
    const k = Math.min(n, 2 + Math.floor(rand() * 3));
    const cuts = new Set();
    while (cuts.size < k - 1) cuts.add(1 + Math.floor(rand() * (n - 1)));
    const bounds = [0, ...[...cuts].sort((a, b) => a - b), n];
    const parts = [];
    for (let j = 0; j + 1 < bounds.length; j++) {
      const take = bounds[j + 1] - bounds[j];
      parts.push(take === 1 && rand() < 0.7 ? `(${pick(TAGS)} ${pick(WORDS)})` : build(take, pick(PHRASES)));
    }
    return `(${label} ${parts.join(' ')})`;
  };
  return build(words, 'S');
}

/** A variant of `tree` with the same words: some brackets relabelled. */
export function perturb(rand, tree, rate = 0.08) {
  return tree.replace(/\((NP|VP|PP|SBAR|ADJP|ADVP) /g, (m, l) => (rand() < rate ? `(${PHRASES[Math.floor(rand() * PHRASES.length)]} ` : m));
}

/**
 * Writes `sentences` random 20–30-word gold trees to DIR/NAME.trees and, for
 * each, a `k`-best list of copies with 15 % of their phrase labels changed
 * (the gold itself at rank 3) to DIR/NAME.jsonl: lists that share little,
 * the hard case for difference vectors.
 */
export async function writeGeneratedLists(dir, name, sentences, k, seed) {
  const rand = rng(seed);
  const gold = join(dir, `${name}.trees`);
  const dump = join(dir, `${name}.jsonl`);
  const g = createWriteStream(gold);
  const d = createWriteStream(dump);
  for (let s = 0; s < sentences; s++) {
    const tree = randomTree(rand, 20 + Math.floor(rand() * 11));
    g.write(tree + '\n');
    const cands = [];
    for (let c = 0; c < k; c++) cands.push({ tree: c === 3 ? tree : perturb(rand, tree, 0.15), score: Math.round((-40 - c * 0.4 - rand()) * 1000) / 1000 });
    if (!d.write(JSON.stringify({ id: String(s + 1), fold: null, source: { parser: 'bench', fingerprint: 'none' }, candidates: cands }) + '\n')) await new Promise((r) => d.once('drain', r));
  }
  await Promise.all([new Promise((r) => g.end(r)), new Promise((r) => d.end(r))]);
  return { gold, dump, bytes: statSync(dump).size, sentences };
}
