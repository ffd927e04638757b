/**
 * The records that flow between stages, declared once (types only; no code).
 * DEVELOPERS.md lists them in a table; keep the two in step. Formats that
 * sheaf writes to disk (shard records, count files, the manifest, the fold
 * plan) are declared with their encoders in src/formats/.
 */
import type { DataErrorCode } from './core/errors.js';
import type { StoredVector } from './core/sparse-vector.js';
import type { Tree } from './core/tree.js';

export type { Tree } from './core/tree.js';
export type { SparseVector, StoredVector, Values } from './core/sparse-vector.js';

/** One feature template of a pipeline, with its options defaulted. */
export interface TemplateBlock {
  template: string;
  options: Record<string, unknown>;
}

/** A pipeline's resolved configuration: every option written out; what manifests record and digest. */
export interface PipelineConfig {
  format: 'sheaf-pipeline/1';
  stages: { stage: string; options: Record<string, unknown> }[];
  templates: TemplateBlock[];
}

/** Which base model produced a list: a name and a digest of what made it. */
export interface ModelIdentity {
  parser: string;
  fingerprint: string;
}

/** Where a gold tree stands in its treebank, and its id. */
export interface TreeLocation {
  /** The record's id: from JSON Lines, or the 1-based position in the file. */
  id: string;
  /** 1-based position of the tree in its file (bad trees count too). */
  ordinal: number;
  file: string;
  /** 1-based line and column of the tree's opening bracket. */
  line: number;
  column: number;
  /** True when the id is the tree's position (bracketed files, JSON Lines without `id`). */
  byPosition: boolean;
}

/** A gold tree as the treebank reader yields it (io/read-treebank.ts). */
export interface TreeRecord extends TreeLocation {
  tree: Tree;
}

/** A gold tree's text, checked but not built (io/read-treebank.ts, readTreeTexts). */
export interface TreeTextRecord extends TreeLocation {
  /** The tree exactly as the file has it (possibly over several lines). */
  text: string;
}

/** One candidate as an n-best dump gives it. */
export interface CandidateText {
  tree: string;
  score: number;
}

/** One sentence of an n-best dump, checked (stages/read-nbest.ts). */
export interface NbestRecord {
  id: string;
  /** The fold whose held-out part this list parses, or null. */
  fold: number | null;
  source: ModelIdentity | null;
  candidates: CandidateText[];
  file: string;
  /** 1-based line (JSON Lines), or 0 inside a JSON array. */
  line: number;
  /** 0-based position of the record in its file. */
  index: number;
}

export type RejectCode = DataErrorCode;

/** A candidate left out of a list that was kept: its base rank and why (`yield-mismatch`, or the code of its tree's parse error). */
export interface DroppedCandidate {
  rank: number;
  code: RejectCode;
  reason: string;
}

/** A refused input record: one line of rejects.jsonl. */
export interface RejectRecord {
  file: string;
  /** 1-based line, where known. */
  line: number | null;
  /** 1-based column, where known. */
  column: number | null;
  id: string | null;
  /** The base rank of a candidate dropped from a list that was kept (absent for whole records). */
  candidate?: number;
  code: RejectCode;
  reason: string;
}

/** Work for the per-sentence chain (prepare/sentence-chain.ts), sent to a worker. */
export interface SentenceJob {
  /** Input position (0-based, over all dumps in order). */
  pos: number;
  id: string;
  fold: number | null;
  /** The gold tree's text (one bracketed line). */
  gold: string;
  candidates: CandidateText[];
}

/** What the chain gives back: the encoded record, or why the sentence is refused. */
export type SentenceResult =
  | {
      pos: number;
      /** The encoded shard record (transferred, not copied). */
      bytes: Uint8Array;
      /** Byte length of the record before compression. */
      rawBytes: number;
      candidates: number;
      /** Candidates left out because their words differ from the gold's (base rank and why). */
      dropped: DroppedCandidate[];
      /** Buckets that vary in the sentence (for the shard's count file). */
      varying: Uint32Array;
      /** Per template: distinct buckets fired, of which vary (2 entries each). */
      templateCounts: Uint32Array;
    }
  | { pos: number; code: RejectCode; reason: string };

/** One candidate of a shard sentence. */
export interface ShardCandidate {
  /** The base model's log score. */
  score: number;
  /** 0-based rank in the base model's list. */
  rank: number;
  /** PARSEVAL counts: brackets matched and brackets in the candidate. */
  matched: number;
  test: number;
  /** The candidate's vector minus the reference's. */
  diff: StoredVector;
}

/**
 * A list to rank, flat (what trainers, eval and rerank score): candidate c's
 * vector relative to the list's reference is the entries idx/val[start[c] …
 * start[c + 1]) — its integer part, then its real part. Made by the shard
 * reader's fast path (formats/shard-record.ts) or from a ShardSentence.
 */
export interface RankingList {
  id: string;
  gold: number;
  len: number;
  rank: Int32Array;
  matched: Int32Array;
  test: Int32Array;
  start: Int32Array;
  idx: Uint32Array;
  val: Float64Array;
}

/** One sentence as a shard stores it (formats/shard-record.ts). */
export interface ShardSentence {
  id: string;
  /** Input position (0-based, over all dumps in order). */
  pos: number;
  fold: number | null;
  /** Brackets in the gold tree. */
  gold: number;
  /** Words, punctuation included. */
  len: number;
  flag: 'no-candidates' | null;
  /** The reference candidate's vector at the stored buckets; null without candidates. */
  ref: StoredVector | null;
  cands: ShardCandidate[];
}
