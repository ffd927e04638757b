/**
 * Maximum-likelihood (relative-frequency) estimation of the binarised PCFG,
 * streaming: `add` binarises one tree and counts its rules; only the counts
 * are kept. `finish` turns counts into log-probabilities:
 *   P(A → B C) = c(A → B C) / c(A),  P(A → B) = c(A → B) / c(A),
 * where c(A) counts every rule with A on the left (lexical ones included),
 * and the lexicon below.
 *
 * Lexicon (θ = unknownThreshold, λ = lexicalSmoothing, c(T) = c(A) above):
 * - a word seen fewer than θ times is replaced by its signature classes
 *   (unknown-words.ts): its counts go to its full class, its shape class
 *   and the generic class. When θ > 0 but no word is that rare, the generic
 *   class counts word types instead (one per distinct (tag, word) pair), so
 *   a tag that took many different words is likelier for an unseen word.
 * - class tag distributions back off from generic to shape to full class:
 *   P(T|generic) = c(T,generic) / c(generic);
 *   P(T|k) = (c(T,k) + λ·P(T|parent(k))) / (c(k) + λ).
 * - a known word w is interpolated with its most specific existing class k:
 *   P(T|w) = (c(T,w) + λ·P(T|k)) / (c(w) + λ) (no class: c(T,w) / c(w)).
 * - emissions by Bayes' rule, P(w|T) = P(T|w)·c(w)/c(T), and for a class
 *   P(k|T) = P(T|k)·c(k)/c(T). With λ = 0 and θ = 0 these are exactly the
 *   relative frequencies c(T → w) / c(T).
 */
import { DataError } from '../core/errors.js';
import type { Tree } from '../core/tree.js';
import { binariseTree, KIND_TOP, symbolKey, type SymbolSpec } from './binarise.js';
import { Grammar, type GrammarData } from './grammar.js';
import { checkPcfgSettings, type PcfgSettings } from './settings.js';
import { GENERIC_CLASS, signatureOf } from './unknown-words.js';

/** Symbol ids during training stay below this, so three fit in one exact number key. */
const MAX_SYMBOLS = 1 << 17;
const K = MAX_SYMBOLS;

const BAD_LABEL = /[\s()]/;

export class PcfgTrainer {
  readonly settings: PcfgSettings;
  private readonly ids = new Map<string, number>();
  private readonly specs: SymbolSpec[] = [];
  private readonly binary = new Map<number, number>();
  private readonly unary = new Map<number, number>();
  /** word → tag → [count not sentence-initial, count sentence-initial]. */
  private readonly lexical = new Map<string, Map<number, [number, number]>>();
  private trees = 0;
  private skipped = 0;
  private finished = false;

  constructor(settings: PcfgSettings) {
    this.settings = checkPcfgSettings(settings as unknown as Record<string, unknown>);
  }

  private resolve = (s: SymbolSpec): number => {
    const key = symbolKey(s);
    let id = this.ids.get(key);
    if (id === undefined) {
      for (const l of [s.base, ...s.ctx, ...s.sibs]) {
        if (l !== null && BAD_LABEL.test(l)) throw new DataError('bad-field', `expected labels without whitespace or round brackets, got ${JSON.stringify(l)}`);
      }
      id = this.specs.length;
      if (id >= MAX_SYMBOLS) throw new DataError('bad-field', `the grammar would exceed ${MAX_SYMBOLS} symbols; lower \`horizontal\` or \`vertical\``);
      this.ids.set(key, id);
      this.specs.push(s);
    }
    return id;
  };

  /**
   * Counts the rules of one normalised tree. Returns false (and counts the
   * tree as skipped) for a tree the PCFG cannot represent: a constituent
   * holding both words and constituents, or a tag over several words.
   */
  add(tree: Tree): boolean {
    if (this.finished) throw new Error('PcfgTrainer.add after finish');
    let bt;
    try {
      bt = binariseTree(tree, this.settings, this.resolve)!;
    } catch (e) {
      if (e instanceof DataError) {
        this.skipped++;
        return false;
      }
      throw e;
    }
    const words = tree.vocab.words;
    for (let i = 0; i < bt.sym.length; i++) {
      const k = bt.kids[i];
      if (k === 0) continue;
      const a = bt.sym[i];
      const b = bt.sym[i + 1];
      if (k === 2) {
        const key = (a * K + b) * K + bt.sym[i + 1 + bt.size[i + 1]];
        this.binary.set(key, (this.binary.get(key) ?? 0) + 1);
      } else if (b >= 0) {
        const key = a * K + b;
        this.unary.set(key, (this.unary.get(key) ?? 0) + 1);
      } else {
        const pos = -1 - b;
        const w = words.name(tree.sym[tree.wordNodes[pos]]);
        let row = this.lexical.get(w);
        if (!row) this.lexical.set(w, (row = new Map()));
        let c = row.get(a);
        if (!c) row.set(a, (c = [0, 0]));
        c[pos === 0 ? 1 : 0]++;
      }
    }
    this.trees++;
    return true;
  }

