/**
 * The extract + hash stages for one list, as a reference vector and
 * per-candidate differences from it, computed from the nodes where
 * candidates differ.
 *
 * Why: the candidates of an n-best list share most of their nodes. A node
 * feature reads only as much of the tree as its template's `reach` declares
 * (template.ts), so
 *   - nodes are identified exactly across the list, at each declared level
 *     of detail (subtree-ids.ts), and counted: the nodes that more than half
 *     of the candidates have form the list's consensus;
 *   - a candidate's vector, relative to the consensus, is the features of
 *     its nodes outside the consensus minus those of the consensus nodes it
 *     lacks, plus its whole-tree (and non-local) features;
 *   - a node's features are computed once per list, and only for consensus
 *     nodes and where some candidate deviates: so the work per candidate
 *     follows what that candidate does differently, not its size.
 * The stored reference is, per bucket, the value most candidates share (ties:
 * the best-ranked holder); a difference holds what that candidate does
 * differently. A bucket no difference touches has the same value in every
 * candidate, so "drop features that are the same in every candidate" is
 * "store the reference only where the list varies".
 *
 * Values. A feature value is the float32 rounding of the float64 sum of what
 * was emitted at its bucket (node features first, then whole-tree features
 * in emission order), exactly as the direct path (direct-vectors.ts) sums
 * it. Differences are taken between those float32 values, in float64, where
 * they are exact (for any two float32 values within 2^29 of each other in
 * magnitude), so reference + difference gives back the float32 value exactly;
 * only a bucket that sums several real-valued node features could differ in
 * its last bit, through summation order.
 *
 * Hot paths are typed arrays reused across lists; the vectors returned are
 * views into buffers that the next call overwrites. Every node feature of
 * the list is computed first; then the buckets the list touches are
 * numbered in ascending order (columns.ts), and sums, differences and counts
 * run over dense arrays indexed by column: a candidate's difference is
 * summed in place and read back in column (= bucket) order from a bit set
 * of the columns it touched, with no merge and no sort.
 */
import { FeatureSink } from '../core/feature-sink.js';
import { NameBook } from '../core/name-book.js';
import type { SparseVector } from '../core/sparse-vector.js';
import type { Tree } from '../core/tree.js';
import { headChildNode } from '../core/find-heads.js';
import { ColumnIndex } from './columns.js';
import { KINDS, kindOf, NodeIdentifier } from './subtree-ids.js';
import type { CandidateView, ConfiguredTemplate } from './template.js';

export interface ExtractorOptions {
  templates: readonly ConfiguredTemplate[];
  bits: number;
  seed: number;
  /** Store the reference only where the list varies (default true). */
  dropUniform?: boolean;
  /** Keep up to this many canonical keys per bucket (0: none). */
  names?: number;
}

export interface CandidateInput {
  tree: Tree;
  score: number;
  rank: number;
}

/** A vector with, per entry, its position in the list's stored buckets (`SentenceVectors.buckets`). */
export interface PlacedVector extends SparseVector {
  pos: Uint32Array;
}

export interface SentenceVectors {
  /** The reference vector at the stored buckets; null for a list without candidates. */
  ref: PlacedVector | null;
  /** Per candidate, its vector minus the reference. */
  diffs: PlacedVector[];
  /** Every bucket the reference or some difference stores, ascending (what `pos` counts in). */
  buckets: Uint32Array;
  /** Buckets whose value differs between some candidates, ascending. */
  varying: Uint32Array;
  /**
   * Per template k (in pipeline order): at 2k the distinct buckets it fired
   * somewhere in the list, at 2k+1 how many of those vary.
   */
  templateCounts: Uint32Array;
}

const fround = Math.fround;

/** Grows a typed array to at least `n` elements, keeping its contents. */
function grown<T extends Int32Array | Float64Array | Uint8Array | Uint32Array>(a: T, n: number): T {
  if (a.length >= n) return a;
  let size = a.length * 2;
  while (size < n) size *= 2;
  const b = new (a.constructor as new (n: number) => T)(size);
  b.set(a as never);
  return b;
}

