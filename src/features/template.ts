/**
 * What a feature template is. A template is registered under a versioned id
 * (`rules.v1`); its canonical keys start with that id, so a changed template
 * gets a new id and never silently shares buckets with the old one.
 *
 * Templates are pure. Each configured template may fire:
 * - `node(view, i, sink)`: at constituent i, features that depend only on
 *   i's subtree and its span (a feature that mentions a parent is fired at
 *   the parent), so features of equal subtrees at equal positions are equal;
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

export interface ConfiguredTemplate {
  /**
   * False when, with these options, node features also read outside the
   * node's subtree (they are then never shared between candidates).
   */
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
