/**
 * Cuts a stream of bracketed text into one string per tree, whatever the
 * chunking and line layout, tracking line and column of each tree's start.
 *
 * Hot path: one pass over char codes per chunk; tree text is sliced from the
 * chunk, not built char by char.
 *
 * Recovery, so that one damaged tree costs one tree and ids by position never
 * drift. When the first tree starts in column 1 (the usual treebank layout),
 * a `(` in column 1 always starts a new tree: the stretch from one such `(`
 * to the next is a unit, and a unit is clean when its brackets balance. A
 * damaged unit is
 * refused as exactly one tree: one left open, one that closes early and goes
 * on (a `)` too many inside it), one too long. An unindented continuation
 * line — a unit that closes more than it opens, right after units left open
 * — is read as the rest of the tree it continues, so the stretch still
 * counts as one tree. Without a tree in column 1 first (or with
 * `columnOneStartsTree: false`), every `(` at depth 0 starts a tree, and a
 * `(` in column 1 while a tree is open starts a new one (reported as
 * unbalanced). Text between trees and runs of `)` with nothing open are
 * reported (one report per line, one per run of `)`) and skipped.
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

/** Units left open that an unindented continuation may still close (beyond this they are reported). */
const MAX_PENDING = 64;

/** A damaged unit of the column-1 layout, described for its report. */
interface DamagedUnit {
  line: number;
  endLine: number;
  /** Brackets left open at the unit's end. */
  open: number;
  /** The line where another tree starts before the next tree in column 1 (0: none). */
  extraLine: number;
  /** `)` with nothing open. */
  strays: number;
  /** Where the unit's first tree closed (0 if it never did). */
  closeLine: number;
  closeColumn: number;
  tooLong: boolean;
}

function isEmptyBracket(text: string): boolean {
  for (let i = 1; i < text.length - 1; i++) {
    const c = text.charCodeAt(i);
    if (!(c === 32 || (c >= 9 && c <= 13))) return false;
  }
  return true;
}

export class BracketSplitter {
  private readonly maxTreeChars: number;
  private readonly columnOneStartsTree: boolean;
  /** Decided by the first tree: every tree starts in column 1, or anywhere. */
  private layout: 'column1' | 'free' | null = null;
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
  /** The current run of `)` with nothing open: how many, from where to where. */
  private strayRun = 0;
  private strayRunLine = 0;
  private strayRunColumn = 0;
  private strayRunEndLine = 0;
  private strayRunEndColumn = 0;
  /** The column-1 unit being read: its items are held until it ends clean. */
  private unitLine = 0;
  private unitItems: SplitItem[] = [];
  private unitTrees = 0;
  private unitStrays = 0;
  private unitTooLong = false;
  private unitCloseLine = 0;
  private unitCloseColumn = 0;
  /** Line of the last tree's close in the unit; trees after the first (empty brackets aside), and the line of the first. */
  private unitLastClose = 0;
  private unitExtra = 0;
  private unitExtraLine = 0;
  /** True while reading the file's first unit (several trees on its first line make the layout free). */
  private firstUnit = true;
  /** A second tree opened on the line of a one-line first tree: the layout turns free if it is a real tree. */
  private maybeFree = false;
  /** Damaged units left open, which the next unit may continue. */
  private pending: DamagedUnit[] = [];
  private out: SplitItem[] = [];

  constructor(options: SplitOptions = {}) {
    this.maxTreeChars = options.maxTreeChars ?? DEFAULT_MAX_TREE_CHARS;
    this.columnOneStartsTree = options.columnOneStartsTree ?? true;
  }

