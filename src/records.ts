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

/** One candidate as an n-best dump gives it. */
export interface CandidateText {
  tree: string;
  score: number;
}

/** One sentence of an n-best dump, validated (io/read-nbest.ts). */
export interface NbestRecord {
  id: string;
  /** The fold whose held-out part this list parses, or null. */
  fold: number | null;
  source: { parser: string; fingerprint: string } | null;
  candidates: CandidateText[];
  file: string;
  /** 1-based line (JSON Lines), or 0 inside a JSON array. */
  line: number;
  /** 0-based position of the record in its file. */
  index: number;
}

/** What a reader yields for a record it refuses: it goes to rejects.jsonl. */
export interface RejectRecord {
  file: string;
  line: number | null;
  id: string | null;
  reason: string;
  code: string;
}
