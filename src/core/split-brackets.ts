/**
 * Cuts a stream of bracketed text into one string per tree, whatever the
 * chunking and line layout, tracking line and column of each tree's start.
 *
 * Hot path: one pass over char codes per chunk; tree text is sliced from the
 * chunk, not built char by char.
 *
 * Recovery: a `(` in column 1 while a tree is still open starts a new tree
 * and the open one is reported as unbalanced (treebank files indent
 * continuation lines; turn this off with `columnOneStartsTree: false`).
 * Text between trees, a `)` with nothing open and a tree longer than
 * `maxTreeChars` are reported and skipped.
 */
import { DataError } from './errors.js';

export interface TreeText {
  text: string;
  /** 1-based line of the tree's opening `(`. */
  line: number;
  /** 1-based column of the tree's opening `(`. */
  column: number;
  /** 1-based line of the tree's closing `)`. */
  endLine: number;
}

/** A refused stretch of input. `tree` says whether it was (part of) a tree. */
export interface SplitError {
  error: DataError;
  tree: boolean;
  line: number;
  endLine: number;
}

export type SplitItem = TreeText | SplitError;

export function isSplitError(item: SplitItem): item is SplitError {
  return (item as SplitError).error !== undefined;
}

export interface SplitOptions {
  maxTreeChars?: number;
  columnOneStartsTree?: boolean;
}

export const DEFAULT_MAX_TREE_CHARS = 4 * 1024 * 1024;

export class BracketSplitter {
  private readonly maxTreeChars: number;
  private readonly columnOneStartsTree: boolean;
  private depth = 0;
  private line = 1;
  private column = 1;
  private parts: string[] = [];
  private partsLength = 0;
  private treeLine = 0;
  private treeColumn = 0;
  /** True while skipping the rest of an over-long tree. */
  private skipping = false;
  private strayLine = 0;

  constructor(options: SplitOptions = {}) {
    this.maxTreeChars = options.maxTreeChars ?? DEFAULT_MAX_TREE_CHARS;
    this.columnOneStartsTree = options.columnOneStartsTree ?? true;
  }

  /** Feeds the next piece of text; returns the trees and errors it completes. */
  push(chunk: string, out: SplitItem[] = []): SplitItem[] {
    const n = chunk.length;
    // Start of the current tree's text within this chunk, or -1.
    let from = this.depth > 0 && !this.skipping ? 0 : -1;
    for (let i = 0; i < n; i++) {
      const c = chunk.charCodeAt(i);
      if (c === 10) {
        this.line++;
        this.column = 1;
        continue;
      }
      if (c === 40 /* ( */) {
        if (this.depth > 0 && this.column === 1 && this.columnOneStartsTree) {
          if (!this.skipping) {
            out.push(this.treeError(new DataError('unbalanced',
              `expected \`)\` before the next tree: the tree that starts at line ${this.treeLine}, column ${this.treeColumn} still has ${this.depth} bracket(s) open when a new tree starts in column 1`,
              { line: this.treeLine, column: this.treeColumn }), this.line - 1));
          }
          this.depth = 0;
          this.resetTree();
        }
        if (this.depth === 0) {
          this.treeLine = this.line;
          this.treeColumn = this.column;
          this.skipping = false;
          from = i;
        }
        this.depth++;
      } else if (c === 41 /* ) */) {
        if (this.depth === 0) {
          out.push(this.lineError(new DataError('unexpected-close', 'expected `(` to start a tree, got `)` with no bracket open',
            { line: this.line, column: this.column })));
        } else if (--this.depth === 0) {
          if (!this.skipping && this.partsLength + (i + 1 - from) > this.maxTreeChars) {
            out.push(this.tooLong());
          } else if (!this.skipping) {
            const piece = chunk.slice(from, i + 1);
            const text = this.parts.length === 0 ? piece : this.parts.join('') + piece;
            out.push({ text, line: this.treeLine, column: this.treeColumn, endLine: this.line });
          }
          this.resetTree();
          from = -1;
        }
      } else if (this.depth === 0 && !(c === 32 || (c >= 9 && c <= 13) || c === 0xfeff)) {
        if (this.strayLine !== this.line) {
          this.strayLine = this.line;
          let j = i;
          while (j < n && j - i < 20 && chunk.charCodeAt(j) > 32 && chunk.charCodeAt(j) !== 40) j++;
          out.push(this.lineError(new DataError('stray-text', `expected \`(\` to start a tree, got \`${chunk.slice(i, Math.max(j, i + 1))}\` between trees`,
            { line: this.line, column: this.column })));
        }
      }
      // Count a surrogate pair as one column.
      if (c < 0xdc00 || c > 0xdfff) this.column++;
    }
    if (this.depth > 0 && !this.skipping && from >= 0) {
      const piece = chunk.slice(from);
      this.parts.push(piece);
      this.partsLength += piece.length;
      if (this.partsLength > this.maxTreeChars) {
        out.push(this.tooLong());
        this.skipping = true;
        this.parts = [];
        this.partsLength = 0;
      }
    }
    return out;
  }

  /** Ends the input; reports a tree left open. */
  end(out: SplitItem[] = []): SplitItem[] {
    if (this.depth > 0 && !this.skipping) {
      out.push(this.treeError(new DataError('unbalanced',
        `expected \`)\`: the input ends with ${this.depth} bracket(s) open in the tree that starts at line ${this.treeLine}, column ${this.treeColumn}`,
        { line: this.treeLine, column: this.treeColumn }), this.line));
    }
    this.depth = 0;
    this.resetTree();
    return out;
  }

  /** Line number the splitter has reached (1-based). */
  get currentLine(): number {
    return this.line;
  }

  private tooLong(): SplitError {
    return this.treeError(new DataError('tree-too-long',
      `expected a tree of at most ${this.maxTreeChars} characters; the tree that starts here is longer (raise the limit with --max-tree-chars if it is real)`,
      { line: this.treeLine, column: this.treeColumn }), this.line);
  }

  private treeError(error: DataError, endLine: number): SplitError {
    return { error, tree: true, line: this.treeLine, endLine: Math.max(endLine, this.treeLine) };
  }

  private lineError(error: DataError): SplitError {
    return { error, tree: false, line: this.line, endLine: this.line };
  }

  private resetTree(): void {
    this.parts = [];
    this.partsLength = 0;
    this.skipping = false;
  }
}
