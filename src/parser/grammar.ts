/**
 * The trained PCFG: what a model file holds (GrammarData, written by
 * encode.ts) plus indexes derived from it for parsing (rules by left child
 * and by parent, unary chains, the lexicon by word). The trainer and the
 * decoder build a Grammar the same way, from GrammarData only.
 *
 * Scores are natural-log probabilities (Float64).
 */
import { DataError, UsageError } from '../core/errors.js';
import type { Tree } from '../core/tree.js';
import { binariseTree, KIND_INTERMEDIATE, KIND_REAL, KIND_TOP, symbolKey, type BinTree, type SymbolSpec } from './binarise.js';
import type { PcfgSettings } from './settings.js';
import { GENERIC_CLASS, signatureOf } from './unknown-words.js';

export interface GrammarData {
  settings: PcfgSettings;
  /** Base labels, sorted by code units. */
  labels: string[];
  /** Per symbol: KIND_REAL, KIND_INTERMEDIATE or KIND_TOP. */
  symKind: Uint8Array;
  /** Per symbol: index into `labels`; -1 for TOP. */
  symBase: Int32Array;
  /** CSR (length symbols + 1) into `symCtx`: ancestors' label indexes, nearest first; -1 = virtual top. */
  symCtxStart: Int32Array;
  symCtx: Int32Array;
  /** CSR into `symSibs`: intermediates' remembered siblings (label indexes). */
  symSibStart: Int32Array;
  symSibs: Int32Array;
  /** The TOP symbol's id. */
  top: number;
  /** Binary rules parent → left right, sorted by (parent, left, right). */
  binParent: Int32Array;
  binLeft: Int32Array;
  binRight: Int32Array;
  binScore: Float64Array;
  /** Unary rules parent → child, sorted by (parent, child). */
  unParent: Int32Array;
  unChild: Int32Array;
  unScore: Float64Array;
  /** Known words, sorted; CSR (length words + 1) into (wordTag, wordScore) = log P(tag → word). */
  words: string[];
  wordStart: Int32Array;
  wordTag: Int32Array;
  wordScore: Float64Array;
  /** Signature classes (unknown-words.ts), sorted; CSR into (classTag, classScore). */
  classes: string[];
  classStart: Int32Array;
  classTag: Int32Array;
  classScore: Float64Array;
  /** Trees counted, and trees skipped as unrepresentable. */
  trainedTrees: number;
  skippedTrees: number;
}

/** A chain of more than this many unary rules, summed over all symbols, is refused (lower maxUnaryChain). */
const MAX_CHAINS = 4_000_000;

export class Grammar {
  readonly nSym: number;
  readonly top: number;
  readonly settings: PcfgSettings;

  /**
   * Binary rules for CKY's inner loop, grouped by left child B, then by
   * (B, C) pair: pairs of B are pairStart[B] .. pairStart[B + 1]; pair p has
   * right child pairRight[p] and rules pairRuleStart[p] .. pairRuleStart[p + 1]
   * in (blParent, blScore). The right cell is then looked up once per pair.
   */
  readonly pairStart: Int32Array;
  readonly pairRight: Int32Array;
  readonly pairRuleStart: Int32Array;
  readonly blParent: Int32Array;
  readonly blScore: Float64Array;
  // Binary rules grouped by parent (the data's order): the k-best's hyperedges.
  readonly byParentStart: Int32Array;

  /**
   * Unary chains: every path X → Z1 → … → Y of 1..maxUnaryChain unary rules
   * (maxUnaryChain + 1 from TOP) that repeats no symbol, grouped by X in
   * depth-first order. `chainPath` holds X … Y.
   */
  readonly chainStart: Int32Array;
  readonly chainChild: Int32Array;
  readonly chainScore: Float64Array;
  readonly chainPathStart: Int32Array;
  readonly chainPath: Int32Array;
  /** Unary closure for CKY: per child Y, the best chain score from each X ≠ TOP. */
  readonly closStart: Int32Array;
  readonly closParent: Int32Array;
  readonly closScore: Float64Array;
  /** Best chain score from TOP to each symbol (-Infinity: none). */
  readonly topChainBest: Float64Array;

  private readonly wordIndex: Map<string, number>;
  private readonly classIndex: Map<string, number>;
  private symbolIds: Map<string, number> | undefined;
  private binIndex: Map<number, number> | undefined;
  private unIndex: Map<number, number> | undefined;
  private readonly names: string[];

