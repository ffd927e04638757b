/**
 * names.json of merged parts: the parts' key lists (each sorted in code-unit
 * order) merged k ways into one ascending stream of distinct keys, so each
 * bucket keeps its smallest `perBucket` keys — what one machine's name book
 * keeps — without holding every key: only the kept names per bucket.
 */
import { bucketOf, murmur3String } from '../core/murmur3.js';
import { UsageError } from '../core/errors.js';
import type { NamesFile } from '../formats/names-file.js';
import { ChunkedFile } from '../io/chunked-file.js';

export interface MergedNames {
  file: NamesFile;
  keys: number;
  buckets: number;
}

/** A min-heap of the parts' current keys (ties: the lower part first). */
class KeyHeap {
  private readonly items: { key: string; from: number }[] = [];
  get size(): number {
    return this.items.length;
  }
  private less(a: { key: string; from: number }, b: { key: string; from: number }): boolean {
    return a.key < b.key || (a.key === b.key && a.from < b.from);
  }
  push(x: { key: string; from: number }): void {
    const h = this.items;
    h.push(x);
    for (let i = h.length - 1; i > 0; ) {
      const p = (i - 1) >> 1;
      if (!this.less(h[i], h[p])) break;
      [h[i], h[p]] = [h[p], h[i]];
      i = p;
    }
  }
  pop(): { key: string; from: number } {
    const h = this.items;
    const top = h[0];
    const last = h.pop()!;
    if (h.length > 0) {
      h[0] = last;
      for (let i = 0; ; ) {
        const l = 2 * i + 1;
        const r = l + 1;
        let m = i;
        if (l < h.length && this.less(h[l], h[m])) m = l;
        if (r < h.length && this.less(h[r], h[m])) m = r;
        if (m === i) break;
        [h[i], h[m]] = [h[m], h[i]];
        i = m;
      }
    }
    return top;
  }
}

/** Merges the key lists `files` (with the sha256 and count each part recorded) into names. */
export function mergeNames(files: { path: string; sha256: string; count: number }[], hashing: { bits: number; seed: number; perBucket: number }): MergedNames {
  const readers = files.map((f) => new ChunkedFile(f.path));
  const last: (string | null)[] = files.map(() => null);
  const heap = new KeyHeap();
  const bad = (k: number, why: string): never => {
    throw new UsageError(`\`${files[k].path}\` is not a usable key list: ${why}; make its part again`);
  };
  const advance = (k: number) => {
    const line = readers[k].line();
    if (line === null) return;
    let key: unknown;
    try {
      key = JSON.parse(line);
    } catch {
      bad(k, `line ${readers[k].lines} is not a JSON string`);
    }
    if (typeof key !== 'string') return bad(k, `line ${readers[k].lines} is not a JSON string`);
    if (last[k] !== null && !(last[k]! < key)) bad(k, `line ${readers[k].lines} is not after the line before it in code-unit order`);
    last[k] = key;
    heap.push({ key, from: k });
  };
  files.forEach((_, k) => advance(k));
  const byBucket = new Map<number, string[]>();
  let keys = 0;
  let previous: string | null = null;
  while (heap.size > 0) {
    const { key, from } = heap.pop();
    advance(from);
    if (key === previous) continue;
    previous = key;
    keys++;
    const b = bucketOf(murmur3String(key, hashing.seed), hashing.bits);
    const list = byBucket.get(b);
    if (!list) byBucket.set(b, [key]);
    else if (list.length < hashing.perBucket) list.push(key);
  }
  readers.forEach((r, k) => {
    if (r.lines !== files[k].count) bad(k, `it holds ${r.lines} keys, its part says ${files[k].count}`);
    if (r.close() !== files[k].sha256) bad(k, 'it does not match the sha256 its part recorded');
  });
  const names = [...byBucket].sort((a, b) => a[0] - b[0]);
  return { file: { bits: hashing.bits, seed: hashing.seed, perBucket: hashing.perBucket, names }, keys, buckets: byBucket.size };
}
