/**
 * Pre-encoded key pieces shared by templates: buckets, directions, markers,
 * and the bytes of labels and words of a candidate.
 */
import { piece } from '../core/feature-sink.js';
import type { CandidateView } from './template.js';

function bucketTable(edges: number[], top: string): { names: Uint8Array[]; of: (x: number) => Uint8Array } {
  // edges: lower bounds of each bucket, ascending, starting at 0.
  const names = edges.map((lo, k) => {
    const hi = k + 1 < edges.length ? edges[k + 1] - 1 : null;
    return piece(hi === null ? `${lo}${top}` : hi === lo ? String(lo) : `${lo}-${hi}`);
  });
  return {
    names,
    of(x: number): Uint8Array {
      let k = edges.length - 1;
      while (k > 0 && x < edges[k]) k--;
      return names[k];
    },
  };
}

/** Span lengths in words: 1 2 3 4 5-6 7-9 10-14 15-19 20-29 30+. */
export const lengthBucket = bucketTable([0, 1, 2, 3, 4, 5, 7, 10, 15, 20, 30], '+').of;
/** Base ranks (0-based): 0 1 2 3-4 5-9 10-19 20-49 50+. */
export const rankBucket = bucketTable([0, 1, 2, 3, 5, 10, 20, 50], '+').of;
/** Differences: 0 1 2 3-4 5-8 9+. */
export const diffBucket = bucketTable([0, 1, 2, 3, 5, 9], '+').of;

export const LEFT = piece('L');
export const RIGHT = piece('R');
export const HEAD = piece('H');
export const HEAD_MARK = piece('*');
export const SAME = piece('same');
export const DIFF = piece('diff');
export const BOS = piece('<s>');
export const EOS = piece('</s>');

/** Label bytes of constituent i. */
export function labelBytes(v: CandidateView, i: number): Uint8Array {
  return v.tree.vocab.labels.bytes(v.tree.sym[i]);
}

/** Word bytes of word node w. */
export function wordBytes(v: CandidateView, w: number): Uint8Array {
  return v.tree.vocab.words.bytes(v.tree.sym[w]);
}

/** POS tag bytes of word node w (its parent's label). */
export function tagBytes(v: CandidateView, w: number): Uint8Array {
  return v.tree.vocab.labels.bytes(v.tree.sym[v.tree.parent[w]]);
}

/** Bytes of a child as it appears in a rule: its label, or the word itself. */
export function symbolBytes(v: CandidateView, c: number): Uint8Array {
  return v.tree.isWord[c] ? wordBytes(v, c) : labelBytes(v, c);
}
