/**
 * Lazy k-best extraction over the parse hypergraph: Huang & Chiang (2005),
 * "Better k-best parsing", Algorithm 3 (LazyKthBest / LazyNext, with
 * GetCandidates building a node's candidate heap on its first visit).
 *
 * The hypergraph is implicit in the CKY chart (cky.ts). Nodes are
 * (cell, symbol, layer):
 * - a bottom node's incoming hyperedges are its lexical rule (span 1) or
 *   every binary rule A → B C at every split whose tails, the top nodes of
 *   B and C, are in the chart;
 * - a top node's are the identity edge from its own bottom node and one
 *   edge per unary chain X → … → Y (grammar.ts) from Y's bottom node;
 * - the root node TOP (root cell only) has one edge per chain from TOP.
 * Hyperedges are listed only when a node is first visited (the laziness),
 * and 1-best scores of tails come from the chart.
 *
 * Not the CKY hot loop: a visited node is an object, a derivation a row of
 * parallel number arrays in it (edge, rank vector j, score).
 */
import { cellIndex, Chart } from './cky.js';
import { checkWords, TreeTextWriter, type Grammar } from './grammar.js';
import type { PcfgSettings } from './settings.js';

const LEXICAL = -2;
const IDENTITY = -1;
/** Ranks must fit 16 bits in a candidate's seen-key. */
const MAX_RANK = 65535;

/** A node of the hypergraph with its derivations D̂(v) and candidate heap cand[v]. */
class KNode {
  // Incoming hyperedges: tails (node keys, -1 = none), weight, and what the edge is
  // (binary rule index, chain index, IDENTITY or LEXICAL).
  readonly eTail1: number[] = [];
  readonly eTail2: number[] = [];
  readonly eWeight: number[] = [];
  readonly eInfo: number[] = [];
  // D̂(v): derivations found so far, best first.
  readonly dEdge: number[] = [];
  readonly dJ1: number[] = [];
  readonly dJ2: number[] = [];
  readonly dScore: number[] = [];
  // cand[v]: a binary max-heap of candidate derivations ⟨e, j⟩.
  readonly hEdge: number[] = [];
  readonly hJ1: number[] = [];
  readonly hJ2: number[] = [];
  readonly hScore: number[] = [];
  /** Every ⟨e, j⟩ ever inserted (so none is inserted twice). */
  readonly seen = new Set<number>();
  /** How many derivations of D̂(v) have had their successors inserted (LazyNext). */
  expanded = 0;

  constructor(readonly key: number) {}

  /** Heap order: higher score first; ties by edge order, then j1, then j2 (deterministic). */
  private before(a: number, b: number): boolean {
    const sa = this.hScore[a];
    const sb = this.hScore[b];
    if (sa !== sb) return sa > sb;
    if (this.hEdge[a] !== this.hEdge[b]) return this.hEdge[a] < this.hEdge[b];
    if (this.hJ1[a] !== this.hJ1[b]) return this.hJ1[a] < this.hJ1[b];
    return this.hJ2[a] < this.hJ2[b];
  }

  private swap(a: number, b: number): void {
    for (const arr of [this.hEdge, this.hJ1, this.hJ2, this.hScore]) {
      const t = arr[a];
      arr[a] = arr[b];
      arr[b] = t;
    }
  }

  insert(e: number, j1: number, j2: number, score: number): void {
    const key = (e * 65536 + j1) * 65536 + j2;
    if (this.seen.has(key)) return;
    this.seen.add(key);
    this.hEdge.push(e);
    this.hJ1.push(j1);
    this.hJ2.push(j2);
    this.hScore.push(score);
    let i = this.hEdge.length - 1;
    while (i > 0) {
      const p = (i - 1) >> 1;
      if (!this.before(i, p)) break;
      this.swap(i, p);
      i = p;
    }
  }

  get heapSize(): number {
    return this.hEdge.length;
  }

  /** Moves the heap's best candidate to the end of D̂(v). */
  extractMax(): void {
    this.dEdge.push(this.hEdge[0]);
    this.dJ1.push(this.hJ1[0]);
    this.dJ2.push(this.hJ2[0]);
    this.dScore.push(this.hScore[0]);
    const last = this.hEdge.length - 1;
    if (last > 0) this.swap(0, last);
    this.hEdge.pop();
    this.hJ1.pop();
    this.hJ2.pop();
    this.hScore.pop();
    let i = 0;
    const n = this.hEdge.length;
    for (;;) {
      const l = 2 * i + 1;
      if (l >= n) break;
      const r = l + 1;
      const c = r < n && this.before(r, l) ? r : l;
      if (!this.before(c, i)) break;
      this.swap(c, i);
      i = c;
    }
  }
}

/** One sentence's k-best search over a filled chart. */
export class KBestSearch {
  private readonly nodes = new Map<number, KNode>();
  readonly root: KNode;
  private readonly S: number;

  constructor(private readonly chart: Chart, private readonly words: readonly string[]) {
    this.S = chart.S;
    this.root = this.node(-1);
  }

  get visitedNodes(): number {
    return this.nodes.size;
  }

