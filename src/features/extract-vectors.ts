/**
 * The extract + hash stages for one sentence, as differences: every
 * candidate's vector is stored as its difference from a reference candidate
 * (the first one given: the best-ranked candidate kept), computed from the
 * subtrees where the two differ.
 *
 * Why: the candidates of an n-best list share most of their subtrees. A node
 * feature depends only on its node's subtree and span (templates declare
 * `local: false` otherwise), so
 *   - subtrees are identified exactly across the list (SubtreeIds);
 *   - the reference's features are computed once, node by node;
 *   - a candidate's difference is the features of the subtrees it has and
 *     the reference lacks, minus those the reference has and it lacks, plus
 *     the difference of the whole-tree (and non-local) features;
 *   - a subtree's features are computed once per list, and only when some
 *     candidate differs there: nodes shared by the whole list cost only
 *     their identity.
 * A bucket that no difference touches has the same value in every candidate,
 * so "drop features that are the same in every candidate" is simply "store
 * the reference only at buckets that some difference touches".
 *
 * Values. A feature value is the float32 rounding of the float64 sum of what
 * was emitted at its bucket (node features first, in tree order, then
 * whole-tree features), exactly as the direct path (direct-vectors.ts) sums
 * it. A difference is taken between those float32 values, in float64, where
 * it is exact for any two float32 values within 2^29 of each other in
 * magnitude: so reference + difference gives back the candidate's float32
 * value exactly (integer-valued features always; real values unless a bucket
 * sums several real-valued features, where summation order may move the last
 * bit).
 *
 * Hot paths are typed arrays reused across sentences; the vectors returned
 * are views into buffers that the next call overwrites.
 */
import { FeatureSink } from '../core/feature-sink.js';
import { NameBook } from '../core/name-book.js';
import { SparseAccumulator } from '../core/sparse-accumulator.js';
import type { SparseVector } from '../core/sparse-vector.js';
import type { Tree } from '../core/tree.js';
import { candidateView } from './candidate-view.js';
import { SubtreeIds } from './subtree-ids.js';
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
  /** The reference's values at the stored buckets; null for a list without candidates. */
  ref: SparseVector | null;
  /** Per candidate, its vector minus the reference's (empty for the reference itself). */
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
function grown<T extends Int32Array | Float64Array | Uint8Array | Uint32Array>(a: T, n: number, fill?: number): T {
  if (a.length >= n) return a;
  let size = a.length * 2;
  while (size < n) size *= 2;
  const b = new (a.constructor as new (n: number) => T)(size);
  if (fill !== undefined) b.fill(fill as never);
  b.set(a as never);
  return b;
}

export class VectorExtractor {
  readonly sink: FeatureSink;
  readonly names: NameBook | null;
  private readonly local: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly context: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly whole: { t: ConfiguredTemplate; index: number }[] = [];
  private readonly dropUniform: boolean;
  private readonly nTemplates: number;
  private readonly ids = new SubtreeIds();

  // Per identity (reset per sentence).
  private owner = new Int32Array(256);
  private ownerNode = new Int32Array(256);
  private featFrom = new Int32Array(256);
  private featTo = new Int32Array(256);
  private inRef = new Uint8Array(256);
  private stamp = new Int32Array(256);
  // Node features of computed identities: one pool per sentence.
  private fb = new Int32Array(4096);
  private fv = new Float64Array(4096);
  private ft = new Uint8Array(4096);
  private fn = 0;
  // Whole-tree (and non-local) features of each candidate: one pool per sentence.
  private tb = new Int32Array(1024);
  private tv = new Float64Array(1024);
  private tt = new Uint8Array(1024);
  private tn = 0;
  private tFrom = new Int32Array(64);
  // Output buffers.
  private outIdx = new Uint32Array(4096);
  private outVal = new Float64Array(4096);

  private readonly nRef = new SparseAccumulator();
  private readonly tRef = new SparseAccumulator();
  private readonly dN = new SparseAccumulator();
  private readonly tCand = new SparseAccumulator();
  private readonly vary = new SparseAccumulator();
  private readonly fired = new SparseAccumulator();

