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
 * views into buffers that the next call overwrites.
 */
import { FeatureSink } from '../core/feature-sink.js';
import { NameBook } from '../core/name-book.js';
import { SparseAccumulator } from '../core/sparse-accumulator.js';
import type { SparseVector } from '../core/sparse-vector.js';
import type { Tree } from '../core/tree.js';
import { ListMerger, sortAndSum, UnionCounter } from './merge-lists.js';
import { headChildNode } from '../core/find-heads.js';
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

export interface SentenceVectors {
  /** The reference vector at the stored buckets; null for a list without candidates. */
  ref: SparseVector | null;
  /** Per candidate, its vector minus the reference. */
  diffs: SparseVector[];
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
  private readonly wanted: boolean[] = new Array(KINDS).fill(false);
  private readonly context: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly whole: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly dropUniform: boolean;
  private readonly nTemplates: number;
  private readonly identifier: NodeIdentifier;

  // Node identities of every candidate, per group: nodeIds[g][c].
  private nodeIds: Int32Array[][] = [];
  private kindBuffers: Int32Array[] = [];
  // Per identity (reset per list).
  private owner = new Int32Array(1024);
  private ownerNode = new Int32Array(1024);
  private ownerGroup = new Int32Array(1024);
  private featFrom = new Int32Array(1024);
  private featTo = new Int32Array(1024);
  private inRef = new Uint8Array(1024);
  private stamp = new Int32Array(1024);
  private consensusIds: number[] = [];
  // Node features of computed identities: one pool per list.
  private fb = new Int32Array(8192);
  private fv = new Float64Array(8192);
  private ft = new Uint8Array(8192);
  private fn = 0;
  // The same, per identity sorted by bucket with equal buckets summed (what differences merge).
  private sb = new Int32Array(8192);
  private sv = new Float64Array(8192);
  private sn = 0;
  private sFrom = new Int32Array(1024);
  private sTo = new Int32Array(1024);
  /** True when some node feature of this list has a value that is not an integer. */
  private nodeReal = false;
  private readonly merger = new ListMerger();
  // Whole-tree (and non-local) features of each candidate: one pool per list.
  private tb = new Int32Array(1024);
  private tv = new Float64Array(1024);
  private tt = new Uint8Array(1024);
  private tn = 0;
  private tFrom = new Int32Array(64);
  // Differences from the first candidate, then from the reference.
  private dIdx = new Uint32Array(8192);
  private dVal = new Float64Array(8192);
  private oIdx = new Uint32Array(8192);
  private oVal = new Float64Array(8192);

  /** Work done so far (for benchmarks): what the per-candidate cost follows. */
  readonly work = { lists: 0, candidates: 0, nodes: 0, identities: 0, computed: 0, replayed: 0, touched: 0, stored: 0 };