  private node(key: number): KNode {
    let v = this.nodes.get(key);
    if (!v) {
      v = new KNode(key);
      this.nodes.set(key, v);
      this.getCandidates(v);
    }
    return v;
  }

  private key(cell: number, sym: number, topLayer: boolean): number {
    return (cell * this.S + sym) * 2 + (topLayer ? 1 : 0);
  }

  /** The score of D̂(v)[j] where the chart already knows it (j = 0) or D̂ holds it. */
  private scoreOf(key: number, j: number): number {
    if (j === 0) {
      const at = Math.floor(key / 2);
      return key % 2 === 1 ? this.chart.top[at] : this.chart.bot[at];
    }
    return this.nodes.get(key)!.dScore[j];
  }

  private addEdge(v: KNode, t1: number, t2: number, w: number, info: number): void {
    v.eTail1.push(t1);
    v.eTail2.push(t2);
    v.eWeight.push(w);
    v.eInfo.push(info);
    const e = v.eWeight.length - 1;
    // The edge's best derivation ⟨e, (0, 0)⟩, scored in the order CKY sums (tails, then rule).
    const s = t2 >= 0 ? this.scoreOf(t1, 0) + this.scoreOf(t2, 0) + w : t1 >= 0 ? this.scoreOf(t1, 0) + w : w;
    v.insert(e, 0, 0, s);
  }

  /** GetCandidates: v's incoming hyperedges, each with its best derivation, into cand[v]. */
  private getCandidates(v: KNode): void {
    const g = this.chart.g;
    const S = this.S;
    const { bot, top } = this.chart;
    const n = this.chart.n;
    if (v.key === -1) {
      const cell = cellIndex(0, n);
      for (let c = g.chainStart[g.top]; c < g.chainStart[g.top + 1]; c++) {
        const y = g.chainChild[c];
        if (bot[cell * S + y] > -Infinity) this.addEdge(v, this.key(cell, y, false), -1, g.chainScore[c], c);
      }
      return;
    }
    const at = Math.floor(v.key / 2);
    const cell = Math.floor(at / S);
    const sym = at % S;
    if (v.key % 2 === 1) {
      if (bot[at] > -Infinity) this.addEdge(v, this.key(cell, sym, false), -1, 0, IDENTITY);
      for (let c = g.chainStart[sym]; c < g.chainStart[sym + 1]; c++) {
        const y = g.chainChild[c];
        if (bot[cell * S + y] > -Infinity) this.addEdge(v, this.key(cell, y, false), -1, g.chainScore[c], c);
      }
      return;
    }
    // Bottom node: recover (i, j) from the triangular cell index.
    let j = 1;
    while (cellIndex(0, j + 1) <= cell) j++;
    const i = cell - cellIndex(0, j);
    if (j - i === 1) {
      this.addEdge(v, -1, -1, bot[at], LEXICAL);
      return;
    }
    const d = g.data;
    for (let m = i + 1; m < j; m++) {
      const lc = cellIndex(i, m);
      const rc = cellIndex(m, j);
      for (let r = g.byParentStart[sym]; r < g.byParentStart[sym + 1]; r++) {
        const b = d.binLeft[r];
        const c = d.binRight[r];
        if (top[lc * S + b] === -Infinity || top[rc * S + c] === -Infinity) continue;
        this.addEdge(v, this.key(lc, b, true), this.key(rc, c, true), d.binScore[r], r);
      }
    }
  }

  /** LazyKthBest(v, k): makes D̂(v) hold k derivations if v has that many. */
  lazyKthBest(v: KNode, k: number): void {
    while (v.dEdge.length < k) {
      if (v.expanded < v.dEdge.length) {
        v.expanded = v.dEdge.length;
        this.lazyNext(v, v.dEdge.length - 1);
      }
      if (v.heapSize === 0) break;
      v.extractMax();
    }
  }

  /** LazyNext: the successors of D̂(v)[d] (one rank up in each tail) into cand[v]. */
  private lazyNext(v: KNode, d: number): void {
    const e = v.dEdge[d];
    const j1 = v.dJ1[d];
    const j2 = v.dJ2[d];
    const t1 = v.eTail1[e];
    const t2 = v.eTail2[e];
    const w = v.eWeight[e];
    if (t1 >= 0 && j1 + 1 <= MAX_RANK) {
      const u = this.node(t1);
      this.lazyKthBest(u, j1 + 2);
      if (u.dEdge.length > j1 + 1) {
        const s = t2 >= 0 ? u.dScore[j1 + 1] + this.scoreOf(t2, j2) + w : u.dScore[j1 + 1] + w;
        v.insert(e, j1 + 1, j2, s);
      }
    }
    if (t2 >= 0 && j2 + 1 <= MAX_RANK) {
      const u = this.node(t2);
      this.lazyKthBest(u, j2 + 2);
      if (u.dEdge.length > j2 + 1) v.insert(e, j1, j2 + 1, this.scoreOf(t1, j1) + u.dScore[j2 + 1] + w);
    }
  }