  get treeCount(): number {
    return this.trees;
  }

  get skippedCount(): number {
    return this.skipped;
  }

  /** The estimated grammar. The trainer cannot be used afterwards. */
  finish(): Grammar {
    this.finished = true;
    return new Grammar(this.estimate());
  }

  private estimate(): GrammarData {
    const { settings } = this;
    // Symbols in use (a skipped tree may have left some behind), TOP always.
    const used = new Set<number>();
    used.add(this.resolve({ kind: KIND_TOP, base: null, ctx: [], sibs: [] }));
    for (const key of this.binary.keys()) {
      used.add(Math.floor(key / (K * K)));
      used.add(Math.floor(key / K) % K);
      used.add(key % K);
    }
    for (const key of this.unary.keys()) {
      used.add(Math.floor(key / K));
      used.add(key % K);
    }
    for (const row of this.lexical.values()) for (const t of row.keys()) used.add(t);

    // Canonical order: by kind, then by key text (code units). Same data, same ids.
    const keyOf = (s: number) => symbolKey(this.specs[s]);
    const old = [...used].sort((a, b) => this.specs[a].kind - this.specs[b].kind || cmp(keyOf(a), keyOf(b)));
    const remap = new Int32Array(this.specs.length).fill(-1);
    old.forEach((o, n) => (remap[o] = n));
    const labelSet = new Set<string>();
    for (const o of old) {
      const s = this.specs[o];
      for (const l of [s.base, ...s.ctx, ...s.sibs]) if (l !== null) labelSet.add(l);
    }
    const labels = [...labelSet].sort(cmp);
    const labelId = new Map(labels.map((l, i) => [l, i]));
    const lab = (l: string | null) => (l === null ? -1 : labelId.get(l)!);
    const S = old.length;
    const symKind = new Uint8Array(S);
    const symBase = new Int32Array(S);
    const ctxStart = new Int32Array(S + 1);
    const sibStart = new Int32Array(S + 1);
    const ctx: number[] = [];
    const sibs: number[] = [];
    let top = -1;
    for (let n = 0; n < S; n++) {
      const s = this.specs[old[n]];
      symKind[n] = s.kind;
      if (s.kind === KIND_TOP) top = n;
      symBase[n] = lab(s.base);
      for (const l of s.ctx) ctx.push(lab(l));
      for (const l of s.sibs) sibs.push(lab(l));
      ctxStart[n + 1] = ctx.length;
      sibStart[n + 1] = sibs.length;
    }

    // c(A): every rule with A on the left.
    const total = new Float64Array(S);
    const bin: [number, number, number, number][] = [];
    for (const [key, c] of this.binary) {
      const a = remap[Math.floor(key / (K * K))];
      bin.push([a, remap[Math.floor(key / K) % K], remap[key % K], c]);
      total[a] += c;
    }
    const un: [number, number, number][] = [];
    for (const [key, c] of this.unary) {
      const a = remap[Math.floor(key / K)];
      un.push([a, remap[key % K], c]);
      total[a] += c;
    }
    const lex = new Map<string, Map<number, [number, number]>>();
    for (const [w, row] of this.lexical) {
      const r = new Map<number, [number, number]>();
      for (const [t, c] of row) {
        r.set(remap[t], c);
        total[remap[t]] += c[0] + c[1];
      }
      lex.set(w, r);
    }
    bin.sort((x, y) => x[0] - y[0] || x[1] - y[1] || x[2] - y[2]);
    un.sort((x, y) => x[0] - y[0] || x[1] - y[1]);

    const lexicon = estimateLexicon(lex, total, settings.unknownThreshold, settings.lexicalSmoothing);
    return {
      settings,
      labels,
      symKind,
      symBase,
      symCtxStart: ctxStart,
      symCtx: Int32Array.from(ctx),
      symSibStart: sibStart,
      symSibs: Int32Array.from(sibs),
      top,
      binParent: Int32Array.from(bin, (r) => r[0]),
      binLeft: Int32Array.from(bin, (r) => r[1]),
      binRight: Int32Array.from(bin, (r) => r[2]),
      binScore: Float64Array.from(bin, (r) => Math.log(r[3] / total[r[0]])),
      unParent: Int32Array.from(un, (r) => r[0]),
      unChild: Int32Array.from(un, (r) => r[1]),
      unScore: Float64Array.from(un, (r) => Math.log(r[2] / total[r[0]])),
      ...lexicon,
      trainedTrees: this.trees,
      skippedTrees: this.skipped,
    };
  }
}

type Lexicon = Pick<GrammarData, 'words' | 'wordStart' | 'wordTag' | 'wordScore' | 'classes' | 'classStart' | 'classTag' | 'classScore'>;

