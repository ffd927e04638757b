/**
 * Exact identities of subtrees across the candidates of one sentence
 * (hash-consing). Candidates share their words, so a word's identity is its
 * position (0 … n−1) and a constituent's identity is its label with the
 * identities of its children, which fixes its whole subtree and its span.
 * Within one tree every node has its own identity (a node's subtree strictly
 * contains its descendants'; disjoint nodes cover different words).
 *
 * Hot path: an open-addressing table over integer sequences kept in one
 * pool; keys are compared element by element, never hashed into a string,
 * so two different subtrees can never share an identity.
 */
import type { Tree } from '../core/tree.js';

export class SubtreeIds {
  /** Table slot → identity + 1 (0: empty). */
  private slots = new Int32Array(1024);
  private usedSlots = new Int32Array(256);
  private nUsed = 0;
  /** Per identity (constituents only, offset by `words`): start of its key in the pool, and its hash. */
  private keyAt = new Int32Array(256);
  private hashOf = new Int32Array(256);
  private pool = new Int32Array(4096);
  private poolLen = 0;
  private words = 0;
  private next = 0;
  private kids = new Int32Array(64);

  /** Starts a sentence of `words` words: identities 0 … words−1 are the words. */
  reset(words: number): void {
    for (let k = 0; k < this.nUsed; k++) this.slots[this.usedSlots[k]] = 0;
    this.nUsed = 0;
    this.poolLen = 0;
    this.words = words;
    this.next = words;
  }

  /** Identities handed out so far (words included). */
  get count(): number {
    return this.next;
  }

  /** The identity of every node of `t` (written into `out`, which must hold t.size). */
  identify(t: Tree, out: Int32Array): Int32Array {
    const end = t.end;
    for (let i = t.size - 1; i >= 0; i--) {
      if (t.isWord[i]) {
        out[i] = t.start[i];
        continue;
      }
      let n = 0;
      let h = Math.imul(t.sym[i] + 0x51ed27, 0x9e3779b1);
      for (let c = i + 1; c < end[i]; c = end[c]) {
        if (n === this.kids.length) {
          const k = new Int32Array(n * 2);
          k.set(this.kids);
          this.kids = k;
        }
        const id = out[c];
        this.kids[n++] = id;
        h = Math.imul(h ^ id, 0x85ebca6b);
        h ^= h >>> 13;
      }
      out[i] = this.find(t.sym[i], n, h | 0);
    }
    return out;
  }

  private find(sym: number, n: number, h: number): number {
    const mask = this.slots.length - 1;
    const pool = this.pool;
    const kids = this.kids;
    for (let s = (h ^ (h >>> 16)) & mask; ; s = (s + 1) & mask) {
      const e = this.slots[s];
      if (e === 0) return this.add(sym, n, h, s);
      const id = e - 1;
      const k = id - this.words;
      if (this.hashOf[k] !== h) continue;
      const at = this.keyAt[k];
      if (pool[at] !== sym || pool[at + 1] !== n) continue;
      let same = true;
      for (let j = 0; j < n; j++) {
        if (pool[at + 2 + j] !== kids[j]) {
          same = false;
          break;
        }
      }
      if (same) return id;
    }
  }

  private add(sym: number, n: number, h: number, slot: number): number {
    const id = this.next++;
    const k = id - this.words;
    if (k === this.keyAt.length) {
      const a = new Int32Array(k * 2);
      a.set(this.keyAt);
      this.keyAt = a;
      const b = new Int32Array(k * 2);
      b.set(this.hashOf);
      this.hashOf = b;
    }
    if (this.poolLen + n + 2 > this.pool.length) {
      const p = new Int32Array(Math.max(this.pool.length * 2, this.poolLen + n + 2));
      p.set(this.pool.subarray(0, this.poolLen));
      this.pool = p;
    }
    this.keyAt[k] = this.poolLen;
    this.hashOf[k] = h;
    this.pool[this.poolLen++] = sym;
    this.pool[this.poolLen++] = n;
    for (let j = 0; j < n; j++) this.pool[this.poolLen++] = this.kids[j];
    this.slots[slot] = id + 1;
    if (this.nUsed === this.usedSlots.length) {
      const u = new Int32Array(this.nUsed * 2);
      u.set(this.usedSlots);
      this.usedSlots = u;
    }
    this.usedSlots[this.nUsed++] = slot;
    if (this.nUsed * 2 > this.slots.length) this.rehash();
    return id;
  }

  private rehash(): void {
    this.slots = new Int32Array(this.slots.length * 2);
    const mask = this.slots.length - 1;
    for (let u = 0; u < this.nUsed; u++) {
      const k = u; // identities words … next−1 were added in order; k-th used slot holds identity words + k
      const h = this.hashOf[k];
      let s = (h ^ (h >>> 16)) & mask;
      while (this.slots[s] !== 0) s = (s + 1) & mask;
      this.slots[s] = this.words + k + 1;
      this.usedSlots[u] = s;
    }
  }
}