interface Group {
  kind: number;
  templates: { t: ConfiguredTemplate; index: number }[];
}

export class VectorExtractor {
  readonly sink: FeatureSink;
  readonly names: NameBook | null;
  /** Local node templates, grouped by the identity kind their reach needs. */
  private readonly groups: Group[] = [];
  private readonly groupKinds: number[] = [];
  private readonly wanted: boolean[] = new Array(KINDS).fill(false);
  private readonly context: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly whole: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly dropUniform: boolean;
  private readonly nTemplates: number;
  private readonly identifier: NodeIdentifier;

  // Node identities of the list per kind: candidate c's node i at kindIds[kind][nodeFrom[c] + i].
  private kindIds: Int32Array[] = [];
  private nodeFrom = new Int32Array(64);
  // Per identity (reset per list).
  private owner = new Int32Array(1024);
  private ownerNode = new Int32Array(1024);
  private ownerGroup = new Int32Array(1024);
  private holders = new Int32Array(1024);
  private featFrom = new Int32Array(1024);
  private featTo = new Int32Array(1024);
  private inRef = new Uint8Array(1024);
  private stamp = new Int32Array(1024);
  private consensusIds = new Int32Array(256);
  private nConsensus = 0;
  // Node features of every identity of the list: bucket, column, value, template.
  private fb = new Int32Array(8192);
  private fc = new Int32Array(8192);
  private fv = new Float64Array(8192);
  private ft = new Uint8Array(8192);
  private fn = 0;
  /** True when some node feature of this list has a value that is not an integer. */
  private nodeReal = false;
  // Whole-tree (and non-local) features of each candidate, the same way.
  private tb = new Int32Array(1024);
  private tc = new Int32Array(1024);
  private tv = new Float64Array(1024);
  private tt = new Uint8Array(1024);
  private tn = 0;
  private tFrom = new Int32Array(64);
  // Per column (reset per list): the consensus's node sum, a candidate's node difference and
  // whole-tree sum, which candidate last touched it with whole-tree features, and the touched set (bits).
  private readonly columns = new ColumnIndex();
  private nCols = 0;
  private colR = new Float64Array(1024);
  private colD = new Float64Array(1024);
  private colT = new Float64Array(1024);
  private colTree = new Int32Array(1024);
  private touched = new Int32Array(32);
  // Per column, for the reference: how many differences hold it, vote state, templates fired.
  private colCount = new Int32Array(1024);
  private colVote = new Int32Array(1024);
  private colValue = new Float64Array(1024);
  private colAgree = new Int32Array(1024);
  private colFlags = new Uint8Array(1024);
  private colTemplates = new Int32Array(1024);
  // Differences from the consensus (columns), then from the reference (buckets).
  private dCol = new Int32Array(8192);
  private dVal = new Float64Array(8192);
  private oIdx = new Uint32Array(8192);
  private oVal = new Float64Array(8192);
  private oPos = new Uint32Array(8192);
  private posOfCol = new Int32Array(1024);
  private shiftCol = new Int32Array(64);
  private shiftVal = new Float64Array(64);
  private variesCol = new Int32Array(1024);

  /** Work done so far (for benchmarks): what the per-candidate cost follows. */
  readonly work = { lists: 0, candidates: 0, nodes: 0, identities: 0, computed: 0, replayed: 0, touched: 0, stored: 0 };

