/**
 * Paired bootstrap resampling for the difference in corpus F1 between two
 * systems on the same sentences (Koehn 2004, "Statistical significance tests
 * for machine translation evaluation"; the p-value as Berg-Kirkpatrick,
 * Burkett & Klein 2012, "An empirical investigation of statistical
 * significance in NLP", §2.3: resample the test set B times with
 * replacement; p = the share of samples where the difference exceeds twice
 * the observed one, i.e. the chance of the observed gain under a null centred
 * by the samples' own shift). When the observed difference is not positive,
 * there is no gain to test and p = 1. Pure; randomness only from the seed.
 */
import { seededRandom } from '../core/random.js';

/** Per sentence, the bracket counts of the two systems (a = the candidate system, b = the baseline). */
export interface PairedCounts {
  gold: Float64Array;
  matchedA: Float64Array;
  testA: Float64Array;
  matchedB: Float64Array;
  testB: Float64Array;
}

function f1(matched: number, gold: number, test: number): number {
  return gold + test === 0 ? 100 : (200 * matched) / (gold + test);
}

export interface BootstrapResult {
  p: number;
  samples: number;
  seed: number;
  /** The observed difference in corpus F1 (a − b). */
  delta: number;
}

export function pairedBootstrap(c: PairedCounts, samples: number, seed: number): BootstrapResult {
  const n = c.gold.length;
  const sum = (a: Float64Array) => a.reduce((x, y) => x + y, 0);
  const delta = f1(sum(c.matchedA), sum(c.gold), sum(c.testA)) - f1(sum(c.matchedB), sum(c.gold), sum(c.testB));
  if (!(delta > 0) || n === 0) return { p: 1, samples, seed, delta };
  const rand = seededRandom(seed);
  let exceed = 0;
  for (let s = 0; s < samples; s++) {
    let g = 0, ma = 0, ta = 0, mb = 0, tb = 0;
    for (let k = 0; k < n; k++) {
      const i = Math.floor(rand() * n);
      g += c.gold[i];
      ma += c.matchedA[i];
      ta += c.testA[i];
      mb += c.matchedB[i];
      tb += c.testB[i];
    }
    if (f1(ma, g, ta) - f1(mb, g, tb) > 2 * delta) exceed++;
  }
  return { p: exceed / samples, samples, seed, delta };
}