  constructor(readonly options: ExtractorOptions) {
    if (options.templates.length > 31) throw new RangeError(`expected at most 31 templates, got ${options.templates.length}`);
    this.names = options.names ? new NameBook(options.names) : null;
    this.sink = new FeatureSink(options.bits, options.seed, this.names);
    options.templates.forEach((t, index) => {
      if (t.node && t.local !== false) this.local.push({ t, index });
      if (t.node && t.local === false) this.context.push({ t, index });
      if (t.tree) this.whole.push({ t, index });
    });
    this.dropUniform = options.dropUniform ?? true;
    this.nTemplates = options.templates.length;
  }

  /** The vectors of one list; the first candidate is the reference. */
  sentence(cands: readonly CandidateInput[]): SentenceVectors {
    const m = cands.length;
    const templateCounts = new Uint32Array(2 * this.nTemplates);
    if (m === 0) return { ref: null, diffs: [], varying: new Uint32Array(0), templateCounts };
    const ids = this.ids;
    ids.reset(cands[0].tree.wordNodes.length);
    const views: CandidateView[] = new Array(m);
    const nodeIds: Int32Array[] = new Array(m);
    for (let c = 0; c < m; c++) {
      const t = cands[c].tree;
      views[c] = candidateView(t, cands[c].score, cands[c].rank);
      nodeIds[c] = ids.identify(t, new Int32Array(t.size));
    }
    this.resetIdentities(ids.count);
    for (let c = 0; c < m; c++) {
      const t = cands[c].tree;
      const own = nodeIds[c];
      for (let i = 0; i < t.size; i++) {
        const id = own[i];
        if (!t.isWord[i] && this.owner[id] < 0) {
          this.owner[id] = c;
          this.ownerNode[id] = i;
        }
      }
    }
    this.fn = 0;
    this.tn = 0;
    this.tFrom = grown(this.tFrom, m + 1);
    for (let c = 0; c < m; c++) this.wholeTree(views[c], c);
    this.tFrom[m] = this.tn;

    // The reference: all its node features, and its whole-tree features.
    const nRef = this.nRef;
    const tRef = this.tRef;
    nRef.clear();
    tRef.clear();
    const refTree = cands[0].tree;
    const refIds = nodeIds[0];
    for (let i = 0; i < refTree.size; i++) {
      if (refTree.isWord[i]) continue;
      const id = refIds[i];
      this.inRef[id] = 1;
      this.ensure(id, views);
      nRef.addAll(this.fb, this.fv, this.featFrom[id], this.featTo[id]);
    }
    // Whole-tree values are summed after the node part, in emission order, as the direct path sums them.
    for (let k = this.tFrom[0]; k < this.tFrom[1]; k++) {
      const b = this.tb[k];
      if (!tRef.has(b)) tRef.add(b, nRef.get(b));
      tRef.add(b, this.tv[k]);
    }

    // Differences.
    const vary = this.vary;
    vary.clear();
    const from = new Int32Array(m + 1);
    let out = 0;
    const dN = this.dN;
    const tCand = this.tCand;
    for (let c = 1; c < m; c++) {
      from[c] = out;
      const t = cands[c].tree;
      const own = nodeIds[c];
      dN.clear();
      for (let i = 0; i < t.size; i++) {
        if (t.isWord[i]) continue;
        const id = own[i];
        this.stamp[id] = c;
        if (this.inRef[id]) continue;
        this.ensure(id, views);
        dN.addAll(this.fb, this.fv, this.featFrom[id], this.featTo[id], 1);
      }
      for (let i = 0; i < refTree.size; i++) {
        if (refTree.isWord[i]) continue;
        const id = refIds[i];
        if (this.stamp[id] !== c) dN.addAll(this.fb, this.fv, this.featFrom[id], this.featTo[id], -1);
      }
      tCand.clear();
      for (let k = this.tFrom[c]; k < this.tFrom[c + 1]; k++) {
        const b = this.tb[k];
        if (!tCand.has(b)) tCand.add(b, nRef.get(b) + dN.get(b));
        tCand.add(b, this.tv[k]);
      }
      for (let k = this.tFrom[c]; k < this.tFrom[c + 1]; k++) dN.touch(this.tb[k]);
      for (let k = this.tFrom[0]; k < this.tFrom[1]; k++) dN.touch(this.tb[k]);
      const order = dN.sortedBuckets();
      if (out + order.length > this.outIdx.length) this.growOut(out + order.length);
      for (let k = 0; k < order.length; k++) {
        const b = order[k];
        const vc = tCand.has(b) ? tCand.get(b) : nRef.get(b) + dN.get(b);
        const d = fround(vc) - fround(tRef.has(b) ? tRef.get(b) : nRef.get(b));
        if (d !== 0) {
          this.outIdx[out] = b;
          this.outVal[out++] = d;
          vary.add(b, 1);
        }
      }
    }
    from[m] = out;

    const varying = vary.sortedBuckets().slice();
    // The stored reference.
    const refBuckets = this.dropUniform ? varying : this.refSupport();
    if (out + refBuckets.length > this.outIdx.length) this.growOut(out + refBuckets.length);
    const refFrom = out;
    for (let k = 0; k < refBuckets.length; k++) {
      const b = refBuckets[k];
      const v = fround(tRef.has(b) ? tRef.get(b) : nRef.get(b));
      if (v !== 0) {
        this.outIdx[out] = b;
        this.outVal[out++] = v;
      }
    }
    const ref = { idx: this.outIdx.subarray(refFrom, out), val: this.outVal.subarray(refFrom, out) };
    // The reference's own difference is empty.
    const diffs: SparseVector[] = [{ idx: this.outIdx.subarray(0, 0), val: this.outVal.subarray(0, 0) }];
    for (let c = 1; c < m; c++) diffs.push({ idx: this.outIdx.subarray(from[c], from[c + 1]), val: this.outVal.subarray(from[c], from[c + 1]) });
    this.countTemplates(templateCounts);
    return { ref, diffs, varying, templateCounts };
  }

