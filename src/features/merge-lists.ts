/**
 * k-way merges of sparse lists sorted by bucket, done pairwise level by
 * level over typed arrays (no hashing, no sort: the output comes out in
 * order):
 * - ListMerger sums lists (each times a sign) into one: a candidate's
 *   difference from the feature lists of the nodes where it deviates;
 * - UnionCounter counts, per bucket, how many of many lists hold it: how a
 *   list's differences are counted per bucket.
 */
export class ListMerger {
  private from = new Int32Array(64);
  private to = new Int32Array(64);
  private sign = new Float64Array(64);
  private n = 0;
  private starts = new Int32Array(66);
  private next = new Int32Array(66);
  private b2 = new Uint32Array(1024);
  private v2 = new Float64Array(1024);
  outIdx = new Uint32Array(1024);
  outVal = new Float64Array(1024);

  reset(): void {
    this.n = 0;
  }

  /** Adds the list of entries [from, to) of the pools, times `sign`. */
  add(from: number, to: number, sign: number): void {
    if (from >= to) return;
    if (this.n === this.from.length) {
      const size = this.n * 2;
      const f = new Int32Array(size);
      f.set(this.from);
      this.from = f;
      const t = new Int32Array(size);
      t.set(this.to);
      this.to = t;
      const s = new Float64Array(size);
      s.set(this.sign);
      this.sign = s;
      this.starts = new Int32Array(size + 2);
      this.next = new Int32Array(size + 2);
    }
    this.from[this.n] = from;
    this.to[this.n] = to;
    this.sign[this.n++] = sign;
  }

  /**
   * Merges the lists added since reset(), pairwise level by level (plain
   * two-way merges: for many short lists cheaper than a heap); returns the
   * output length (in outIdx/outVal), entries that cancel dropped.
   */
  merge(buckets: Int32Array, values: Float64Array): number {
    const k = this.n;
    let total = 0;
    for (let j = 0; j < k; j++) total += this.to[j] - this.from[j];
    if (this.outIdx.length < total) {
      this.outIdx = new Uint32Array(total * 2);
      this.outVal = new Float64Array(total * 2);
      this.b2 = new Uint32Array(total * 2);
      this.v2 = new Float64Array(total * 2);
    }
    let b = this.outIdx;
    let v = this.outVal;
    let nb = this.b2;
    let nv = this.v2;
    let starts = this.starts;
    let next = this.next;
    let o = 0;
    for (let j = 0; j < k; j++) {
      starts[j] = o;
      const s = this.sign[j];
      for (let i = this.from[j]; i < this.to[j]; i++) {
        b[o] = buckets[i];
        v[o++] = s * values[i];
      }
    }
    starts[k] = o;
    let lists = k;
    while (lists > 1) {
      let out = 0;
      let nl = 0;
      for (let l = 0; l < lists; l += 2) {
        next[nl++] = out;
        let i = starts[l];
        const ie = starts[l + 1];
        if (l + 1 >= lists) {
          for (; i < ie; i++) {
            nb[out] = b[i];
            nv[out++] = v[i];
          }
          continue;
        }
        let j = ie;
        const je = starts[l + 2];
        while (i < ie && j < je) {
          const x = b[i];
          const y = b[j];
          if (x < y) {
            nb[out] = x;
            nv[out++] = v[i++];
          } else if (y < x) {
            nb[out] = y;
            nv[out++] = v[j++];
          } else {
            const sum = v[i++] + v[j++];
            if (sum !== 0) {
              nb[out] = x;
              nv[out++] = sum;
            }
          }
        }
        for (; i < ie; i++) {
          nb[out] = b[i];
          nv[out++] = v[i];
        }
        for (; j < je; j++) {
          nb[out] = b[j];
          nv[out++] = v[j];
        }
      }
      next[nl] = out;
      lists = nl;
      let t: any = b; b = nb; nb = t;
      t = v; v = nv; nv = t;
      t = starts; starts = next; next = t;
    }
    this.outIdx = b;
    this.outVal = v;
    this.b2 = nb;
    this.v2 = nv;
    this.starts = starts;
    this.next = next;
    this.n = 0;
    return k === 0 ? 0 : starts[1];
  }
}

