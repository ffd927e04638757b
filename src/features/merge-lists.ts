/**
 * Sums several sparse lists, each sorted by bucket, into one sorted list:
 * the k-way merge that builds a candidate's difference from the feature
 * lists of the nodes where it deviates (added with +1, missing with −1).
 * Entries that cancel to zero are dropped.
 *
 * Hot path: a binary heap of list heads over typed arrays; no hashing and no
 * sort of the output (it comes out in order).
 */
export class ListMerger {
  private from = new Int32Array(64);
  private to = new Int32Array(64);
  private sign = new Float64Array(64);
  private heap = new Int32Array(64);
  private n = 0;
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
      this.heap = new Int32Array(size);
    }
    this.from[this.n] = from;
    this.to[this.n] = to;
    this.sign[this.n++] = sign;
  }

  /** Merges the lists added since reset(); returns the output length (in outIdx/outVal). */
  merge(buckets: Int32Array, values: Float64Array): number {
    const k = this.n;
    const heap = this.heap;
    const pos = this.from;
    const end = this.to;
    const sign = this.sign;
    let total = 0;
    for (let j = 0; j < k; j++) total += end[j] - pos[j];
    if (this.outIdx.length < total) {
      this.outIdx = new Uint32Array(total * 2);
      this.outVal = new Float64Array(total * 2);
    }
    const outIdx = this.outIdx;
    const outVal = this.outVal;
    // Heapify list indices by their head bucket.
    let size = 0;
    for (let j = 0; j < k; j++) {
      let i = size++;
      while (i > 0) {
        const p = (i - 1) >> 1;
        if (buckets[pos[heap[p]]] <= buckets[pos[j]]) break;
        heap[i] = heap[p];
        i = p;
      }
      heap[i] = j;
    }
    let out = 0;
    let cur = -1;
    let acc = 0;
    while (size > 0) {
      const j = heap[0];
      const b = buckets[pos[j]];
      if (b !== cur) {
        if (cur >= 0 && acc !== 0) {
          outIdx[out] = cur;
          outVal[out++] = acc;
        }
        cur = b;
        acc = 0;
      }
      acc += sign[j] * values[pos[j]];
      pos[j]++;
      // Replace the root: by the list's next head, or by the last element.
      let item = j;
      if (pos[j] >= end[j]) {
        item = heap[--size];
        if (size === 0) break;
      }
      const key = buckets[pos[item]];
      let i = 0;
      for (;;) {
        let child = 2 * i + 1;
        if (child >= size) break;
        if (child + 1 < size && buckets[pos[heap[child + 1]]] < buckets[pos[heap[child]]]) child++;
        if (buckets[pos[heap[child]]] >= key) break;
        heap[i] = heap[child];
        i = child;
      }
      heap[i] = item;
    }
    if (cur >= 0 && acc !== 0) {
      outIdx[out] = cur;
      outVal[out++] = acc;
    }
    this.n = 0;
    return out;
  }
}

/**
 * Sorts entries [from, to) of parallel arrays by bucket (insertion sort:
 * node feature lists are short) and sums equal buckets; returns the new end.
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
  // Drop entries that summed to zero.
  let w = from;
  for (let i = from; i < o; i++) {
    if (v[i] === 0) continue;
    b[w] = b[i];
    v[w++] = v[i];
  }
  return w;
}