  /** Buckets where the reference is non-zero (node or whole-tree part), ascending. */
  private refSupport(): Uint32Array {
    const acc = this.fired;
    acc.clear();
    for (const b of this.nRef.sortedBuckets()) acc.touch(b);
    for (const b of this.tRef.sortedBuckets()) acc.touch(b);
    const s = acc.sortedBuckets().slice();
    acc.clear();
    return s;
  }

  /** Distinct (template, bucket) pairs fired in the list, and how many of them vary. */
  private countTemplates(counts: Uint32Array): void {
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
      const varies = this.vary.get(b) !== 0;
      for (let t = 0; bits !== 0; t++, bits >>>= 1) {
        if ((bits & 1) === 0) continue;
        counts[2 * t]++;
        if (varies) counts[2 * t + 1]++;
      }
    }
    seen.clear();
  }

  private resetIdentities(count: number): void {
    this.owner = grown(this.owner, count);
    this.ownerNode = grown(this.ownerNode, count);
    this.featFrom = grown(this.featFrom, count);
    this.featTo = grown(this.featTo, count);
    this.inRef = grown(this.inRef, count);
    this.stamp = grown(this.stamp, count);
    this.owner.fill(-1, 0, count);
    this.featFrom.fill(-1, 0, count);
    this.inRef.fill(0, 0, count);
    this.stamp.fill(0, 0, count);
  }

  /** Computes and keeps the node features of identity `id` (once per list). */
  private ensure(id: number, views: CandidateView[]): void {
    if (this.featFrom[id] >= 0) return;
    const sink = this.sink;
    sink.clear();
    const view = views[this.owner[id]];
    const node = this.ownerNode[id];
    for (const { t, index } of this.local) {
      sink.template = index;
      t.node!(view, node, sink);
    }
    const n = sink.length;
    if (this.fn + n > this.fb.length) {
      this.fb = grown(this.fb, this.fn + n);
      this.fv = grown(this.fv, this.fn + n);
      this.ft = grown(this.ft, this.fn + n);
    }
    this.fb.set(sink.buckets.subarray(0, n), this.fn);
    this.fv.set(sink.values.subarray(0, n), this.fn);
    this.ft.set(sink.templates.subarray(0, n), this.fn);
    this.featFrom[id] = this.fn;
    this.fn += n;
    this.featTo[id] = this.fn;
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

  private growOut(n: number): void {
    this.outIdx = grown(this.outIdx, n);
    this.outVal = grown(this.outVal, n);
  }
}
