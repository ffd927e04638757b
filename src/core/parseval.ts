/**
 * PARSEVAL bracket counts (Black et al., 1991), labeled variant with the
 * conventions of Collins (1997) as defaults:
 * - brackets are (label, start, end) over the words left after deleting
 *   punctuation; which positions are punctuation is decided by the GOLD
 *   tree's POS tags (DESIGN.md), so a candidate that mis-tags a comma loses
 *   a tag, not every span after it;
 * - preterminals are not brackets; a constituent covering only deleted
 *   words is not a bracket; an unlabeled root or a root labeled TOP / ROOT
 *   is not a bracket;
 * - ADVP and PRT count as one label;
 * - brackets form a multiset: matched = Σ min(count in gold, count in test).
 * Trees are expected normalised (function tags stripped, empties deleted).
 */
import { DataError } from './errors.js';
import { isPreterminal, type Tree } from './tree.js';

export interface ScoringOptions {
  /** POS tags whose words are deleted before scoring. */
  punctuation: readonly string[];
  /** Groups of labels that count as one (the first of each group names it). */
  equivalent: readonly (readonly string[])[];
  /** Root labels that are not brackets (the unlabeled root is '' ). */
  rootLabels: readonly string[];
  /** Score labels (true) or spans only (false). */
  labeled: boolean;
}

export const DEFAULT_SCORING: ScoringOptions = {
  punctuation: [',', ':', '``', "''", '.'],
  equivalent: [['ADVP', 'PRT']],
  rootLabels: ['TOP', 'ROOT', ''],
  labeled: true,
};

export interface BracketCounts {
  matched: number;
  gold: number;
  test: number;
}

/** Precision, recall and F1 (percentages) from counts; F1 of 0 brackets on both sides is 100. */
export function prf(c: BracketCounts): { precision: number; recall: number; f1: number } {
  const precision = c.test === 0 ? (c.gold === 0 ? 100 : 0) : (100 * c.matched) / c.test;
  const recall = c.gold === 0 ? (c.test === 0 ? 100 : 0) : (100 * c.matched) / c.gold;
  const f1 = c.gold + c.test === 0 ? 100 : (200 * c.matched) / (c.gold + c.test);
  return { precision, recall, f1 };
}

/** Corpus counts: the sum of sentence counts (never an average of sentence F1s). */
export function sumCounts(list: Iterable<BracketCounts>): BracketCounts {
  const s = { matched: 0, gold: 0, test: 0 };
  for (const c of list) {
    s.matched += c.matched;
    s.gold += c.gold;
    s.test += c.test;
  }
  return s;
}

/**
 * Scores one sentence: the gold tree and its candidates must share the
 * vocabulary and the words. Keeps per-gold work (punctuation map, gold
 * brackets) so that each candidate costs only its own brackets.
 */
export class SentenceScorer {
  /** Number of kept (non-punctuation) words before word k; length n + 1. */
  private readonly kept: Int32Array;
  private readonly goldKeys: Float64Array;
  private readonly labelKey: Map<number, number>;
  private readonly rootIds: Set<number>;
  private readonly width: number;

  constructor(readonly gold: Tree, readonly options: ScoringOptions = DEFAULT_SCORING) {
    const vocab = gold.vocab;
    const punct = new Set(options.punctuation);
    const n = gold.wordNodes.length;
    this.kept = new Int32Array(n + 1);
    for (let k = 0; k < n; k++) {
      const tag = vocab.labels.name(gold.sym[gold.parent[gold.wordNodes[k]]]);
      this.kept[k + 1] = this.kept[k] + (punct.has(tag) ? 0 : 1);
    }
    this.width = n + 1;
    this.labelKey = new Map();
    this.rootIds = new Set(options.rootLabels.map((l) => vocab.labels.intern(l)));
    this.goldKeys = this.brackets(gold);
  }

  /** Throws a yield-mismatch DataError unless `test` has the gold's words. */
  checkYield(test: Tree): void {
    const g = this.gold;
    const n = g.wordNodes.length;
    const m = test.wordNodes.length;
    for (let k = 0; k < Math.min(n, m); k++) {
      const a = g.sym[g.wordNodes[k]];
      const b = test.sym[test.wordNodes[k]];
      if (a !== b) {
        const name = (t: Tree, id: number) => t.vocab.words.name(id);
        throw new DataError('yield-mismatch',
          `expected the candidate's words to equal the gold tree's; first difference at word ${k + 1}: gold \`${name(g, a)}\`, candidate \`${name(test, b)}\``);
      }
    }
    if (n !== m) {
      const extra = n > m ? `gold goes on with \`${g.vocab.words.name(g.sym[g.wordNodes[m]])}\`` : `candidate goes on with \`${test.vocab.words.name(test.sym[test.wordNodes[n]])}\``;
      throw new DataError('yield-mismatch',
        `expected the candidate's words to equal the gold tree's; the gold has ${n} words, the candidate ${m} (after word ${Math.min(n, m)}, the ${extra})`);
    }
  }

  /** Bracket counts of a candidate against the gold (checks the yield first). */
  score(test: Tree): BracketCounts {
    this.checkYield(test);
    const t = this.brackets(test);
    const g = this.goldKeys;
    let i = 0;
    let j = 0;
    let matched = 0;
    while (i < g.length && j < t.length) {
      if (g[i] === t[j]) {
        matched++;
        i++;
        j++;
      } else if (g[i] < t[j]) i++;
      else j++;
    }
    return { matched, gold: g.length, test: t.length };
  }

  get goldBrackets(): number {
    return this.goldKeys.length;
  }

  /** Sorted bracket keys: label × width² + start × width + end. */
  private brackets(tree: Tree): Float64Array {
    const keys: number[] = [];
    const w = this.width;
    for (let i = 0; i < tree.size; i++) {
      if (tree.isWord[i] || isPreterminal(tree, i)) continue;
      if (i === 0 && this.rootIds.has(tree.sym[0])) continue;
      const s = this.kept[tree.start[i]];
      const e = this.kept[tree.stop[i]];
      if (s === e) continue; // covers only deleted words
      const label = this.options.labeled ? this.labelOf(tree, tree.sym[i]) : 0;
      keys.push(label * w * w + s * w + e);
    }
    return Float64Array.from(keys).sort();
  }

  private labelOf(tree: Tree, id: number): number {
    let k = this.labelKey.get(id);
    if (k === undefined) {
      const name = tree.vocab.labels.name(id);
      const group = this.options.equivalent.find((g) => g.includes(name));
      k = 1 + tree.vocab.labels.intern(group ? group[0] : name);
      this.labelKey.set(id, k);
    }
    return k;
  }
}

/** Bracket counts of `test` against `gold` (one-off; use SentenceScorer for n-best lists). */
export function scoreTree(gold: Tree, test: Tree, options: ScoringOptions = DEFAULT_SCORING): BracketCounts {
  return new SentenceScorer(gold, options).score(test);
}
