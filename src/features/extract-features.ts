/**
 * The extract + hash stages for one sentence: every candidate tree becomes
 * one sparse vector over the whole tree (all configured templates, hashed),
 * then pseudo-constant features are pruned across the candidates.
 */
import { FeatureSink, NameBook, type SparseVector } from '../core/feature-sink.js';
import type { Tree } from '../core/tree.js';
import { candidateView } from './candidate-view.js';
import { countVarying, pruneConstant } from './prune-features.js';
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
  /** In how many sentences each bucket varied (after pruning), since created. */
  readonly varying: Uint32Array;
  private readonly nodeTemplates: ConfiguredTemplate[];
  private readonly treeTemplates: ConfiguredTemplate[];
  private readonly prune: boolean;

  constructor(readonly options: ExtractorOptions) {
    this.names = options.names ? new NameBook(options.names) : null;
    this.sink = new FeatureSink(options.bits, options.seed, this.names);
    this.nodeTemplates = options.templates.filter((t) => t.node);
    this.treeTemplates = options.templates.filter((t) => t.tree);
    this.prune = options.pseudoConstant ?? true;
    this.varying = new Uint32Array(2 ** options.bits);
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

  /** The features of every candidate of one sentence, pruned; counts varying buckets. */
  sentence(candidates: readonly CandidateInput[]): SparseVector[] {
    const vectors = candidates.map((c) => this.candidate(candidateView(c.tree, c.score, c.rank)));
    const out = this.prune ? pruneConstant(vectors) : vectors;
    countVarying(out, this.varying);
    return out;
  }
}