/**
 * Sorts entries [from, to) of parallel arrays by bucket (insertion sort:
 * node feature lists are short) and sums equal buckets, dropping zeros;
 * returns the new end.
 */
export function sortAndSum(b: Int32Array, v: Float64Array, from: number, to: number): number {
  for (let i = from + 1; i < to; i++) {
    const kb = b[i];
    const kv = v[i];
    let j = i - 1;
    while (j >= from && b[j] > kb) {
      b[j + 1] = b[j];
      v[j + 1] = v[j];
      j--;
    }
    b[j + 1] = kb;
    v[j + 1] = kv;
  }
  let o = from;
  for (let i = from; i < to; i++) {
    if (o > from && b[o - 1] === b[i]) v[o - 1] += v[i];
    else {
      b[o] = b[i];
      v[o++] = v[i];
    }
  }
  let w = from;
  for (let i = from; i < o; i++) {
    if (v[i] === 0) continue;
    b[w] = b[i];
    v[w++] = v[i];
  }
  return w;
}

/**
 * The union of m sorted lists [from[c], from[c + 1]) of `idx`, with how many
 * lists hold each bucket: merged pairwise, level by level (each level a plain
 * two-way merge, cheaper than a heap for many short lists). Returns the
 * length; the result is in `buckets` / `counts`.
 */
export class UnionCounter {
  buckets = new Uint32Array(1024);
  counts = new Int32Array(1024);
  private b2 = new Uint32Array(1024);
  private c2 = new Int32Array(1024);
  private starts = new Int32Array(64);
  private starts2 = new Int32Array(64);

  count(idx: Uint32Array, from: Int32Array, m: number): number {
    const total = from[m];
    if (this.buckets.length < total) {
      this.buckets = new Uint32Array(total * 2);
      this.counts = new Int32Array(total * 2);
      this.b2 = new Uint32Array(total * 2);
      this.c2 = new Int32Array(total * 2);
    }
    if (this.starts.length < m + 2) {
      this.starts = new Int32Array(m * 2 + 2);
      this.starts2 = new Int32Array(m * 2 + 2);
    }
    let b = this.buckets;
    let c = this.counts;
    let nb = this.b2;
    let nc = this.c2;
    let starts = this.starts;
    let next = this.starts2;
    for (let k = 0; k < total; k++) {
      b[k] = idx[k];
      c[k] = 1;
    }
    for (let k = 0; k <= m; k++) starts[k] = from[k];
    let lists = m;
    while (lists > 1) {
      let out = 0;
      let nl = 0;
      for (let l = 0; l < lists; l += 2) {
        next[nl++] = out;
        let i = starts[l];
        const ie = starts[l + 1];
        if (l + 1 >= lists) {
          for (; i < ie; i++) {
            nb[out] = b[i];
            nc[out++] = c[i];
          }
          continue;
        }
        let j = ie;
        const je = starts[l + 2];
        while (i < ie && j < je) {
          const x = b[i];
          const y = b[j];
          if (x < y) {
            nb[out] = x;
            nc[out++] = c[i++];
          } else if (y < x) {
            nb[out] = y;
            nc[out++] = c[j++];
          } else {
            nb[out] = x;
            nc[out++] = c[i++] + c[j++];
          }
        }
        for (; i < ie; i++) {
          nb[out] = b[i];
          nc[out++] = c[i];
        }
        for (; j < je; j++) {
          nb[out] = b[j];
          nc[out++] = c[j];
        }
      }
      next[nl] = out;
      lists = nl;
      let t: any = b; b = nb; nb = t;
      t = c; c = nc; nc = t;
      t = starts; starts = next; next = t;
    }
    this.buckets = b;
    this.counts = c;
    this.b2 = nb;
    this.c2 = nc;
    this.starts = starts;
    this.starts2 = next;
    return lists === 0 ? 0 : starts[1];
  }
}