  constructor(readonly options: ExtractorOptions) {
    if (options.templates.length > 31) throw new RangeError(`expected at most 31 templates, got ${options.templates.length}`);
    this.names = options.names ? new NameBook(options.names) : null;
    this.sink = new FeatureSink(options.bits, options.seed, this.names);
    let maxDepth = 0;
    options.templates.forEach((t, index) => {
      if (t.tree) this.whole.push({ t, index });
      if (!t.node) return;
      if (t.local === false || !t.reach) {
        this.context.push({ t, index });
        return;
      }
      const kind = kindOf(t.reach.depth, t.reach.edgeTags === true);
      this.wanted[kind] = true;
      maxDepth = Math.max(maxDepth, t.reach.depth);
      let g = this.groups.find((x) => x.kind === kind);
      if (!g) {
        g = { kind, templates: [] };
        this.groups.push(g);
        this.groupKinds.push(kind);
      }
      g.templates.push({ t, index });
    });
    this.identifier = new NodeIdentifier(this.wanted, maxDepth);
    for (let k = 0; k < KINDS; k++) this.kindIds.push(new Int32Array(1024));
    this.dropUniform = options.dropUniform ?? true;
    this.nTemplates = options.templates.length;
  }

  /** The vectors of one list; the first candidate is the best-ranked. */
  sentence(cands: readonly CandidateInput[]): SentenceVectors {
    const m = cands.length;
    const templateCounts = new Uint32Array(2 * this.nTemplates);
    if (m === 0) return { ref: null, diffs: [], buckets: new Uint32Array(0), varying: new Uint32Array(0), templateCounts };
    const views = this.identify(cands);
    this.nodeFeatures(views);
    this.tn = 0;
    this.tFrom = grown(this.tFrom, m + 1);
    for (let c = 0; c < m; c++) this.wholeTree(views[c], c);
    this.tFrom[m] = this.tn;
    this.numberColumns();
    this.consensus(cands);
    const from = this.differencesFromConsensus(cands);
    const { ref, diffs, buckets, varying } = this.fromReference(m, from);
    const w = this.work;
    w.lists++;
    w.candidates += m;
    w.identities += this.identifier.ids.count;
    w.computed += this.fn;
    w.stored += ref.idx.length;
    for (const d of diffs) w.stored += d.idx.length;
    for (const c of cands) w.nodes += c.tree.size;
    this.countTemplates(templateCounts);
    return { ref, diffs, buckets, varying, templateCounts };
  }

  /** Views and node identities of every candidate; owners and holders of each identity. */
  private identify(cands: readonly CandidateInput[]): CandidateView[] {
    const m = cands.length;
    const idf = this.identifier;
    idf.reset(cands[0].tree.wordNodes.length);
    this.nodeFrom = grown(this.nodeFrom, m + 1);
    const nodeFrom = this.nodeFrom;
    let total = 0;
    for (let c = 0; c < m; c++) {
      nodeFrom[c] = total;
      total += cands[c].tree.size;
    }
    nodeFrom[m] = total;
    const kindIds = this.kindIds;
    for (const k of idf.kinds) kindIds[k] = grown(kindIds[k], total);
    const views: CandidateView[] = new Array(m);
    for (let c = 0; c < m; c++) views[c] = idf.identify(c, cands[c].tree, cands[c].score, cands[c].rank, kindIds, nodeFrom[c], headChildNode);
    const count = idf.ids.count;
    for (const name of ['owner', 'ownerNode', 'ownerGroup', 'holders', 'featFrom', 'featTo', 'stamp'] as const) this[name] = grown(this[name], count);
    this.inRef = grown(this.inRef, count);
    const { owner, ownerNode, ownerGroup, holders } = this;
    owner.fill(-1, 0, count);
    holders.fill(0, 0, count);
    this.inRef.fill(0, 0, count);
    this.stamp.fill(-1, 0, count);
    const G = this.groups.length;
    for (let c = 0; c < m; c++) {
      const isWord = cands[c].tree.isWord;
      const n = cands[c].tree.size;
      const base = nodeFrom[c];
      for (let g = 0; g < G; g++) {
        const own = kindIds[this.groupKinds[g]];
        for (let i = 0; i < n; i++) {
          if (isWord[i]) continue;
          const id = own[base + i];
          holders[id]++;
          if (owner[id] < 0) {
            owner[id] = c;
            ownerNode[id] = i;
            ownerGroup[id] = g;
          }
        }
      }
    }
    return views;
  }