  private readonly nRef = new SparseAccumulator();
  private readonly tCand = new SparseAccumulator();
  private readonly union = new UnionCounter();
  private vBuf = new Uint32Array(1024);
  private shiftIdx = new Uint32Array(64);
  private shiftVal = new Float64Array(64);
  private readonly fired = new SparseAccumulator();

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
      }
      g.templates.push({ t, index });
    });
    this.identifier = new NodeIdentifier(this.wanted, maxDepth);
    this.dropUniform = options.dropUniform ?? true;
    this.nTemplates = options.templates.length;
  }

  /** The vectors of one list; the first candidate is the best-ranked. */
  sentence(cands: readonly CandidateInput[]): SentenceVectors {
    const m = cands.length;
    const templateCounts = new Uint32Array(2 * this.nTemplates);
    if (m === 0) return { ref: null, diffs: [], varying: new Uint32Array(0), templateCounts };
    const views = this.identify(cands);
    this.fn = 0;
    this.sn = 0;
    this.nodeReal = false;
    this.tn = 0;
    this.tFrom = grown(this.tFrom, m + 1);
    for (let c = 0; c < m; c++) this.wholeTree(views[c], c);
    this.tFrom[m] = this.tn;
    this.consensus(cands, views);
    const from = this.differencesFromConsensus(cands, views);
    const { ref, diffs, varying } = this.fromReference(m, from);
    const w = this.work;
    w.lists++;
    w.candidates += m;
    w.identities += this.identifier.ids.count;
    w.computed += this.fn;
    w.stored += ref.idx.length;
    for (const d of diffs) w.stored += d.idx.length;
    for (const c of cands) w.nodes += c.tree.size;
    this.countTemplates(templateCounts, varying);
    return { ref, diffs, varying, templateCounts };
  }

  /** Views and node identities of every candidate; owners of each identity. */
  private identify(cands: readonly CandidateInput[]): CandidateView[] {
    const m = cands.length;
    const idf = this.identifier;
    const ids = idf.ids;
    idf.reset(cands[0].tree.wordNodes.length);
    const views: CandidateView[] = new Array(m);
    let maxSize = 0;
    for (const c of cands) maxSize = Math.max(maxSize, c.tree.size);
    while (this.kindBuffers.length < KINDS) this.kindBuffers.push(new Int32Array(256));
    for (let k = 0; k < KINDS; k++) this.kindBuffers[k] = grown(this.kindBuffers[k], maxSize);
    const G = this.groups.length;
    while (this.nodeIds.length < G) this.nodeIds.push([]);
    for (let c = 0; c < m; c++) {
      const t = cands[c].tree;
      views[c] = idf.identify(t, cands[c].score, cands[c].rank, this.kindBuffers, headChildNode);
      for (let g = 0; g < G; g++) {
        const list = this.nodeIds[g];
        if (list.length <= c || list[c].length < t.size) list[c] = new Int32Array(Math.max(t.size, 64));
        list[c].set(this.kindBuffers[this.groups[g].kind].subarray(0, t.size));
      }
    }
    const count = ids.count;
    for (const name of ['owner', 'ownerNode', 'ownerGroup', 'featFrom', 'featTo', 'sFrom', 'sTo', 'stamp'] as const) this[name] = grown(this[name], count);
    this.inRef = grown(this.inRef, count);
    this.owner.fill(-1, 0, count);
    this.featFrom.fill(-1, 0, count);
    this.inRef.fill(0, 0, count);
    this.stamp.fill(0, 0, count);
    for (let c = 0; c < m; c++) {
      const t = cands[c].tree;
      for (let g = 0; g < G; g++) {
        const own = this.nodeIds[g][c];
        for (let i = 0; i < t.size; i++) {
          if (t.isWord[i]) continue;
          const id = own[i];
          if (this.owner[id] < 0) {
            this.owner[id] = c;
            this.ownerNode[id] = i;
            this.ownerGroup[id] = g;
          }
        }
      }
    }
    return views;
  }

  /** The consensus: identities more than half of the candidates have; their summed node features in nRef. */
  private consensus(cands: readonly CandidateInput[], views: CandidateView[]): void {
    const m = cands.length;
    const count = this.stamp; // reused as a counter here, reset below
    const G = this.groups.length;
    this.consensusIds.length = 0;
    for (let c = 0; c < m; c++) {
      const t = cands[c].tree;
      for (let g = 0; g < G; g++) {
        const own = this.nodeIds[g][c];
        for (let i = 0; i < t.size; i++) if (!t.isWord[i]) count[own[i]]++;
      }
    }
    const nRef = this.nRef;
    nRef.clear();
    for (let c = 0; c < m; c++) {
      const t = cands[c].tree;
      for (let g = 0; g < G; g++) {
        const own = this.nodeIds[g][c];
        for (let i = 0; i < t.size; i++) {
          if (t.isWord[i]) continue;
          const id = own[i];
          if (this.inRef[id] || count[id] * 2 <= m) continue;
          this.inRef[id] = 1;
          this.consensusIds.push(id);
          this.ensure(id, views);
          nRef.addAll(this.sb, this.sv, this.sFrom[id], this.sTo[id]);
        }
      }
    }
    this.stamp.fill(-1, 0, this.identifier.ids.count);
  }

  /**
   * Each candidate minus the consensus's node part (exact differences of
   * float32 values), into dIdx/dVal; returns the ranges.
   */
  private differencesFromConsensus(cands: readonly CandidateInput[], views: CandidateView[]): Int32Array {
    const m = cands.length;
    const from = new Int32Array(m + 1);
    const { nRef, tCand, merger } = this;
    const consensus = this.consensusIds;
    let out = 0;
    for (let c = 0; c < m; c++) {
      from[c] = out;
      const t = cands[c].tree;
      merger.reset();
      for (let g = 0; g < this.groups.length; g++) {
        const own = this.nodeIds[g][c];
        for (let i = 0; i < t.size; i++) {
          if (t.isWord[i]) continue;
          const id = own[i];
          this.stamp[id] = c;
          if (this.inRef[id]) continue;
          this.ensure(id, views);
          merger.add(this.sFrom[id], this.sTo[id], 1);
          this.work.replayed += this.sTo[id] - this.sFrom[id];
        }
      }
      for (let k = 0; k < consensus.length; k++) {
        const id = consensus[k];
        if (this.stamp[id] !== c) {
          merger.add(this.sFrom[id], this.sTo[id], -1);
          this.work.replayed += this.sTo[id] - this.sFrom[id];
        }
      }
      const nd = merger.merge(this.sb, this.sv);
      const dIdx = merger.outIdx;
      const dVal = merger.outVal;
      this.work.touched += nd;
      // Whole-tree values are summed after the node part, in emission order, as the direct path sums them.
      tCand.clear();
      const t0 = this.tFrom[c];
      const t1 = this.tFrom[c + 1];
      for (let k = t0; k < t1; k++) {
        const b = this.tb[k];
        if (!tCand.has(b)) tCand.add(b, nRef.get(b) + valueAt(dIdx, dVal, nd, b));
        tCand.add(b, this.tv[k]);
      }
      const tb = tCand.sortedBuckets();
      const need = out + nd + tb.length;
      if (need > this.dIdx.length) {
        this.dIdx = grown(this.dIdx, need);
        this.dVal = grown(this.dVal, need);
      }
      // Integer node values below 2^24 round to themselves: there the difference is what the merge gave.
      const exact = this.nodeReal;
      let i = 0;
      let j = 0;
      while (i < nd || j < tb.length) {
        let b: number;
        let d: number;
        if (j >= tb.length || (i < nd && dIdx[i] < tb[j])) {
          b = dIdx[i];
          d = exact ? fround(nRef.get(b) + dVal[i]) - fround(nRef.get(b)) : dVal[i];
          i++;
        } else {
          b = tb[j++];
          if (i < nd && dIdx[i] === b) i++;
          d = fround(tCand.get(b)) - fround(nRef.get(b));
        }
        if (d !== 0) {
          this.dIdx[out] = b;
          this.dVal[out++] = d;
        }
      }
    }
    from[m] = out;
    return from;
  }

  /**
   * The reference — per bucket, the value a strict majority of the
   * candidates share, else the consensus's node value — and each candidate's
   * difference from it. A candidate that does not touch a bucket holds the
   * consensus value there, so only buckets that more than half the
   * candidates touch can get another value.
   */
  private fromReference(m: number, from: Int32Array): { ref: SparseVector; diffs: SparseVector[]; varying: Uint32Array } {
    const { dIdx, dVal } = this;
    const total = from[m];
    // The union of the lists, with how many candidates touch each bucket.
    const nu = this.union.count(dIdx, from, m);
    const ub = this.union.buckets;
    const uc = this.union.counts;
    let shiftIdx = this.shiftIdx;
    let shiftVal = this.shiftVal;
    let nShift = 0;
    // Buckets most candidates touch: a value there may hold a strict majority (Boyer–Moore vote, then a count).
    const heavy: number[] = [];
    for (let k = 0; k < nu; k++) if (uc[k] * 2 > m) heavy.push(ub[k]);
    let uniform: number[] = [];
    if (heavy.length > 0) {
      const H = heavy.length;
      const cand = new Float64Array(H);
      const votes = new Int32Array(H);
      const agree = new Int32Array(H);
      for (let pass = 0; pass < 2; pass++) {
        for (let c = 0; c < m; c++) {
          // Walk the candidate's sorted list against the sorted heavy buckets.
          let i = from[c];
          const e = from[c + 1];
          for (let h = 0; h < H && i < e; h++) {
            const b = heavy[h];
            while (i < e && dIdx[i] < b) i++;
            if (i >= e || dIdx[i] !== b) continue;
            const v = dVal[i];
            if (pass === 0) {
              if (votes[h] === 0) {
                cand[h] = v;
                votes[h] = 1;
              } else votes[h] += v === cand[h] ? 1 : -1;
            } else if (votes[h] > 0 && v === cand[h]) agree[h]++;
          }
        }
      }
      for (let h = 0; h < H; h++) {
        if (agree[h] * 2 <= m) continue;
        if (nShift === shiftIdx.length) {
          shiftIdx = grown(shiftIdx, nShift + 1);
          shiftVal = grown(shiftVal, nShift + 1);
        }
        shiftIdx[nShift] = heavy[h];
        shiftVal[nShift++] = cand[h];
        // Every candidate has this value: the bucket does not vary at all.
        if (agree[h] === m) uniform.push(heavy[h]);
      }
    }
    if (this.vBuf.length < nu) this.vBuf = new Uint32Array(nu * 2);
    let nVaries = 0;
    for (let k = 0, u = 0; k < nu; k++) {
      if (u < uniform.length && ub[k] === uniform[u]) {
        u++;
        continue;
      }
      this.vBuf[nVaries++] = ub[k];
    }
    uniform = [];
    this.shiftIdx = shiftIdx;
    this.shiftVal = shiftVal;
    const varies = this.vBuf.slice(0, nVaries);
    // Differences from the reference: (candidate − consensus) − (reference − consensus), merged per candidate.
    const need = total + m * nShift + nVaries + nShift + this.nRef.size;
    if (need > this.oIdx.length) {
      this.oIdx = grown(this.oIdx, need);
      this.oVal = grown(this.oVal, need);
    }
    const oIdx = this.oIdx;
    const oVal = this.oVal;
    let out = 0;
    const starts = new Int32Array(m + 1);
    for (let c = 0; c < m; c++) {
      starts[c] = out;
      let i = from[c];
      const iEnd = from[c + 1];
      let j = 0;
      if (nShift === 0) {
        for (; i < iEnd; i++) {
          oIdx[out] = dIdx[i];
          oVal[out++] = dVal[i];
        }
        continue;
      }
      while (i < iEnd || j < nShift) {
        let b: number;
        let v: number;
        if (j >= nShift || (i < iEnd && dIdx[i] < shiftIdx[j])) {
          b = dIdx[i];
          v = dVal[i++];
        } else if (i >= iEnd || shiftIdx[j] < dIdx[i]) {
          b = shiftIdx[j];
          v = -shiftVal[j++];
        } else {
          b = dIdx[i];
          v = dVal[i++] - shiftVal[j++];
        }
        if (v !== 0) {
          oIdx[out] = b;
          oVal[out++] = v;
        }
      }
    }
    starts[m] = out;
    // The stored reference: the consensus's values, shifted.
    const refFrom = out;
    const buckets = this.dropUniform ? varies : this.refSupport(varies, shiftIdx.subarray(0, nShift));
    let j = 0;
    for (let k = 0; k < buckets.length; k++) {
      const b = buckets[k];
      while (j < nShift && shiftIdx[j] < b) j++;
      const r = fround(this.nRef.get(b));
      const v = j < nShift && shiftIdx[j] === b ? r + shiftVal[j] : r;
      if (v !== 0) {
        oIdx[out] = b;
        oVal[out++] = v;
      }
    }
    const ref = { idx: oIdx.subarray(refFrom, out), val: oVal.subarray(refFrom, out) };
    const diffs: SparseVector[] = new Array(m);
    for (let c = 0; c < m; c++) diffs[c] = { idx: oIdx.subarray(starts[c], starts[c + 1]), val: oVal.subarray(starts[c], starts[c + 1]) };
    return { ref, diffs, varying: varies };
  }

  /** Buckets where the consensus is non-zero, the reference shifts it, or the list varies, ascending. */
  private refSupport(varying: Uint32Array, shifted: Uint32Array): Uint32Array {
    const acc = this.fired;
    acc.clear();
    for (const b of this.nRef.sortedBuckets()) acc.touch(b);
    for (const b of shifted) acc.touch(b);
    for (const b of varying) acc.touch(b);
    const s = acc.sortedBuckets().slice();
    acc.clear();
    return s;
  }

  /** Distinct (template, bucket) pairs fired in the list, and how many of them vary. */
  private countTemplates(counts: Uint32Array, varying: Uint32Array): void {
    if (this.nTemplates === 0) return;
    const seen = this.fired;
    seen.clear();
    // Key = bucket, value = the set of templates that fired there, as bits (at most 31 templates).
    const visit = (b: Int32Array, t: Uint8Array, n: number) => {
      for (let k = 0; k < n; k++) {
        const bit = 1 << t[k];
        if ((seen.get(b[k]) & bit) === 0) seen.add(b[k], bit);
      }
    };
    visit(this.fb, this.ft, this.fn);
    visit(this.tb, this.tt, this.tn);
    const buckets = seen.sortedBuckets();
    for (let k = 0; k < buckets.length; k++) {
      const b = buckets[k];
      let bits = seen.get(b);
      const varies = contains(varying, b);
      for (let t = 0; bits !== 0; t++, bits >>>= 1) {
        if ((bits & 1) === 0) continue;
        counts[2 * t]++;
        if (varies) counts[2 * t + 1]++;
      }
    }
    seen.clear();
  }

  /** Computes and keeps the node features of identity `id` (once per list). */
  private ensure(id: number, views: CandidateView[]): void {
    if (this.featFrom[id] >= 0) return;
    const sink = this.sink;
    sink.clear();
    const view = views[this.owner[id]];
    const node = this.ownerNode[id];
    for (const { t, index } of this.groups[this.ownerGroup[id]].templates) {
      sink.template = index;
      t.node!(view, node, sink);
    }
    const n = sink.length;
    if (this.fn + n > this.fb.length) {
      this.fb = grown(this.fb, this.fn + n);
      this.fv = grown(this.fv, this.fn + n);
      this.ft = grown(this.ft, this.fn + n);
    }
    if (this.sn + n > this.sb.length) {
      this.sb = grown(this.sb, this.sn + n);
      this.sv = grown(this.sv, this.sn + n);
    }
    // Loops, not set(subarray): these lists are short and subarray views cost an allocation each.
    const lb = sink.buckets;
    const lv = sink.values;
    const lt = sink.templates;
    const { fb, fv, ft, sb, sv } = this;
    for (let k = 0, f = this.fn, g = this.sn; k < n; k++, f++, g++) {
      const v = lv[k];
      fb[f] = sb[g] = lb[k];
      fv[f] = sv[g] = v;
      ft[f] = lt[k];
      if (!this.nodeReal && !Number.isInteger(v)) this.nodeReal = true;
    }
    this.featFrom[id] = this.fn;
    this.fn += n;
    this.featTo[id] = this.fn;
    this.sFrom[id] = this.sn;
    this.sn = sortAndSum(sb, sv, this.sn, this.sn + n);
    this.sTo[id] = this.sn;
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
}

/** The value at bucket b of a sorted list (0 when absent): binary search. */
function valueAt(idx: Uint32Array, val: Float64Array, n: number, b: number): number {
  let lo = 0;
  let hi = n - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const x = idx[mid];
    if (x === b) return val[mid];
    if (x < b) lo = mid + 1;
    else hi = mid - 1;
  }
  return 0;
}

/** True when the ascending array holds b (binary search). */
function contains(sorted: Uint32Array, b: number): boolean {
  let lo = 0;
  let hi = sorted.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const x = sorted[mid];
    if (x === b) return true;
    if (x < b) lo = mid + 1;
    else hi = mid - 1;
  }
  return false;
}