/** The lexicon's estimate (see the header comment for the formulas). */
function estimateLexicon(lex: Map<string, Map<number, [number, number]>>, total: Float64Array, theta: number, lambda: number): Lexicon {
  const wordCount = (row: Map<number, [number, number]>) => {
    let n = 0;
    for (const c of row.values()) n += c[0] + c[1];
    return n;
  };
  // Class counts from rare words, and each class's back-off parent.
  const classCounts = new Map<string, Map<number, number>>();
  const parentOf = new Map<string, string | null>([[GENERIC_CLASS, null]]);
  const addClass = (k: string, t: number, c: number) => {
    let m = classCounts.get(k);
    if (!m) classCounts.set(k, (m = new Map()));
    m.set(t, (m.get(t) ?? 0) + c);
  };
  const known: string[] = [];
  for (const [w, row] of lex) {
    if (wordCount(row) >= theta) {
      known.push(w);
      continue;
    }
    for (const [t, c] of row) {
      for (let f = 0; f < 2; f++) {
        if (c[f] === 0) continue;
        const sig = signatureOf(w, f === 1);
        addClass(sig.full, t, c[f]);
        if (sig.full !== sig.shape) {
          addClass(sig.shape, t, c[f]);
          parentOf.set(sig.full, sig.shape);
        }
        parentOf.set(sig.shape, GENERIC_CLASS);
        addClass(GENERIC_CLASS, t, c[f]);
      }
    }
  }
  if (theta > 0 && classCounts.size === 0 && lex.size > 0) {
    for (const row of lex.values()) for (const t of row.keys()) addClass(GENERIC_CLASS, t, 1);
  }
  const sumOf = (m: Map<number, number>) => {
    let n = 0;
    for (const c of m.values()) n += c;
    return n;
  };
  // P(T | class) as numerator/denominator pairs, so λ = 0 divides integers only.
  const dist = new Map<string, { tag: number[]; num: number[]; den: number }>();
  const distOf = (k: string): { tag: number[]; num: number[]; den: number } => {
    let d = dist.get(k);
    if (d) return d;
    const counts = classCounts.get(k)!;
    const n = sumOf(counts);
    const parent = parentOf.get(k) ?? null;
    const tags = new Set(counts.keys());
    let p: ((t: number) => number) | null = null;
    if (parent !== null && lambda > 0) {
      const pd = distOf(parent);
      const pm = new Map(pd.tag.map((t, i) => [t, pd.num[i] / pd.den]));
      for (const t of pd.tag) tags.add(t);
      p = (t) => pm.get(t) ?? 0;
    }
    const tag = [...tags].sort((a, b) => a - b);
    d = {
      tag,
      num: tag.map((t) => (counts.get(t) ?? 0) + (p ? lambda * p(t) : 0)),
      den: n + (p ? lambda : 0),
    };
    dist.set(k, d);
    return d;
  };

  // Emission scores log(P(T|x)·c(x)/c(T)) = log(num·c(x) / (den·c(T))).
  const classes = [...classCounts.keys()].sort(cmp);
  const classStart = [0];
  const classTag: number[] = [];
  const classScore: number[] = [];
  for (const k of classes) {
    const d = distOf(k);
    const ck = sumOf(classCounts.get(k)!);
    for (let i = 0; i < d.tag.length; i++) {
      if (d.num[i] <= 0) continue;
      classTag.push(d.tag[i]);
      classScore.push(Math.log((d.num[i] * ck) / (d.den * total[d.tag[i]])));
    }
    classStart.push(classTag.length);
  }

  known.sort(cmp);
  const wordStart = [0];
  const wordTag: number[] = [];
  const wordScore: number[] = [];
  for (const w of known) {
    const row = lex.get(w)!;
    const cw = wordCount(row);
    let k: string | undefined;
    if (lambda > 0 && classCounts.size > 0) {
      const sig = signatureOf(w, false);
      k = [sig.full, sig.shape, GENERIC_CLASS].find((x) => classCounts.has(x));
    }
    const tags = new Set(row.keys());
    let pm: Map<number, number> | null = null;
    if (k !== undefined) {
      const d = distOf(k);
      pm = new Map(d.tag.map((t, i) => [t, d.num[i] / d.den]));
      for (const t of d.tag) tags.add(t);
    }
    for (const t of [...tags].sort((a, b) => a - b)) {
      const c = row.get(t);
      const num = (c ? c[0] + c[1] : 0) + (pm ? lambda * (pm.get(t) ?? 0) : 0);
      if (num <= 0) continue;
      const den = cw + (pm ? lambda : 0);
      wordTag.push(t);
      wordScore.push(Math.log((num * cw) / (den * total[t])));
    }
    wordStart.push(wordTag.length);
  }
  return {
    words: known,
    wordStart: Int32Array.from(wordStart),
    wordTag: Int32Array.from(wordTag),
    wordScore: Float64Array.from(wordScore),
    classes,
    classStart: Int32Array.from(classStart),
    classTag: Int32Array.from(classTag),
    classScore: Float64Array.from(classScore),
  };
}

/** Code-unit order (never locale order: the bytes must not depend on the machine). */
function cmp(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}
