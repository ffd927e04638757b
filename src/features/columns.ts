/**
 * The buckets one list touches, numbered in ascending bucket order
 * ("columns"). A list touches a few hundred to a few thousand of the 2^bits
 * buckets; once they are numbered, the per-candidate work (sums,
 * differences, counts) runs over small dense arrays indexed by column, and a
 * column order is a bucket order, so sparse vectors come out sorted without
 * any merge or sort.
 *
 * Hot path: an open-addressing table of typed arrays whose slots are marked
 * with a generation number, so starting a new list clears nothing.
 */
export class ColumnIndex {
  private keys = new Int32Array(4096);
  private prov = new Int32Array(4096);
  private gen = new Int32Array(4096);
  private generation = 0;
  private shift = 20;
  /** Buckets in the order first added. */
  private added = new Uint32Array(1024);
  private n = 0;
  /** Provisional number (order first added) → column. */
  rank = new Int32Array(1024);
  /** Column → bucket, ascending (valid up to `size` after finish()). */
  buckets = new Uint32Array(1024);

  /** Starts a list that will add at most `entries` buckets (with repeats). */
  reset(entries: number): void {
    let size = this.keys.length;
    while (size < 2 * entries) size *= 2;
    if (size !== this.keys.length) {
      this.keys = new Int32Array(size);
      this.prov = new Int32Array(size);
      this.gen = new Int32Array(size);
      this.generation = 0;
    }
    this.shift = 32 - Math.log2(size);
    if (++this.generation === 0x7fffffff) {
      this.gen.fill(0);
      this.generation = 1;
    }
    if (this.added.length < entries) this.added = new Uint32Array(entries);
    this.n = 0;
  }

  /** The provisional number of bucket b (the order it was first added in). */
  add(b: number): number {
    const keys = this.keys;
    const gen = this.gen;
    const g = this.generation;
    const mask = keys.length - 1;
    let s = Math.imul(b, 0x9e3779b1) >>> this.shift;
    for (;;) {
      if (gen[s] !== g) {
        gen[s] = g;
        keys[s] = b;
        this.added[this.n] = b;
        return (this.prov[s] = this.n++);
      }
      if (keys[s] === b) return this.prov[s];
      s = (s + 1) & mask;
    }
  }

  /** Numbers the buckets added since reset() in ascending order (fills `rank` and `buckets`); returns how many. */
  finish(): number {
    const n = this.n;
    if (this.buckets.length < n) {
      this.buckets = new Uint32Array(n * 2);
      this.rank = new Int32Array(n * 2);
    }
    const sorted = this.buckets.subarray(0, n);
    sorted.set(this.added.subarray(0, n));
    sorted.sort();
    const keys = this.keys;
    const gen = this.gen;
    const g = this.generation;
    const mask = keys.length - 1;
    for (let col = 0; col < n; col++) {
      const b = sorted[col];
      let s = Math.imul(b, 0x9e3779b1) >>> this.shift;
      while (gen[s] !== g || keys[s] !== b) s = (s + 1) & mask;
      this.rank[this.prov[s]] = col;
    }
    return n;
  }
}
