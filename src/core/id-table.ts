/**
 * Sentence ids → ordinals (0, 1, 2 … in insertion order), compactly: the ids'
 * UTF-8 bytes live in one growing byte pool and an open-addressing table maps
 * hashes to ordinals, about 20–30 bytes per id (a Map of strings costs 3–4
 * times that: a million gold sentences made it the largest thing in memory).
 * Ids are compared byte for byte, never by hash alone.
 */
const encoder = new TextEncoder();
const decoder = new TextDecoder();

function hashBytes(b: Uint8Array, n: number): number {
  let h = 0x811c9dc5 ^ n;
  for (let i = 0; i < n; i++) h = Math.imul(h ^ b[i], 0x01000193);
  h ^= h >>> 15;
  return Math.imul(h, 0x2c1b3c6d) | 0;
}

export class IdTable {
  private pool = new Uint8Array(1 << 14);
  private poolLen = 0;
  private from = new Int32Array(1024);
  private hashes = new Int32Array(1024);
  /** Slot → ordinal + 1 (0: empty). */
  private slots = new Int32Array(2048);
  private n = 0;
  private scratch = new Uint8Array(256);

  get size(): number {
    return this.n;
  }

  private encode(id: string): number {
    // UTF-8 takes at most 3 bytes per UTF-16 code unit.
    if (this.scratch.length < id.length * 3) this.scratch = new Uint8Array(id.length * 3);
    return encoder.encodeInto(id, this.scratch).written;
  }

  private find(len: number, h: number): number {
    const mask = this.slots.length - 1;
    for (let s = h & mask; ; s = (s + 1) & mask) {
      const e = this.slots[s];
      if (e === 0) return -1 - s;
      const k = e - 1;
      if (this.hashes[k] !== h) continue;
      const at = this.from[k];
      const end = k + 1 < this.n ? this.from[k + 1] : this.poolLen;
      if (end - at !== len) continue;
      let same = true;
      for (let i = 0; i < len; i++) {
        if (this.pool[at + i] !== this.scratch[i]) {
          same = false;
          break;
        }
      }
      if (same) return k;
    }
  }

  /** The ordinal of `id`, or -1. */
  get(id: string): number {
    const len = this.encode(id);
    const k = this.find(len, hashBytes(this.scratch, len));
    return k >= 0 ? k : -1;
  }

  /** Adds `id` and returns its new ordinal, or returns −1 − (existing ordinal) when it is already there. */
  add(id: string): number {
    const len = this.encode(id);
    const h = hashBytes(this.scratch, len);
    const found = this.find(len, h);
    if (found >= 0) return -1 - found;
    const k = this.n++;
    if (k === this.from.length) {
      const f = new Int32Array(k * 2);
      f.set(this.from);
      this.from = f;
      const g = new Int32Array(k * 2);
      g.set(this.hashes);
      this.hashes = g;
    }
    if (this.poolLen + len > this.pool.length) {
      const p = new Uint8Array(Math.max(this.pool.length * 2, this.poolLen + len));
      p.set(this.pool.subarray(0, this.poolLen));
      this.pool = p;
    }
    this.pool.set(this.scratch.subarray(0, len), this.poolLen);
    this.from[k] = this.poolLen;
    this.poolLen += len;
    this.hashes[k] = h;
    this.slots[-1 - found] = k + 1;
    if (this.n * 2 > this.slots.length) this.rehash();
    return k;
  }

  /** The id of ordinal k. */
  id(k: number): string {
    const end = k + 1 < this.n ? this.from[k + 1] : this.poolLen;
    return decoder.decode(this.pool.subarray(this.from[k], end));
  }

  private rehash(): void {
    this.slots = new Int32Array(this.slots.length * 2);
    const mask = this.slots.length - 1;
    for (let k = 0; k < this.n; k++) {
      let s = this.hashes[k] & mask;
      while (this.slots[s] !== 0) s = (s + 1) & mask;
      this.slots[s] = k + 1;
    }
  }
}
