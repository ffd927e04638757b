// Seeded generator of random parse trees of about `words` words, for
// benchmarks (not for tests: tests check against outside references).
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