  /** The node features of every identity of the list (each computed once). */
  private nodeFeatures(views: CandidateView[]): void {
    const count = this.identifier.ids.count;
    const sink = this.sink;
    const { owner, ownerNode, ownerGroup, featFrom, featTo } = this;
    this.fn = 0;
    this.nodeReal = false;
    for (let id = 0; id < count; id++) {
      if (owner[id] < 0) continue;
      sink.clear();
      const view = views[owner[id]];
      const node = ownerNode[id];
      for (const { t, index } of this.groups[ownerGroup[id]].templates) {
        sink.template = index;
        t.node!(view, node, sink);
      }
      const n = sink.length;
      const f0 = this.fn;
      if (f0 + n > this.fb.length) {
        this.fb = grown(this.fb, f0 + n);
        this.fv = grown(this.fv, f0 + n);
        this.ft = grown(this.ft, f0 + n);
      }
      // Loops, not set(subarray): these lists are short and subarray views cost an allocation each.
      const lb = sink.buckets;
      const lv = sink.values;
      const lt = sink.templates;
      const { fb, fv, ft } = this;
      for (let k = 0, f = f0; k < n; k++, f++) {
        const v = lv[k];
        fb[f] = lb[k];
        fv[f] = v;
        ft[f] = lt[k];
        if (!this.nodeReal && !Number.isInteger(v)) this.nodeReal = true;
      }
      featFrom[id] = f0;
      featTo[id] = this.fn = f0 + n;
    }
  }

  /** Whole-tree and non-local features of candidate c, into the tree pool. */
  private wholeTree(view: CandidateView, c: number): void {
    this.tFrom[c] = this.tn;
    if (this.context.length === 0 && this.whole.length === 0) return;
    const sink = this.sink;
    sink.clear();
    const t = view.tree;
    if (this.context.length > 0) {
      for (let i = 0; i < t.size; i++) {
        if (t.isWord[i]) continue;
        for (const { t: tpl, index } of this.context) {
          sink.template = index;
          tpl.node!(view, i, sink);
        }
      }
    }
    for (const { t: tpl, index } of this.whole) {
      sink.template = index;
      tpl.tree!(view, sink);
    }
    const n = sink.length;
    if (this.tn + n > this.tb.length) {
      this.tb = grown(this.tb, this.tn + n);
      this.tv = grown(this.tv, this.tn + n);
      this.tt = grown(this.tt, this.tn + n);
    }
    this.tb.set(sink.buckets.subarray(0, n), this.tn);
    this.tv.set(sink.values.subarray(0, n), this.tn);
    this.tt.set(sink.templates.subarray(0, n), this.tn);
    this.tn += n;
  }

  /** Numbers the buckets of the list's features (columns, ascending by bucket); sizes the per-column arrays. */
  private numberColumns(): void {
    const cols = this.columns;
    const { fn, tn } = this;
    cols.reset(fn + tn);
    this.fc = grown(this.fc, fn);
    this.tc = grown(this.tc, tn);
    const { fb, fc, tb, tc } = this;
    for (let k = 0; k < fn; k++) fc[k] = cols.add(fb[k]);
    for (let k = 0; k < tn; k++) tc[k] = cols.add(tb[k]);
    const U = cols.finish();
    const rank = cols.rank;
    for (let k = 0; k < fn; k++) fc[k] = rank[fc[k]];
    for (let k = 0; k < tn; k++) tc[k] = rank[tc[k]];
    this.nCols = U;
    for (const name of ['colR', 'colD', 'colT', 'colValue'] as const) this[name] = grown(this[name], U);
    for (const name of ['colTree', 'colCount', 'colVote', 'colAgree', 'colTemplates', 'variesCol'] as const) this[name] = grown(this[name], U);
    this.colFlags = grown(this.colFlags, U);
    this.touched = grown(this.touched, (U >> 5) + 1);
    this.colD.fill(0, 0, U);
    this.colTree.fill(-1, 0, U);
    this.touched.fill(0, 0, (U >> 5) + 1);
  }

