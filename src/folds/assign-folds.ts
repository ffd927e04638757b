/**
 * Which fold holds each sentence out (pure).
 * - `hash`: fold = MurmurHash3 x86_32 of the id's UTF-8 bytes (seeded),
 *   unsigned, mod k. A sentence's fold depends on its id alone, so adding
 *   sentences never moves old ones.
 * - `blocks`: contiguous blocks in treebank order, sizes within one of each
 *   other: sentence i of n goes to fold ⌊i·k / n⌋.
 */
import { murmur3String } from '../core/murmur3.js';

export type FoldMethod = 'hash' | 'blocks';

export function hashFold(id: string, k: number, seed: number): number {
  return (murmur3String(id, seed) >>> 0) % k;
}

export function blockFold(i: number, n: number, k: number): number {
  return Math.floor((i * k) / n);
}
