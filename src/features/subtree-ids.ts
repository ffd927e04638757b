/**
 * Exact identities of nodes across the candidates of one sentence
 * (hash-consing of integer sequences), at the levels of detail that feature
 * templates declare they read (template.ts, `Reach`):
 *   atom(i)      = label, span, head word position and tag, height;
 *   level 0      = atom(i);
 *   level d ≥ 1  = atom(i) with the level-(d−1) identities of its children;
 *   edge level d = level d with the tags of the span's first and last word.
 * Candidates share their words, so a word's identity at every level is its
 * position (0 … n−1). Two nodes with one identity at level d read the same
 * things, so templates of reach d give them the same features. Within one
 * tree every node has its own identity at every level (nested nodes of one
 * span differ in height; disjoint ones in span).
 *
 * Hot path: an open-addressing table over integer sequences kept in one
 * pool; keys are compared element by element, never only by hash, so two
 * different nodes can never share an identity.
 */
import type { Tree } from '../core/tree.js';
import type { CandidateView } from './template.js';

export class SequenceIds {
  /** Table slot → identity + 1 (0: empty). */
  private slots = new Int32Array(4096);
  private usedSlots = new Int32Array(1024);
  private nUsed = 0;
  private keyAt = new Int32Array(1024);
  private hashOf = new Int32Array(1024);
  private pool = new Int32Array(8192);
  private poolLen = 0;
  private first = 0;
  private next = 0;
  /** The key being built. */
  key = new Int32Array(64);
  len = 0;

  /** Starts afresh; identities are handed out from `first` on. */
  reset(first: number): void {
    for (let k = 0; k < this.nUsed; k++) this.slots[this.usedSlots[k]] = 0;
    this.nUsed = 0;
    this.poolLen = 0;
    this.first = first;
    this.next = first;
  }

  /** Identities handed out so far (plus `first`). */
  get count(): number {
    return this.next;
  }

  /** Starts a key. */
  begin(): void {
    this.len = 0;
  }

  push(x: number): void {
    if (this.len === this.key.length) {
      const k = new Int32Array(this.len * 2);
      k.set(this.key);
      this.key = k;
    }
    this.key[this.len++] = x;
  }

  /** The identity of the key built since begin(). */
  id(): number {
    const key = this.key;
    const n = this.len;
    let h = 0x2f0b1e5d ^ n;
    for (let j = 0; j < n; j++) {
      h = Math.imul(h ^ key[j], 0x85ebca6b);
      h ^= h >>> 13;
    }
    h |= 0;
    const mask = this.slots.length - 1;
    const pool = this.pool;
    for (let s = (h ^ (h >>> 16)) & mask; ; s = (s + 1) & mask) {
      const e = this.slots[s];
      if (e === 0) return this.add(n, h, s);
      const k = e - 1 - this.first;
      if (this.hashOf[k] !== h) continue;
      const at = this.keyAt[k];
      if (pool[at] !== n) continue;
      let same = true;
      for (let j = 0; j < n; j++) {
        if (pool[at + 1 + j] !== key[j]) {
          same = false;
          break;
        }
      }
      if (same) return e - 1;
    }
  }

  private add(n: number, h: number, slot: number): number {
    const id = this.next++;
    const k = id - this.first;
    if (k === this.keyAt.length) {
      const a = new Int32Array(k * 2);
      a.set(this.keyAt);
      this.keyAt = a;
      const b = new Int32Array(k * 2);
      b.set(this.hashOf);
      this.hashOf = b;
    }
    if (this.poolLen + n + 1 > this.pool.length) {
      const p = new Int32Array(Math.max(this.pool.length * 2, this.poolLen + n + 1));
      p.set(this.pool.subarray(0, this.poolLen));
      this.pool = p;
    }
    this.keyAt[k] = this.poolLen;
    this.hashOf[k] = h;
    this.pool[this.poolLen++] = n;
    for (let j = 0; j < n; j++) this.pool[this.poolLen++] = this.key[j];
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
    // The k-th used slot holds identity first + k (identities are added in order).
    for (let k = 0; k < this.nUsed; k++) {
      const h = this.hashOf[k];
      let s = (h ^ (h >>> 16)) & mask;
      while (this.slots[s] !== 0) s = (s + 1) & mask;
      this.slots[s] = this.first + k + 1;
      this.usedSlots[k] = s;
    }
  }
}

/** Identity kinds: levels 0 … 3, and edge levels 0 … 3 (level + first/last tags). */
export const KINDS = 8;
export const kindOf = (depth: number, edgeTags: boolean): number => (edgeTags ? 4 : 0) + depth;

/**
 * Identifies the nodes of the candidates of one list and builds each
 * candidate's view (head child, head word, preterminal flag, height).
 *
 * Every node first gets its whole-subtree identity (label and children's
 * identities). Everything else about a node — its view and its identities at
 * every level — depends only on its subtree, so it is computed once per
 * distinct subtree in the list and copied for every later candidate that has
 * the same subtree: the work per candidate follows what is new in it.
 *
 * Views are reused from list to list (one per candidate slot, arrays grown
 * when needed, so they may be longer than the tree): a view is valid until
 * the next list is identified.
 */