  constructor(readonly data: GrammarData) {
    const d = data;
    const S = d.symKind.length;
    this.nSym = S;
    this.top = d.top;
    this.settings = d.settings;
    const nb = d.binParent.length;

    this.byParentStart = csrStarts(d.binParent, S);
    const order = Array.from({ length: nb }, (_, r) => r);
    order.sort((a, b) => d.binLeft[a] - d.binLeft[b] || d.binRight[a] - d.binRight[b] || d.binParent[a] - d.binParent[b]);
    this.blParent = Int32Array.from(order, (r) => d.binParent[r]);
    this.blScore = Float64Array.from(order, (r) => d.binScore[r]);
    const pairLeft: number[] = [];
    const pairRight: number[] = [];
    const pairRuleStart: number[] = [];
    for (let k = 0; k < nb; k++) {
      const r = order[k];
      const last = pairLeft.length - 1;
      if (last < 0 || pairLeft[last] !== d.binLeft[r] || pairRight[last] !== d.binRight[r]) {
        pairLeft.push(d.binLeft[r]);
        pairRight.push(d.binRight[r]);
        pairRuleStart.push(k);
      }
    }
    pairRuleStart.push(nb);
    this.pairStart = csrStarts(Int32Array.from(pairLeft), S);
    this.pairRight = Int32Array.from(pairRight);
    this.pairRuleStart = Int32Array.from(pairRuleStart);

    // Unary chains by depth-first search from every symbol.
    const unStart = csrStarts(d.unParent, S);
    const cChild: number[] = [];
    const cScore: number[] = [];
    const cPathStart: number[] = [0];
    const cPath: number[] = [];
    const chainStart = new Int32Array(S + 1);
    const onPath = new Uint8Array(S);
    const path: number[] = [];
    const maxLen = d.settings.maxUnaryChain;
    const dfs = (x: number, score: number, limit: number): void => {
      for (let r = unStart[x]; r < unStart[x + 1]; r++) {
        const y = d.unChild[r];
        if (onPath[y]) continue;
        const s = score + d.unScore[r];
        path.push(y);
        cChild.push(y);
        cScore.push(s);
        for (const p of path) cPath.push(p);
        cPathStart.push(cPath.length);
        if (cChild.length > MAX_CHAINS) {
          throw new UsageError(`the grammar has more than ${MAX_CHAINS} unary chains of up to ${maxLen} rules; lower the setting \`maxUnaryChain\``);
        }
        if (path.length - 1 < limit) {
          onPath[y] = 1;
          dfs(y, s, limit);
          onPath[y] = 0;
        }
        path.pop();
      }
    };
    for (let x = 0; x < S; x++) {
      chainStart[x] = cChild.length;
      path.push(x);
      onPath[x] = 1;
      dfs(x, 0, x === d.top ? maxLen + 1 : maxLen);
      onPath[x] = 0;
      path.pop();
    }
    chainStart[S] = cChild.length;
    this.chainStart = chainStart;
    this.chainChild = Int32Array.from(cChild);
    this.chainScore = Float64Array.from(cScore);
    this.chainPathStart = Int32Array.from(cPathStart);
    this.chainPath = Int32Array.from(cPath);

    // Best chain per (X, Y); TOP's kept apart (it applies in the root cell only).
    const best = new Map<number, number>();
    this.topChainBest = new Float64Array(S).fill(-Infinity);
    for (let x = 0; x < S; x++) {
      for (let c = chainStart[x]; c < chainStart[x + 1]; c++) {
        const y = this.chainChild[c];
        const s = this.chainScore[c];
        if (x === d.top) {
          if (s > this.topChainBest[y]) this.topChainBest[y] = s;
          continue;
        }
        const key = y * S + x;
        const old = best.get(key);
        if (old === undefined || s > old) best.set(key, s);
      }
    }
    const keys = [...best.keys()].sort((a, b) => a - b);
    this.closParent = Int32Array.from(keys, (k) => k % S);
    this.closScore = Float64Array.from(keys, (k) => best.get(k)!);
    this.closStart = csrStarts(Int32Array.from(keys, (k) => Math.floor(k / S)), S);

    this.wordIndex = new Map(d.words.map((w, i) => [w, i]));
    this.classIndex = new Map(d.classes.map((c, i) => [c, i]));
    this.names = Array.from({ length: S }, (_, s) => this.describe(s));
  }

  /** A readable name: `NP^S`, `@NP^S|DT,JJ`, `TOP` (for reports; not unique in odd label sets). */
  symbolName(s: number): string {
    return this.names[s];
  }

