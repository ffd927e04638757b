/**
 * What a feature template is. A template is registered under a versioned id
 * (`rules.v1`); its canonical keys start with that id, so a changed template
 * gets a new id and never silently shares buckets with the old one.
 *
 * Templates are pure. Each configured template may fire:
 * - `node(view, i, sink)`: features at constituent i (a feature that
 *   mentions a parent is fired at the parent). What they may read is
 *   declared by `reach` (below): the extractor shares a node's features
 *   between all candidates of a list where that much of the tree is equal,
 *   so a template must read nothing beyond its declared reach;
 * - `tree(view, sink)`: features of the whole candidate.
 */
import type { FeatureSink } from '../core/feature-sink.js';
import type { Tree } from '../core/tree.js';
import type { OptionSchema, OptionValues } from './options.js';

/** A candidate tree with what every template needs computed once. */
export interface CandidateView {
  /** Normalised tree. */
  tree: Tree;
  /** Head child of each node (-1 for words). */
  headChild: Int32Array;
  /** Head word (word node index) of each node. */
  headWord: Int32Array;
  /** 1 for preterminals. */
  preterminal: Uint8Array;
  /** Height of each node: 0 for words, 1 for preterminals, 1 + the tallest child otherwise. */
  height: Int32Array;
  /** Base parser's log score and 0-based rank. */
  score: number;
  rank: number;
}

/**
 * What node features at constituent i may read. Always: the sentence's words,
 * and i's atom: its label, span, head word (position and POS tag) and height.
 * `depth` d ≥ 1: also the atoms of its descendants down to d levels (a word
 * child is known by its position), hence which of them are words or
 * preterminals. `edgeTags`: also the POS tags of the first and last word of
 * i's span. Anything else (a sibling, a parent, a tag outside the span):
 * `local: false`, and the features are computed for every candidate afresh.
 */
export interface Reach {
  depth: 0 | 1 | 2 | 3;
  edgeTags?: boolean;
}

export interface ConfiguredTemplate {
  /** What node features read; required with `node` unless `local` is false. */
  reach?: Reach;
  /** False when, with these options, node features read beyond any reach (never shared). */
  local?: boolean;
  node?(view: CandidateView, i: number, sink: FeatureSink): void;
  tree?(view: CandidateView, sink: FeatureSink): void;
}

/** Services the pipeline loader lends to templates at configuration time (IO stays outside). */
export interface ConfigureContext {
  /** Reads a text file named in the pipeline (resolved against the pipeline file's folder). */
  readText(path: string): string;
}

export interface FeatureTemplate {
  /** Versioned id: `name.vN`. */
  id: string;
  /** What it fires on, in one sentence. */
  summary: string;
  /** One example key from the demo scenario. */
  example: string;
  /** A demo-scenario tree whose features include `example` (a test checks it fires). */
  exampleTree: string;
  options: OptionSchema;
  configure(options: OptionValues, context: ConfigureContext): ConfiguredTemplate;
}
