/**
 * Keeps, per bucket, a few canonical keys (the `perBucket` smallest in code
 * unit order: unlike "the first seen", that does not depend on which worker
 * saw what, so merged books are deterministic), and counts distinct keys.
 * Holds every distinct key: meant for inspection runs and samples.
 */
export class NameBook {
  readonly byBucket = new Map<number, string[]>();
  private readonly seen = new Set<string>();

  constructor(readonly perBucket: number) {}

  add(bucket: number, key: string): void {
    if (this.seen.has(key)) return;
    this.seen.add(key);
    const list = this.byBucket.get(bucket);
    if (!list) {
      this.byBucket.set(bucket, [key]);
      return;
    }
    if (list.length === this.perBucket && key >= list[list.length - 1]) return;
    let k = list.length;
    while (k > 0 && list[k - 1] > key) k--;
    list.splice(k, 0, key);
    if (list.length > this.perBucket) list.pop();
  }

  /** Every distinct key seen (to merge books from several workers). */
  get keys(): ReadonlySet<string> {
    return this.seen;
  }

  /** Adds another book's keys (bucket of each given by `bucketOfKey`). */
  merge(keys: Iterable<string>, bucketOfKey: (key: string) => number): void {
    for (const k of keys) this.add(bucketOfKey(k), k);
  }

  /** Buckets with their kept keys, ascending by bucket. */
  entries(): [number, string[]][] {
    return [...this.byBucket].sort((a, b) => a[0] - b[0]);
  }

  /** Distinct keys seen, buckets they occupy, and the collision rate 1 − buckets/keys. */
  collisions(): { keys: number; buckets: number; rate: number } {
    const keys = this.seen.size;
    const buckets = this.byBucket.size;
    return { keys, buckets, rate: keys === 0 ? 0 : 1 - buckets / keys };
  }
}
