/** Stage `parse-candidates.v1`: candidate tree texts → normalised trees. */
import { DataError } from '../core/errors.js';
import { createVocabulary, type Vocabulary } from '../core/interner.js';
import { normaliseTree } from '../core/normalise.js';
import { parseTree } from '../core/read-brackets.js';
import { TreeArena, TreeBuilder, type Tree } from '../core/tree.js';
import type { CandidateText, DroppedCandidate } from '../records.js';
import type { StageSpec } from './stage.js';

export const parseCandidatesSpec: StageSpec = {
  id: 'parse-candidates.v1',
  summary: 'parse and normalise candidate trees',
  needs: ['candidateTexts'],
  adds: ['candidates'],
  options: {
    stripFunctionTags: { type: 'boolean', default: true, doc: 'NP-SBJ-1 → NP' },
    dropEmpty: { type: 'boolean', default: true, doc: 'delete -NONE- elements and the constituents they leave empty' },
  },
};

export interface ParseOptions {
  stripFunctionTags: boolean;
  dropEmpty: boolean;
}

/**
 * Parses one tree text; `what` names it in errors (`candidate 3`, `the gold tree`).
 * `builder`: builds the trees (its arena, if any, is where they live).
 */
export function parseNormalised(text: string, vocab: Vocabulary, options: ParseOptions, what: string, builder?: TreeBuilder): Tree {
  let tree: Tree;
  try {
    tree = parseTree(text, vocab, { builder });
  } catch (e) {
    if (e instanceof DataError) throw new DataError(e.code, `${what} does not parse (at its line ${e.line}, column ${e.column}): ${e.reason}`);
    throw e;
  }
  const n = normaliseTree(tree, { stripTags: options.stripFunctionTags, dropEmpty: options.dropEmpty }, builder);
  if (!n) throw new DataError('empty-tree', `${what} holds only empty elements`);
  return n;
}

export function parseCandidates(options: ParseOptions) {
  return (candidates: readonly CandidateText[], vocab: Vocabulary): Tree[] =>
    candidates.map((c, k) => parseNormalised(c.tree, vocab, options, `candidate ${k}`));
}

/**
 * Parses the candidates that parse: their trees and base ranks, and the
 * others as dropped (base rank, the parse error's code and message). One
 * tree a base parser garbled costs that candidate, not its list.
 */
export function parseUsableCandidates(options: ParseOptions) {
  return (candidates: readonly CandidateText[], vocab: Vocabulary, builder?: TreeBuilder): { trees: Tree[]; ranks: number[]; unparsable: DroppedCandidate[] } => {
    const trees: Tree[] = [];
    const ranks: number[] = [];
    const unparsable: DroppedCandidate[] = [];
    candidates.forEach((c, k) => {
      try {
        trees.push(parseNormalised(c.tree, vocab, options, `candidate ${k}`, builder));
        ranks.push(k);
      } catch (e) {
        if (!(e instanceof DataError)) throw e;
        unparsable.push({ rank: k, code: e.code, reason: e.reason });
      }
    });
    return { trees, ranks, unparsable };
  };
}

/**
 * The vocabulary and tree memory of a run of jobs (one list each). A list's
 * trees die with its job (only bytes, counts or a pick leave it), so they
 * live in one arena handed out again per job; a fresh vocabulary now and then
 * keeps interner memory bounded (ids never leave a job either).
 */
export class JobTrees {
  private readonly arena = new TreeArena();
  private jobs = 0;
  vocab = createVocabulary();
  builder = new TreeBuilder(this.vocab, this.arena);

  /** Call at the start of every job: the previous job's trees are gone from here on. */
  next(): void {
    if (++this.jobs % 20000 === 0) {
      this.vocab = createVocabulary();
      this.builder = new TreeBuilder(this.vocab, this.arena);
    }
    this.arena.reset();
  }
}