export class NodeIdentifier {
  readonly ids = new SequenceIds();
  /** The kinds computed: the wanted ones and every level below the deepest. */
  readonly kinds: number[];
  // Per whole-subtree identity: whether known, head child position, head word position, height, and one identity per kind.
  private known = new Uint8Array(1024);
  private headPos = new Int32Array(1024);
  private headAt = new Int32Array(1024);
  private heightOf = new Int32Array(1024);
  private level = new Int32Array(1024 * KINDS);
  private full = new Int32Array(256);
  private readonly views: CandidateView[] = [];

  constructor(private readonly wanted: readonly boolean[], private readonly maxDepth: number) {
    this.kinds = [];
    for (let k = 0; k < KINDS; k++) if (wanted[k] || k <= maxDepth) this.kinds.push(k);
  }

  reset(words: number): void {
    this.ids.reset(words);
    this.known.fill(0);
  }

  /** Candidate slot c's view, its arrays at least n long. */
  private viewFor(c: number, n: number): CandidateView {
    let v = this.views[c];
    if (!v || v.height.length < n) {
      const size = Math.max(64, n * 2);
      v = { tree: null as unknown as Tree, headChild: new Int32Array(size), headWord: new Int32Array(size), preterminal: new Uint8Array(size), height: new Int32Array(size), score: 0, rank: 0 };
      this.views[c] = v;
    }
    return v;
  }

  /**
   * The view of `tree` (candidate slot c) and its node identities per kind,
   * node i's at out[kind][base + i].
   */
  identify(c: number, tree: Tree, score: number, rank: number, out: Int32Array[], base: number, headOf: (tree: Tree, node: number) => number): CandidateView {
    const { sym, start, stop, end, parent, isWord, wordNodes } = tree;
    const n = tree.size;
    const ids = this.ids;
    const view = this.viewFor(c, n);
    view.tree = tree;
    view.score = score;
    view.rank = rank;
    const { headChild, headWord, preterminal, height } = view;
    if (this.full.length < n) this.full = new Int32Array(n * 2);
    const full = this.full;
    const kinds = this.kinds;
    const nk = kinds.length;
    for (let i = n - 1; i >= 0; i--) {
      const at = base + i;
      if (isWord[i]) {
        full[i] = start[i];
        headChild[i] = -1;
        headWord[i] = i;
        preterminal[i] = 0;
        height[i] = 0;
        for (let k = 0; k < nk; k++) out[kinds[k]][at] = start[i];
        continue;
      }
      ids.begin();
      ids.push(-100);
      ids.push(sym[i]);
      let pre = 1;
      for (let ch = i + 1; ch < end[i]; ch = end[ch]) {
        ids.push(full[ch]);
        if (!isWord[ch]) pre = 0;
      }
      const f = ids.id();
      full[i] = f;
      preterminal[i] = pre;
      this.grow(f);
      if (this.known[f]) {
        // A subtree seen before in this list: copy what it determines.
        let ch = i + 1;
        for (let k = this.headAt[f]; k > 0; k--) ch = end[ch];
        headChild[i] = ch;
        headWord[i] = wordNodes[this.headPos[f]];
        height[i] = this.heightOf[f];
        const lv = f * KINDS;
        for (let k = 0; k < nk; k++) out[kinds[k]][at] = this.level[lv + kinds[k]];
        continue;
      }
      // New subtree: its head, height, and identities at each level.
      const hc = headOf(tree, i);
      let pos = 0;
      let ch = i + 1;
      let h = 0;
      for (; ch < end[i]; ch = end[ch]) if (height[ch] > h) h = height[ch];
      ch = i + 1;
      while (ch !== hc) {
        ch = end[ch];
        pos++;
      }
      headChild[i] = hc;
      headWord[i] = headWord[hc];
      height[i] = h + 1;
      const hw = headWord[i];
      ids.begin();
      ids.push(-1);
      ids.push(sym[i]);
      ids.push(start[i]);
      ids.push(stop[i]);
      ids.push(start[hw]);
      ids.push(sym[parent[hw]]);
      ids.push(h + 1);
      const r0 = ids.id();
      out[0][at] = r0;
      for (let d = 1; d <= this.maxDepth; d++) {
        const below = out[d - 1];
        ids.begin();
        ids.push(-1 - d);
        ids.push(r0);
        for (let k = i + 1; k < end[i]; k = end[k]) ids.push(below[base + k]);
        out[d][at] = ids.id();
      }
      for (let d = 0; d <= 3; d++) {
        if (!this.wanted[4 + d]) continue;
        ids.begin();
        ids.push(-10 - d);
        ids.push(out[d][at]);
        ids.push(sym[parent[wordNodes[start[i]]]]);
        ids.push(sym[parent[wordNodes[stop[i] - 1]]]);
        out[4 + d][at] = ids.id();
      }
      this.grow(f);
      this.known[f] = 1;
      this.headAt[f] = pos;
      this.headPos[f] = start[hw];
      this.heightOf[f] = h + 1;
      const lv = f * KINDS;
      for (let k = 0; k < nk; k++) this.level[lv + kinds[k]] = out[kinds[k]][at];
    }
    return view;
  }

  private grow(f: number): void {
    if (f < this.known.length) return;
    let size = this.known.length * 2;
    while (size <= f) size *= 2;
    const k = new Uint8Array(size);
    k.set(this.known);
    this.known = k;
    for (const name of ['headPos', 'headAt', 'heightOf'] as const) {
      const a = new Int32Array(size);
      a.set(this[name]);
      this[name] = a;
    }
    const l = new Int32Array(size * KINDS);
    l.set(this.level);
    this.level = l;
  }
}