  private describe(s: number): string {
    const d = this.data;
    if (d.symKind[s] === KIND_TOP) return 'TOP';
    const lab = (i: number) => (i < 0 ? 'TOP' : d.labels[i]);
    let name = (d.symKind[s] === KIND_INTERMEDIATE ? '@' : '') + lab(d.symBase[s]);
    for (let k = d.symCtxStart[s]; k < d.symCtxStart[s + 1]; k++) name += '^' + lab(d.symCtx[k]);
    if (d.symKind[s] === KIND_INTERMEDIATE) {
      const sibs: string[] = [];
      for (let k = d.symSibStart[s]; k < d.symSibStart[s + 1]; k++) sibs.push(lab(d.symSibs[k]));
      name += '|' + sibs.join(',');
    }
    return name;
  }

  /** The printed label of symbol `s` ('' for TOP). */
  label(s: number): string {
    const b = this.data.symBase[s];
    return b < 0 ? '' : this.data.labels[b];
  }

  kind(s: number): number {
    return this.data.symKind[s];
  }

  /**
   * The lexical entries for `word` at sentence position `position`: the
   * known word's row, else its most specific signature class that exists,
   * else none (the word cannot be tagged). Returns the [start, end) range in
   * (tags, scores).
   */
  lexicon(word: string, position: number): { tags: Int32Array; scores: Float64Array; start: number; end: number } {
    const d = this.data;
    const w = this.wordIndex.get(word);
    if (w !== undefined) return { tags: d.wordTag, scores: d.wordScore, start: d.wordStart[w], end: d.wordStart[w + 1] };
    const c = this.classFor(word, position === 0);
    if (c < 0) return { tags: d.classTag, scores: d.classScore, start: 0, end: 0 };
    return { tags: d.classTag, scores: d.classScore, start: d.classStart[c], end: d.classStart[c + 1] };
  }

  /** Whether `word` is in the known-word lexicon (not a signature class). */
  isKnownWord(word: string): boolean {
    return this.wordIndex.has(word);
  }

  /** The most specific existing signature class of a word, or -1. */
  classFor(word: string, first: boolean): number {
    if (this.data.classes.length === 0) return -1;
    const sig = signatureOf(word, first);
    return this.classIndex.get(sig.full) ?? this.classIndex.get(sig.shape) ?? this.classIndex.get(GENERIC_CLASS) ?? -1;
  }

  /** The symbol id of a spec, or -1. */
  symbolId(spec: SymbolSpec): number {
    if (!this.symbolIds) {
      const d = this.data;
      const lab = (i: number) => (i < 0 ? null : d.labels[i]);
      this.symbolIds = new Map();
      for (let s = 0; s < this.nSym; s++) {
        const ctx: (string | null)[] = [];
        for (let k = d.symCtxStart[s]; k < d.symCtxStart[s + 1]; k++) ctx.push(lab(d.symCtx[k]));
        const sibs: string[] = [];
        for (let k = d.symSibStart[s]; k < d.symSibStart[s + 1]; k++) sibs.push(d.labels[d.symSibs[k]]);
        this.symbolIds.set(symbolKey({ kind: d.symKind[s], base: lab(d.symBase[s]), ctx, sibs }), s);
      }
    }
    return this.symbolIds.get(symbolKey(spec)) ?? -1;
  }

  /** The tree binarised with this grammar's settings and symbols; null if it needs a symbol the grammar lacks. */
  binarise(tree: Tree): BinTree | null {
    return binariseTree(tree, this.settings, (s) => this.symbolId(s));
  }

  /** log P of binary rule a → b c, or -Infinity. */
  binaryScore(a: number, b: number, c: number): number {
    if (!this.binIndex) {
      this.binIndex = new Map();
      const d = this.data;
      for (let r = 0; r < d.binParent.length; r++) this.binIndex.set((d.binParent[r] * this.nSym + d.binLeft[r]) * this.nSym + d.binRight[r], r);
    }
    const r = this.binIndex.get((a * this.nSym + b) * this.nSym + c);
    return r === undefined ? -Infinity : this.data.binScore[r];
  }

  /** log P of unary rule a → b, or -Infinity. */
  unaryScore(a: number, b: number): number {
    if (!this.unIndex) {
      this.unIndex = new Map();
      const d = this.data;
      for (let r = 0; r < d.unParent.length; r++) this.unIndex.set(d.unParent[r] * this.nSym + d.unChild[r], r);
    }
    const r = this.unIndex.get(a * this.nSym + b);
    return r === undefined ? -Infinity : this.data.unScore[r];
  }

  /** log P(tag → word) at `position` (through the word's class if unknown), or -Infinity. */
  lexicalScore(tag: number, word: string, position: number): number {
    const e = this.lexicon(word, position);
    for (let k = e.start; k < e.end; k++) if (e.tags[k] === tag) return e.scores[k];
    return -Infinity;
  }

