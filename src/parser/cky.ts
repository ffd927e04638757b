/**
 * CKY (Cocke–Younger–Kasami) Viterbi inside pass over the binarised grammar,
 * in log-probabilities.
 *
 * Hot loop, so: one Float64Array of scores per layer for the whole chart
 * (cell × symbol, -Infinity = absent), one Int32Array list of the symbols
 * present per cell, buffers reused across sentences, no object per cell or
 * per item. Two layers per cell: `bot` holds derivations whose top rule is
 * lexical (span 1) or binary; `top` adds a unary chain over them (the unary
 * closure, best chain only). Binary rules read `top` of their children.
 * The k-best extractor (kbest.ts) reads both layers as the 1-best of the
 * hypergraph's nodes.
 */
import type { Grammar } from './grammar.js';

/** Cell index of span [i, j), 0 ≤ i < j ≤ n: triangular, by end then start. */
export function cellIndex(i: number, j: number): number {
  return ((j - 1) * j) / 2 + i;
}

export class Chart {
  n = 0;
  readonly S: number;
  bot = new Float64Array(0);
  top = new Float64Array(0);
  /** Per cell, the symbols with a finite `bot` (`botCount[cell]` of them from `cell × S`). */
  botList = new Int32Array(0);
  botCount = new Int32Array(0);
  topList = new Int32Array(0);
  topCount = new Int32Array(0);
  /** Best log P of the whole sentence (TOP over the root cell), -Infinity if none. */
  rootScore = -Infinity;

  constructor(readonly g: Grammar) {
    this.S = g.nSym;
  }

  private size(n: number): void {
    const cells = (n * (n + 1)) / 2;
    const need = cells * this.S;
    if (this.bot.length < need) {
      this.bot = new Float64Array(need);
      this.top = new Float64Array(need);
      this.botList = new Int32Array(need);
      this.topList = new Int32Array(need);
    }
    if (this.botCount.length < cells) {
      this.botCount = new Int32Array(cells);
      this.topCount = new Int32Array(cells);
    }
    this.bot.fill(-Infinity, 0, need);
    this.top.fill(-Infinity, 0, need);
    this.botCount.fill(0, 0, cells);
    this.topCount.fill(0, 0, cells);
    this.n = n;
  }

  /**
   * Fills the chart for `words`. `beam` > 0 drops, per cell, the symbols
   * whose `top` score is more than `beam` below the cell's best.
   */
  fill(words: readonly string[], beam: number): number {
    const g = this.g;
    const S = this.S;
    const n = words.length;
    this.size(n);
    const bot = this.bot;
    const top = this.top;
    const botList = this.botList;
    const botCount = this.botCount;
    const pairStart = g.pairStart;
    const pairRight = g.pairRight;
    const pairRuleStart = g.pairRuleStart;
    const blParent = g.blParent;
    const blScore = g.blScore;
    const topList = this.topList;
    const topCount = this.topCount;

    // Span 1: lexical rules.
    for (let k = 0; k < n; k++) {
      const cell = cellIndex(k, k + 1);
      const base = cell * S;
      const e = g.lexicon(words[k], k);
      let c = 0;
      for (let r = e.start; r < e.end; r++) {
        const t = e.tags[r];
        if (bot[base + t] === -Infinity) botList[base + c++] = t;
        if (e.scores[r] > bot[base + t]) bot[base + t] = e.scores[r];
      }
      botCount[cell] = c;
      this.closeCell(cell, beam);
    }

    // Longer spans: every split, every left symbol, its (left, right) pairs; the right
    // child is looked up once per pair, then each rule of the pair is scored.
    for (let span = 2; span <= n; span++) {
      for (let i = 0; i + span <= n; i++) {
        const j = i + span;
        const cell = cellIndex(i, j);
        const base = cell * S;
        let c = 0;
        for (let m = i + 1; m < j; m++) {
          const lc = cellIndex(i, m);
          const lbase = lc * S;
          const rbase = cellIndex(m, j) * S;
          const lcount = topCount[lc];
          for (let t = 0; t < lcount; t++) {
            const b = topList[lbase + t];
            const lb = top[lbase + b];
            const pEnd = pairStart[b + 1];
            for (let p = pairStart[b]; p < pEnd; p++) {
              const rc = top[rbase + pairRight[p]];
              if (rc === -Infinity) continue;
              // (left + right) + rule: the order the k-best extractor sums in, so scores agree bit for bit.
              const lr = lb + rc;
              const rEnd = pairRuleStart[p + 1];
              for (let r = pairRuleStart[p]; r < rEnd; r++) {
                const s = lr + blScore[r];
                const a = base + blParent[r];
                if (s > bot[a]) {
                  if (bot[a] === -Infinity) botList[base + c++] = blParent[r];
                  bot[a] = s;
                }
              }
            }
          }
        }
        botCount[cell] = c;
        this.closeCell(cell, beam);
      }
    }

    // The virtual top over the root cell.
    let best = -Infinity;
    if (n > 0) {
      const cell = cellIndex(0, n);
      const base = cell * S;
      const tcb = g.topChainBest;
      for (let t = 0; t < botCount[cell]; t++) {
        const y = botList[base + t];
        const s = bot[base + y] + tcb[y];
        if (s > best) best = s;
      }
    }
    this.rootScore = best;
    return best;
  }

  /** Unary closure of one cell (best chains), then the beam. */
  private closeCell(cell: number, beam: number): void {
    const g = this.g;
    const S = this.S;
    const base = cell * S;
    const bot = this.bot;
    const top = this.top;
    const topList = this.topList;
    const closStart = g.closStart;
    const closParent = g.closParent;
    const closScore = g.closScore;
    let c = 0;
    const bc = this.botCount[cell];
    for (let t = 0; t < bc; t++) {
      const y = this.botList[base + t];
      const b = bot[base + y];
      if (b > top[base + y]) {
        if (top[base + y] === -Infinity) topList[base + c++] = y;
        top[base + y] = b;
      }
      for (let r = closStart[y]; r < closStart[y + 1]; r++) {
        const x = base + closParent[r];
        const s = b + closScore[r];
        if (s > top[x]) {
          if (top[x] === -Infinity) topList[base + c++] = closParent[r];
          top[x] = s;
        }
      }
    }
    if (beam > 0 && c > 0) {
      let max = -Infinity;
      for (let t = 0; t < c; t++) if (top[base + topList[base + t]] > max) max = top[base + topList[base + t]];
      const floor = max - beam;
      let kept = 0;
      for (let t = 0; t < c; t++) {
        const x = topList[base + t];
        if (top[base + x] < floor) top[base + x] = -Infinity;
        else topList[base + kept++] = x;
      }
      c = kept;
    }
    this.topCount[cell] = c;
  }
}