  /** Feeds the next piece of text; returns the trees and errors it completes. */
  push(chunk: string, out: SplitItem[] = []): SplitItem[] {
    this.out = out;
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
        if (this.strayRun > 0) this.endStrayRun();
        if (this.column === 1 && this.layout === 'column1') {
          this.endUnit(true);
          this.startUnit();
        } else if (this.depth > 0 && this.column === 1 && this.columnOneStartsTree) {
          // Free layout: a `(` in column 1 while a tree is open starts a new one.
          if (!this.skipping) {
            this.emit(this.treeError(new DataError('unbalanced',
              `expected \`)\` before the next tree: the tree that starts at line ${this.treeLine}, column ${this.treeColumn} still has ${this.depth} bracket(s) open when a new tree starts in column 1`,
              { line: this.treeLine, column: this.treeColumn }), this.line - 1));
          }
          this.depth = 0;
          this.resetTree();
        } else if (this.layout === null) {
          this.layout = this.column === 1 && this.columnOneStartsTree ? 'column1' : 'free';
          if (this.layout === 'column1') this.startUnit();
        }
        if (this.depth === 0) {
          if (this.layout === 'column1' && this.unitTrees > 0) {
            // Another tree before the next tree in column 1: the first closed early (or a stretch was repeated),
            // unless the file starts with several trees on its first line.
            // (Only when nothing else was seen: a damaged first tree must not change the layout.)
            this.maybeFree = this.firstUnit && this.unitTrees === 1 && this.unitLine === this.line && this.unitLastClose === this.line && this.unitItems.length === 1 && this.strayRun === 0;
            this.unitExtra++;
            if (this.unitExtraLine === 0) this.unitExtraLine = this.line;
          }
          this.treeLine = this.line;
          this.treeColumn = this.column;
          this.skipping = false;
          this.unitTrees++;
          from = i;
        }
        this.depth++;
      } else if (c === 41 /* ) */) {
        if (this.depth === 0) {
          this.strayClose();
        } else if (--this.depth === 0) {
          this.unitLastClose = this.line;
          if (this.unitTrees === 1 && this.unitCloseLine === 0) {
            this.unitCloseLine = this.line;
            this.unitCloseColumn = this.column;
          }
          if (!this.skipping && this.partsLength + (i + 1 - from) > this.maxTreeChars) {
            this.tooLong();
          } else if (!this.skipping) {
            const piece = chunk.slice(from, i + 1);
            const text = this.parts.length === 0 ? piece : this.parts.join('') + piece;
            if (this.layout === 'column1' && this.unitTrees > 1 && isEmptyBracket(text)) {
              this.unitExtra--;
              this.emit({ error: new DataError('empty-tree', `expected a tree, got \`${text}\` after the tree that starts at line ${this.unitLine}, column 1 (an empty bracket is no sentence; it is skipped)`,
                { line: this.treeLine, column: this.treeColumn }), tree: false, line: this.treeLine, endLine: this.line });
            } else {
              this.emit({ text, line: this.treeLine, column: this.treeColumn, endLine: this.line });
              if (this.maybeFree) this.becomeFree();
            }
            this.maybeFree = false;
          }
          this.resetTree();
          from = -1;
        }
      } else if (this.depth === 0 && !(c === 32 || (c >= 9 && c <= 13) || c === 0xfeff)) {
        if (this.strayRun > 0) this.endStrayRun();
        if (this.strayLine !== this.line) {
          this.strayLine = this.line;
          let j = i;
          while (j < n && j - i < 20 && chunk.charCodeAt(j) > 32 && chunk.charCodeAt(j) !== 40 && chunk.charCodeAt(j) !== 41) j++;
          this.emit(this.lineError(new DataError('stray-text', `expected \`(\` to start a tree, got \`${chunk.slice(i, Math.max(j, i + 1))}\` between trees`,
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
        this.tooLong();
        this.skipping = true;
        this.parts = [];
        this.partsLength = 0;
      }
    }
    return out;
  }

  /** Ends the input; reports a tree left open. */
  end(out: SplitItem[] = []): SplitItem[] {
    this.out = out;
    if (this.strayRun > 0) this.endStrayRun();
    if (this.layout === 'column1') {
      this.endUnit(false);
      this.flushPending(0, false);
    } else if (this.depth > 0 && !this.skipping) {
      this.emit(this.treeError(new DataError('unbalanced',
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

  private emit(item: SplitItem): void {
    if (this.layout === 'column1' && this.unitLine > 0) this.unitItems.push(item);
    else this.out.push(item);
  }

  private strayClose(): void {
    if (this.strayRun === 0) {
      this.strayRunLine = this.line;
      this.strayRunColumn = this.column;
    }
    this.strayRun++;
    this.strayRunEndLine = this.line;
    this.strayRunEndColumn = this.column;
    if (this.layout === 'column1') this.unitStrays++;
  }

  /** One report per run of `)` with nothing open (a line of 100,000 is one line of rejects). */
  private endStrayRun(): void {
    const k = this.strayRun;
    this.strayRun = 0;
    const more = k === 1 ? 'got `)` with no bracket open' : `got ${k} \`)\` with no bracket open (through line ${this.strayRunEndLine}, column ${this.strayRunEndColumn})`;
    this.emit({ error: new DataError('unexpected-close', `expected \`(\` to start a tree, ${more}`, { line: this.strayRunLine, column: this.strayRunColumn }),
      tree: false, line: this.strayRunLine, endLine: this.strayRunEndLine });
  }

  private tooLong(): void {
    if (this.layout === 'column1') {
      this.unitTooLong = true;
      return;
    }
    this.emit(this.treeError(new DataError('tree-too-long',
      `expected a tree of at most ${this.maxTreeChars} characters; the tree that starts here is longer (is a \`)\` missing?); it is refused and reading goes on after it`,
      { line: this.treeLine, column: this.treeColumn }), this.line));
  }

  /** Several trees on the file's first line: trees are cut wherever a bracket opens at depth 0. */
  private becomeFree(): void {
    this.layout = 'free';
    for (const item of this.unitItems) this.out.push(item);
    this.unitItems = [];
    this.unitLine = 0;
    this.unitExtra = 0;
  }

  private startUnit(): void {
    this.unitLine = this.line;
    this.unitItems = [];
    this.unitTrees = 0;
    this.unitStrays = 0;
    this.unitTooLong = false;
    this.unitCloseLine = 0;
    this.unitCloseColumn = 0;
    this.unitLastClose = 0;
    this.unitExtra = 0;
    this.unitExtraLine = 0;
    this.depth = 0;
    this.resetTree();
  }

  /** Ends the column-1 unit: its items if clean, else one refused tree (possibly with the units it continues). */
  private endUnit(nextTree: boolean): void {
    if (this.unitLine === 0) return;
    const open = this.skipping ? 0 : this.depth;
    // A `)` too many may sit anywhere inside the tree (it then closes early), so any damages the unit.
    // So does another tree before the next tree in column 1 (one tree per column-1 start; an empty `()` is only skipped).
    const damaged = this.unitTooLong || open > 0 || this.unitStrays > 0 || this.unitExtra > 0;
    const endLine = nextTree ? Math.max(this.unitLine, this.line - 1) : this.line;
    const items = this.unitItems;
    this.firstUnit = false;
    const unit: DamagedUnit = { line: this.unitLine, endLine, open, extraLine: this.unitExtraLine, strays: this.unitStrays, closeLine: this.unitCloseLine, closeColumn: this.unitCloseColumn, tooLong: this.unitTooLong };
    this.unitLine = 0;
    this.unitItems = [];
    const next = nextTree ? this.line : 0;
    if (!damaged) {
      this.flushPending(next, nextTree);
      for (const item of items) this.out.push(item);
      return;
    }
    const net = unit.open - unit.strays;
    if (!unit.tooLong && net > 0) {
      this.pending.push(unit);
      if (this.pending.length > MAX_PENDING) this.out.push(this.damagedTree([this.pending.shift()!], this.pending[0].line, true));
      return;
    }
    if (!unit.tooLong && net < 0 && this.pending.length > 0) {
      // An unindented continuation: it closes what the units just before it left open.
      let j = this.pending.length;
      let sum = 0;
      while (j > 0 && sum < -net) {
        j--;
        sum += this.pending[j].open - this.pending[j].strays;
      }
      const group = this.pending.splice(j);
      this.flushPending(group[0].line, true);
      this.out.push(this.damagedTree([...group, unit], next, nextTree));
      return;
    }
    this.flushPending(unit.line, true);
    this.out.push(this.damagedTree([unit], next, nextTree));
  }

  /** Reports the units left open that nothing continued, one tree each. */
  private flushPending(next: number, nextTree: boolean): void {
    const p = this.pending;
    this.pending = [];
    p.forEach((u, k) => this.out.push(this.damagedTree([u], k + 1 < p.length ? p[k + 1].line : next, k + 1 < p.length || nextTree)));
  }

  /** One refused tree for a run of damaged units, saying why, what it costs and where reading resumes. */
  private damagedTree(units: DamagedUnit[], next: number, nextTree: boolean): SplitError {
    const first = units[0];
    const last = units[units.length - 1];
    const resumes = nextTree ? `reading resumes with the tree in column 1 at line ${next}` : 'the input ends there';
    const span = first.line === last.endLine ? `line ${first.line} counts` : `lines ${first.line}–${last.endLine} count`;
    const cost = `; ${span} as one refused tree, so ids by position stay in step; ${resumes}`;
    const at = { line: first.line, column: 1 };
    let error: DataError;
    if (first.tooLong) {
      error = new DataError('tree-too-long', `expected a tree of at most ${this.maxTreeChars} characters; the tree that starts at line ${first.line}, column 1 is longer (is a \`)\` missing?)${cost}`, at);
    } else if (units.length > 1) {
      error = new DataError('unbalanced',
        `expected \`)\` before the next tree: the tree that starts at line ${first.line}, column 1 still has ${first.open} bracket(s) open where line ${units[1].line} starts with \`(\` in column 1, and the text from there closes more than it opens: it is read as the rest of this tree (indent continuation lines)${cost}`, at);
    } else if (first.open > 0) {
      error = new DataError('unbalanced',
        `expected \`)\` before the next tree: the tree that starts at line ${first.line}, column 1 still has ${first.open} bracket(s) open ${nextTree ? `when a new tree starts in column 1 at line ${next}` : 'when the input ends'}${cost}`, at);
    } else if (first.strays === 0) {
      error = new DataError('unbalanced',
        `expected one tree from line ${first.line}, column 1 to the next tree in column 1: it closes at line ${first.closeLine}, column ${first.closeColumn}, but ${first.extraLine === first.closeLine ? 'the same line' : `line ${first.extraLine}`} opens another bracket at depth 0 (a \`)\` too many inside it, a \`(\` missing, or a stretch repeated?)${cost}`, at);
    } else {
      error = new DataError('unbalanced',
        `expected as many \`)\` as \`(\`: the tree that starts at line ${first.line}, column 1 has ${first.strays} \`)\` too many before the next tree in column 1 (its first bracket closes at line ${first.closeLine}, column ${first.closeColumn}; a \`)\` too many inside it closes it early)${cost}`, at);
    }
    return { error, tree: true, line: first.line, endLine: last.endLine };
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