  /**
   * The log-probability of each binarised node's own rule (TOP → root
   * included; 0 for words), for a binarised tree over `words`.
   */
  ruleScores(bt: BinTree, words: readonly string[]): Float64Array {
    const out = new Float64Array(bt.sym.length);
    for (let i = 0; i < bt.sym.length; i++) {
      const k = bt.kids[i];
      if (k === 0) continue;
      const c1 = bt.sym[i + 1];
      if (k === 2) out[i] = this.binaryScore(bt.sym[i], c1, bt.sym[i + 1 + bt.size[i + 1]]);
      else if (c1 < 0) out[i] = this.lexicalScore(bt.sym[i], words[-1 - c1], -1 - c1);
      else out[i] = this.unaryScore(bt.sym[i], c1);
    }
    return out;
  }

  /** log P(tree) under this grammar (binarised as in training); -Infinity if it cannot be derived. */
  treeLogProb(tree: Tree): number {
    const bt = this.binarise(tree);
    if (!bt) return -Infinity;
    const words = Array.from(tree.wordNodes, (n) => tree.vocab.words.name(tree.sym[n]));
    let s = 0;
    for (const x of this.ruleScores(bt, words)) s += x;
    return s;
  }

  /**
   * Per node of `tree` (preorder index), the log-probability of its local
   * production: the sum of the binarised pieces it became (its lexical rule
   * for a tag). Words get 0. Also TOP → root as `root`. Null if the tree
   * needs a symbol the grammar lacks.
   */
  productionScores(tree: Tree): { nodes: Float64Array; root: number } | null {
    const bt = this.binarise(tree);
    if (!bt) return null;
    const words = Array.from(tree.wordNodes, (n) => tree.vocab.words.name(tree.sym[n]));
    const scores = this.ruleScores(bt, words);
    const nodes = new Float64Array(tree.size);
    let root = 0;
    for (let i = 0; i < bt.sym.length; i++) {
      if (bt.kids[i] === 0) continue;
      if (bt.owner[i] < 0) root += scores[i];
      else nodes[bt.owner[i]] += scores[i];
    }
    return { nodes, root };
  }

  /** The bracketed text of a binarised tree, de-binarised (the inverse of binarise). */
  debinarise(bt: BinTree, words: readonly string[]): string {
    const w = new TreeTextWriter(this, words);
    const ends: number[] = [];
    for (let i = 0; i < bt.sym.length; i++) {
      while (ends.length > 0 && ends[ends.length - 1] <= i) {
        ends.pop();
        w.close();
      }
      const s = bt.sym[i];
      if (s < 0) w.word(-1 - s);
      else {
        w.open(s);
        ends.push(i + bt.size[i]);
      }
    }
    while (ends.length > 0) {
      ends.pop();
      w.close();
    }
    return w.text();
  }
}

/**
 * De-binarisation as a writer: fed a binarised tree in preorder (open a
 * symbol, a word, close), it prints the original tree. Intermediate symbols
 * and TOP print nothing (their children join the enclosing constituent);
 * annotated symbols print their base label.
 */
export class TreeTextWriter {
  private readonly parts: string[] = [];
  private readonly stack: boolean[] = [];
  private started = false;

  constructor(private readonly g: Grammar, private readonly words: readonly string[]) {}

  open(sym: number): void {
    const printed = this.g.kind(sym) === KIND_REAL;
    this.stack.push(printed);
    if (!printed) return;
    this.parts.push(this.started ? ' (' : '(', this.g.label(sym));
    this.started = true;
  }

  word(k: number): void {
    this.parts.push(' ', this.words[k]);
  }

  /** Closes the innermost open symbol. */
  close(): void {
    if (this.stack.pop()) this.parts.push(')');
  }

  text(): string {
    return this.parts.join('');
  }
}

/** Throws unless every word can be written in bracketed text. */
export function checkWords(words: readonly string[]): void {
  for (let k = 0; k < words.length; k++) {
    const w = words[k];
    if (w.length === 0 || /[\s()]/.test(w)) {
      throw new DataError('bad-field', `expected words without whitespace or round brackets (write \`-LRB-\`, \`-RRB-\`); word ${k + 1} is ${JSON.stringify(w)}`);
    }
  }
}

/** CSR starts (length n + 1) of a sorted key array over keys 0..n-1. */
function csrStarts(keys: Int32Array, n: number): Int32Array {
  const start = new Int32Array(n + 1);
  for (let i = 0; i < keys.length; i++) start[keys[i] + 1]++;
  for (let s = 0; s < n; s++) start[s + 1] += start[s];
  return start;
}

export { KIND_INTERMEDIATE, KIND_REAL, KIND_TOP };