  /** The consensus: identities more than half of the candidates have; their summed node features in colR. */
  private consensus(cands: readonly CandidateInput[]): void {
    const m = cands.length;
    const G = this.groups.length;
    const { holders, inRef, featFrom, featTo, fc, fv, kindIds, nodeFrom } = this;
    const R = this.colR;
    R.fill(0, 0, this.nCols);
    this.consensusIds = grown(this.consensusIds, this.identifier.ids.count);
    const cons = this.consensusIds;
    let nc = 0;
    for (let c = 0; c < m; c++) {
      const isWord = cands[c].tree.isWord;
      const n = cands[c].tree.size;
      const base = nodeFrom[c];
      for (let g = 0; g < G; g++) {
        const own = kindIds[this.groupKinds[g]];
        for (let i = 0; i < n; i++) {
          if (isWord[i]) continue;
          const id = own[base + i];
          if (inRef[id] || holders[id] * 2 <= m) continue;
          inRef[id] = 1;
          cons[nc++] = id;
          for (let e = featFrom[id], e1 = featTo[id]; e < e1; e++) R[fc[e]] += fv[e];
        }
      }
    }
    this.nConsensus = nc;
  }

  /**
   * Each candidate minus the consensus (exact differences of float32 values),
   * as (column, value) lists in dCol/dVal; returns where each candidate's starts.
   */
  private differencesFromConsensus(cands: readonly CandidateInput[]): Int32Array {
    const m = cands.length;
    const from = new Int32Array(m + 1);
    const G = this.groups.length;
    const U = this.nCols;
    const { inRef, stamp, featFrom, featTo, fc, fv, kindIds, nodeFrom, tc, tv, tFrom, colR: R, colD: D, colT: T, colTree, touched } = this;
    // Per column, for the reference: how many candidates touch it, and a Boyer–Moore vote over their values in candidate order.
    const { colCount: count, colVote: votes, colValue: value } = this;
    count.fill(0, 0, U);
    votes.fill(0, 0, U);
    const cons = this.consensusIds;
    const nc = this.nConsensus;
    // Integer node values below 2^24 round to themselves: there the difference is the node sum itself.
    const exact = this.nodeReal;
    let replayed = 0;
    let out = 0;
    for (let c = 0; c < m; c++) {
      from[c] = out;
      if (out + U > this.dCol.length) {
        this.dCol = grown(this.dCol, out + U);
        this.dVal = grown(this.dVal, out + U);
      }
      const dCol = this.dCol;
      const dVal = this.dVal;
      const isWord = cands[c].tree.isWord;
      const n = cands[c].tree.size;
      const base = nodeFrom[c];
      // Node part: + the features of nodes outside the consensus, − those of consensus nodes it lacks.
      for (let g = 0; g < G; g++) {
        const own = kindIds[this.groupKinds[g]];
        for (let i = 0; i < n; i++) {
          if (isWord[i]) continue;
          const id = own[base + i];
          stamp[id] = c;
          if (inRef[id]) continue;
          const e1 = featTo[id];
          replayed += e1 - featFrom[id];
          for (let e = featFrom[id]; e < e1; e++) {
            const col = fc[e];
            D[col] += fv[e];
            touched[col >> 5] |= 1 << (col & 31);
          }
        }
      }
      for (let k = 0; k < nc; k++) {
        const id = cons[k];
        if (stamp[id] === c) continue;
        const e1 = featTo[id];
        replayed += e1 - featFrom[id];
        for (let e = featFrom[id]; e < e1; e++) {
          const col = fc[e];
          D[col] -= fv[e];
          touched[col >> 5] |= 1 << (col & 31);
        }
      }
      // Whole-tree values are summed after the node part, in emission order, as the direct path sums them.
      for (let k = tFrom[c], k1 = tFrom[c + 1]; k < k1; k++) {
        const col = tc[k];
        if (colTree[col] !== c) {
          colTree[col] = c;
          T[col] = R[col] + D[col];
          touched[col >> 5] |= 1 << (col & 31);
        }
        T[col] += tv[k];
      }
      // Read back in column (= bucket) order, clearing as we go.
      const words = (U >> 5) + 1;
      for (let w = 0; w < words; w++) {
        let x = touched[w];
        if (x === 0) continue;
        touched[w] = 0;
        while (x !== 0) {
          const low = x & -x;
          x ^= low;
          const col = (w << 5) | (31 - Math.clz32(low));
          let d: number;
          if (colTree[col] === c) d = fround(T[col]) - fround(R[col]);
          else d = exact ? fround(R[col] + D[col]) - fround(R[col]) : D[col];
          D[col] = 0;
          if (d !== 0) {
            dCol[out] = col;
            dVal[out++] = d;
            count[col]++;
            if (votes[col] === 0) {
              value[col] = d;
              votes[col] = 1;
            } else votes[col] += d === value[col] ? 1 : -1;
          }
        }
      }
    }
    from[m] = out;
    this.work.replayed += replayed;
    this.work.touched += out;
    return from;
  }