  /** Node `key` with D̂ holding rank j (a 1-best tail may not have been extracted yet). */
  private ranked(key: number, j: number): KNode {
    const u = this.node(key);
    this.lazyKthBest(u, j + 1);
    return u;
  }

  /** The de-binarised text of D̂(v)[d]. */
  text(v: KNode, d: number): string {
    const w = new TreeTextWriter(this.chart.g, this.words);
    this.emit(v, d, w);
    return w.text();
  }

  private emit(v: KNode, d: number, w: TreeTextWriter): void {
    const g = this.chart.g;
    const e = v.dEdge[d];
    const info = v.eInfo[e];
    const t1 = v.eTail1[e];
    if (v.key !== -1 && v.key % 2 === 0) {
      // Bottom node: a lexical or binary rule.
      const at = v.key / 2;
      const sym = at % this.S;
      w.open(sym);
      if (info === LEXICAL) {
        const cell = Math.floor(at / this.S);
        let j = 1;
        while (cellIndex(0, j + 1) <= cell) j++;
        w.word(cell - cellIndex(0, j));
      } else {
        this.emit(this.ranked(t1, v.dJ1[d]), v.dJ1[d], w);
        this.emit(this.ranked(v.eTail2[e], v.dJ2[d]), v.dJ2[d], w);
      }
      w.close();
      return;
    }
    // Top node or TOP: the identity edge, or a unary chain X … Y over Y's bottom node.
    if (info === IDENTITY) {
      this.emit(this.ranked(t1, v.dJ1[d]), v.dJ1[d], w);
      return;
    }
    const p0 = g.chainPathStart[info];
    const p1 = g.chainPathStart[info + 1];
    for (let p = p0; p < p1 - 1; p++) w.open(g.chainPath[p]);
    this.emit(this.ranked(t1, v.dJ1[d]), v.dJ1[d], w);
    for (let p = p0; p < p1 - 1; p++) w.close();
  }
}

export interface ParseResult {
  /** Bracketed tree, one line, the input words, predicted tags. */
  tree: string;
  /** Natural log of the tree's probability under the grammar. */
  score: number;
}

export interface ParseStats {
  /** Derivations drawn from the root. */
  derivations: number;
  /** Hypergraph nodes visited by the k-best search. */
  visitedNodes: number;
}

/**
 * The k-best parser: CKY, then lazy k-best extraction, then de-binarisation
 * with trees merged by text (a tree keeps its best derivation's score).
 *
 * Order and ties: trees come best first; trees of exactly equal score are
 * ordered by their text (code units). To make the cut at k independent of
 * extraction order, derivations tied with the k-th tree's score are drawn
 * too before sorting and cutting. At most k × derivationFactor derivations
 * are drawn. A sentence the grammar cannot parse gives an empty list; one
 * that the beam (if any) leaves without a parse is parsed again without it.
 */
export class KBestParser {
  private readonly chart: Chart;
  readonly settings: PcfgSettings;
  /** Figures of the last parse (for benchmarks). */
  lastStats: ParseStats = { derivations: 0, visitedNodes: 0 };

  constructor(readonly grammar: Grammar, overrides: Partial<Pick<PcfgSettings, 'beam' | 'derivationFactor'>> = {}) {
    this.chart = new Chart(grammar);
    this.settings = { ...grammar.settings, ...overrides };
  }

  /** The best parse's log-probability only (CKY, no extraction); -Infinity if none. */
  bestScore(words: readonly string[]): number {
    checkWords(words);
    if (words.length === 0) return -Infinity;
    return this.fill(words);
  }

  /** CKY with the beam; if the beam pruned every derivation away, again without it. */
  private fill(words: readonly string[]): number {
    const beam = this.settings.beam;
    const best = this.chart.fill(words, beam);
    return best === -Infinity && beam > 0 ? this.chart.fill(words, 0) : best;
  }

  parse(words: readonly string[], kWanted: number): ParseResult[] {
    checkWords(words);
    this.lastStats = { derivations: 0, visitedNodes: 0 };
    const k = Math.floor(kWanted);
    if (words.length === 0 || !(k >= 1)) return [];
    if (this.fill(words) === -Infinity) return [];
    const search = new KBestSearch(this.chart, words);
    const root = search.root;
    const cap = Math.min(MAX_RANK, Math.max(k, Math.floor(k * this.settings.derivationFactor)));
    const best = new Map<string, number>();
    let kth = Infinity;
    let r = 0;
    for (; r < cap; r++) {
      search.lazyKthBest(root, r + 1);
      if (root.dEdge.length <= r) break;
      const score = root.dScore[r];
      if (best.size >= k && score !== kth) break;
      const text = search.text(root, r);
      if (!best.has(text)) best.set(text, score);
      if (best.size === k) kth = score;
    }
    this.lastStats = { derivations: r, visitedNodes: search.visitedNodes };
    const out = [...best].map(([tree, score]) => ({ tree, score }));
    out.sort((a, b) => (a.score !== b.score ? b.score - a.score : a.tree < b.tree ? -1 : a.tree > b.tree ? 1 : 0));
    if (out.length > k) out.length = k;
    return out;
  }
}
