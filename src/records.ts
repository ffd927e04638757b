/**
 * The records that flow between stages, declared once (types only; no code).
 * DEVELOPERS.md lists them in a table; keep the two in step.
 */
import type { Tree } from './core/tree.js';

export type { Tree } from './core/tree.js';

/** A gold tree as the treebank reader yields it (io/read-treebank.ts). */
export interface TreeRecord {
  /** The record's id: from JSON Lines, or the 1-based position in the file. */
  id: string;
  /** 1-based position of the tree in its file (bad trees count too). */
  ordinal: number;
  file: string;
  /** 1-based line and column of the tree's opening bracket. */
  line: number;
  column: number;
  tree: Tree;
}
