/**
 * The extract + hash stages for one sentence: every candidate tree becomes
 * one sparse vector over the whole tree (all configured templates, hashed),
 * then pseudo-constant features are pruned across the candidates.
 *
 * Candidates of one sentence share most of their subtrees. Node features
 * depend only on the node's subtree and where it starts (templates say so,
 * or declare `local: false`), so within a sentence they are computed once per
 * distinct (subtree, start) and replayed as hashed (bucket, value) pairs for
 * every other candidate holding the same subtree. Subtrees are identified
 * exactly (hash-consing on label, start and child identities), never by a
 * hash that could collide.
 */
import { FeatureSink, NameBook, VectorArena, type SparseVector } from '../core/feature-sink.js';
import type { Tree } from '../core/tree.js';
import { candidateView } from './candidate-view.js';
import { pruneSentence } from './prune-features.js';
import type { CandidateView, ConfiguredTemplate } from './template.js';

export interface ExtractorOptions {
  templates: readonly ConfiguredTemplate[];
  bits: number;
  seed: number;
  /** Drop features constant across a sentence's candidates (default true). */
  pseudoConstant?: boolean;
  /** Keep up to this many canonical keys per bucket (0: none). */
  names?: number;
}

export interface CandidateInput {
  tree: Tree;
  score: number;
  rank: number;
}

export class FeatureExtractor {
  readonly sink: FeatureSink;
  readonly names: NameBook | null;
  private varyingCounts: Uint32Array | null = null;
  private readonly nodeTemplates: ConfiguredTemplate[];
  private readonly localTemplates: ConfiguredTemplate[];
  private readonly contextTemplates: ConfiguredTemplate[];
  private readonly treeTemplates: ConfiguredTemplate[];
  private readonly prune: boolean;

  constructor(readonly options: ExtractorOptions) {
    this.names = options.names ? new NameBook(options.names) : null;
    this.sink = new FeatureSink(options.bits, options.seed, this.names);
    this.nodeTemplates = options.templates.filter((t) => t.node);
    this.localTemplates = this.nodeTemplates.filter((t) => t.local !== false);
    this.contextTemplates = this.nodeTemplates.filter((t) => t.local === false);
    this.treeTemplates = options.templates.filter((t) => t.tree);
    this.prune = options.pseudoConstant ?? true;
  }

  /** The features of one candidate, before pruning. */
  candidate(view: CandidateView): SparseVector {
    const t = view.tree;
    const sink = this.sink;
    for (let i = 0; i < t.size; i++) {
      if (t.isWord[i]) continue;
      for (const tpl of this.nodeTemplates) tpl.node!(view, i, sink);
    }
    for (const tpl of this.treeTemplates) tpl.tree!(view, sink);
    return sink.take();
  }

  /**
   * In how many sentences each bucket varied (after pruning), counted by
   * sentence(). Allocated on first use: prepare counts per shard instead.
   */
  get varying(): Uint32Array {
    this.varyingCounts ??= new Uint32Array(2 ** this.options.bits);
    return this.varyingCounts;
  }

  /** The features of every candidate of one sentence, pruned; counts varying buckets. */
  sentence(candidates: readonly CandidateInput[]): SparseVector[] {
    const { vectors, varying } = this.sentenceWithVarying(candidates);
    const counts = this.varying;
    for (let k = 0; k < varying.length; k++) counts[varying[k]]++;
    return vectors;
  }

  /** As sentence(), also returning the buckets that vary in it (each once); does not count them. */
  sentenceWithVarying(candidates: readonly CandidateInput[]): { vectors: SparseVector[]; varying: Uint32Array } {
    const shared = new SubtreeCache();
    const arena = new VectorArena();
    const vectors = candidates.map((c) => this.cachedCandidate(candidateView(c.tree, c.score, c.rank), shared, arena));
    return pruneSentence(vectors, this.prune, arena);
  }

  /** As candidate(), reusing node features of subtrees seen earlier in the sentence. */
  private cachedCandidate(view: CandidateView, cache: SubtreeCache, arena: VectorArena): SparseVector {
    const t = view.tree;
    const sink = this.sink;
    const ids = cache.identify(t);
    for (let i = 0; i < t.size; i++) {
      if (t.isWord[i]) continue;
      const id = ids[i];
      if (cache.has(id)) {
        sink.replay(cache.buckets, cache.values, cache.from[id], cache.to[id]);
      } else {
        sink.startCapture();
        for (const tpl of this.localTemplates) tpl.node!(view, i, sink);
        cache.store(id, sink.capturedBuckets, sink.capturedValues, sink.endCapture());
      }
      for (const tpl of this.contextTemplates) tpl.node!(view, i, sink);
    }
    for (const tpl of this.treeTemplates) tpl.tree!(view, sink);
    return sink.take(arena);
  }
}

/** Exact identities of (subtree, start) within one sentence, and their node features. */
class SubtreeCache {
  private readonly ids = new Map<string, number>();
  /** Node features of identity k are buckets/values[from[k] .. to[k]). */
  buckets = new Int32Array(4096);
  values = new Float64Array(4096);
  from = new Int32Array(256).fill(-1);
  to = new Int32Array(256);
  private used = 0;

  has(id: number): boolean {
    return id < this.from.length && this.from[id] >= 0;
  }

  store(id: number, buckets: Int32Array, values: Float64Array, n: number): void {
    if (id >= this.from.length) {
      let size = this.from.length * 2;
      while (size <= id) size *= 2;
      const f = new Int32Array(size).fill(-1);
      f.set(this.from);
      this.from = f;
      const t = new Int32Array(size);
      t.set(this.to);
      this.to = t;
    }
    if (this.used + n > this.buckets.length) {
      let size = this.buckets.length * 2;
      while (size < this.used + n) size *= 2;
      const b = new Int32Array(size);
      b.set(this.buckets.subarray(0, this.used));
      this.buckets = b;
      const v = new Float64Array(size);
      v.set(this.values.subarray(0, this.used));
      this.values = v;
    }
    this.buckets.set(buckets.subarray(0, n), this.used);
    this.values.set(values.subarray(0, n), this.used);
    this.from[id] = this.used;
    this.used += n;
    this.to[id] = this.used;
  }

  /** The identity of every node of `t` (children before parents). */
  identify(t: CandidateView['tree']): Int32Array {
    const out = new Int32Array(t.size);
    for (let i = t.size - 1; i >= 0; i--) {
      let key: string;
      if (t.isWord[i]) {
        key = `w${t.sym[i]}@${t.start[i]}`;
      } else {
        key = `${t.sym[i]}@${t.start[i]}:`;
        for (let c = i + 1; c < t.end[i]; c = t.end[c]) key += `${out[c]},`;
      }
      let id = this.ids.get(key);
      if (id === undefined) {
        id = this.ids.size;
        this.ids.set(key, id);
      }
      out[i] = id;
    }
    return out;
  }
}