  /**
   * The reference — per bucket, the value a strict majority of the
   * candidates share, else the consensus's node value — and each candidate's
   * difference from it. A candidate that does not touch a bucket holds the
   * consensus value there, so only buckets that more than half the
   * candidates touch can get another value.
   */
  private fromReference(m: number, from: Int32Array): { ref: PlacedVector; diffs: PlacedVector[]; buckets: Uint32Array; varying: Uint32Array } {
    const { dCol, dVal, colCount: count, colVote: votes, colValue: value, colAgree: agree, colFlags: flags } = this;
    const U = this.nCols;
    const bucketOf = this.columns.buckets;
    const total = from[m];
    // Columns most candidates touch may hold a strict majority value: the vote's winner
    // (differencesFromConsensus ran the vote), if a count confirms it.
    const HEAVY = 1;
    const UNIFORM = 2;
    let nHeavy = 0;
    for (let col = 0; col < U; col++) {
      if (count[col] * 2 > m && votes[col] > 0) {
        flags[col] = HEAVY;
        agree[col] = 0;
        nHeavy++;
      } else flags[col] = 0;
    }
    let nShift = 0;
    if (nHeavy > 0) {
      for (let e = 0; e < total; e++) {
        const col = dCol[e];
        if (flags[col] !== 0 && dVal[e] === value[col]) agree[col]++;
      }
      this.shiftCol = grown(this.shiftCol, nHeavy);
      this.shiftVal = grown(this.shiftVal, nHeavy);
      for (let col = 0; col < U; col++) {
        if (flags[col] === 0 || agree[col] * 2 <= m) continue;
        this.shiftCol[nShift] = col;
        this.shiftVal[nShift++] = value[col];
        // Every candidate has this value: the column does not vary at all.
        if (agree[col] === m) flags[col] |= UNIFORM;
      }
    }
    const { shiftCol, shiftVal, variesCol } = this;
    let nVaries = 0;
    for (let col = 0; col < U; col++) if (count[col] > 0 && (flags[col] & UNIFORM) === 0) variesCol[nVaries++] = col;
    const varies = new Uint32Array(nVaries);
    for (let k = 0; k < nVaries; k++) varies[k] = bucketOf[variesCol[k]];
    // Differences from the reference: (candidate − consensus) − (reference − consensus), merged per candidate.
    const need = total + m * nShift + U;
    if (need > this.oIdx.length) {
      this.oIdx = grown(this.oIdx, need);
      this.oVal = grown(this.oVal, need);
      this.oPos = grown(this.oPos, need);
    }
    const oIdx = this.oIdx;
    const oVal = this.oVal;
    // Columns first (as positions in all the list's columns); renumbered below to stored buckets only.
    const oPos = this.oPos;
    let out = 0;
    const starts = new Int32Array(m + 1);
    for (let c = 0; c < m; c++) {
      starts[c] = out;
      let i = from[c];
      const iEnd = from[c + 1];
      if (nShift === 0) {
        for (; i < iEnd; i++) {
          const col = dCol[i];
          oIdx[out] = bucketOf[col];
          oPos[out] = col;
          oVal[out++] = dVal[i];
        }
        continue;
      }
      let j = 0;
      while (i < iEnd || j < nShift) {
        let col: number;
        let v: number;
        if (j >= nShift || (i < iEnd && dCol[i] < shiftCol[j])) {
          col = dCol[i];
          v = dVal[i++];
        } else if (i >= iEnd || shiftCol[j] < dCol[i]) {
          col = shiftCol[j];
          v = -shiftVal[j++];
        } else {
          col = dCol[i];
          v = dVal[i++] - shiftVal[j++];
        }
        if (v !== 0) {
          oIdx[out] = bucketOf[col];
          oPos[out] = col;
          oVal[out++] = v;
        }
      }
    }
    starts[m] = out;
    // The stored reference: the consensus's values, shifted, where the list varies (or, keeping
    // uniform features, wherever that is not zero).
    const refFrom = out;
    const R = this.colR;
    const n = this.dropUniform ? nVaries : U;
    for (let k = 0, j = 0; k < n; k++) {
      const col = this.dropUniform ? variesCol[k] : k;
      while (j < nShift && shiftCol[j] < col) j++;
      const r = fround(R[col]);
      const v = j < nShift && shiftCol[j] === col ? r + shiftVal[j] : r;
      if (v !== 0) {
        oIdx[out] = bucketOf[col];
        oPos[out] = col;
        oVal[out++] = v;
      }
    }
    // The stored buckets: the columns some entry uses, numbered again in ascending order.
    const posOf = this.posOfCol = grown(this.posOfCol, U);
    posOf.fill(-1, 0, U);
    for (let e = 0; e < out; e++) posOf[oPos[e]] = 0;
    let nStored = 0;
    for (let col = 0; col < U; col++) if (posOf[col] === 0) posOf[col] = nStored++;
    const buckets = new Uint32Array(nStored);
    for (let col = 0; col < U; col++) if (posOf[col] >= 0) buckets[posOf[col]] = bucketOf[col];
    for (let e = 0; e < out; e++) oPos[e] = posOf[oPos[e]];
    const ref = { idx: oIdx.subarray(refFrom, out), val: oVal.subarray(refFrom, out), pos: oPos.subarray(refFrom, out) };
    const diffs: PlacedVector[] = new Array(m);
    for (let c = 0; c < m; c++) diffs[c] = { idx: oIdx.subarray(starts[c], starts[c + 1]), val: oVal.subarray(starts[c], starts[c + 1]), pos: oPos.subarray(starts[c], starts[c + 1]) };
    for (let col = 0; col < U; col++) flags[col] = count[col] > 0 && (flags[col] & UNIFORM) === 0 ? 1 : 0;
    return { ref, diffs, buckets, varying: varies };
  }

  /** Distinct (template, bucket) pairs fired in the list, and how many of them vary (colFlags, set by fromReference). */
  private countTemplates(counts: Uint32Array): void {
    if (this.nTemplates === 0) return;
    const U = this.nCols;
    const mask = this.colTemplates;
    const varies = this.colFlags;
    mask.fill(0, 0, U);
    // Per column, the set of templates that fired there, as bits (at most 31 templates).
    const { fc, ft, tc, tt } = this;
    for (let k = 0, n = this.fn; k < n; k++) mask[fc[k]] |= 1 << ft[k];
    for (let k = 0, n = this.tn; k < n; k++) mask[tc[k]] |= 1 << tt[k];
    for (let col = 0; col < U; col++) {
      const v = varies[col];
      for (let bits = mask[col], t = 0; bits !== 0; t++, bits >>>= 1) {
        if ((bits & 1) === 0) continue;
        counts[2 * t]++;
        counts[2 * t + 1] += v;
      }
    }
  }
}
