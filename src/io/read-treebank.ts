/**
 * Streams a gold treebank: bracketed trees (any layout) or JSON Lines
 * `{"id": "...", "tree": "(...)"}`, from a file, `.gz`, or stdin (`-`).
 * Yields each tree with its id, file, line and column. A bad tree is thrown
 * as a DataError, or, with `onBad`, reported there and skipped.
 */
import { DataError } from '../core/errors.js';
import type { Vocabulary } from '../core/interner.js';
import { parseTree } from '../core/read-brackets.js';
import { BracketSplitter, isSplitError, type SplitItem } from '../core/split-brackets.js';
import { TreeBuilder } from '../core/tree.js';
import type { TreeRecord } from '../records.js';

export type { TreeRecord };
import { decodeText, readBytes, type BadLine } from './open-input.js';

export type TreebankFormat = 'auto' | 'brackets' | 'jsonl';

export interface ReadTreebankOptions {
  vocab: Vocabulary;
  format?: TreebankFormat;
  /** Report bad trees here and go on; without it the first bad tree is thrown. */
  onBad?: (error: DataError) => void;
  maxTreeChars?: number;
  columnOneStartsTree?: boolean;
  /** Sees the raw bytes of the file (for its digest). */
  tap?: (chunk: Buffer) => void;
}

export async function* readTreebank(file: string, options: ReadTreebankOptions): AsyncGenerator<TreeRecord> {
  const pieces = decodeText(readBytes(file, options.tap));
  const bad = (e: DataError): void => {
    const located = e.file === undefined ? e.relocate({ file }) : e;
    if (!options.onBad) throw located;
    options.onBad(located);
  };
  let format = options.format ?? 'auto';
  const builder = new TreeBuilder(options.vocab);
  let ordinal = 0;

  // Brackets state.
  const splitter = new BracketSplitter({ maxTreeChars: options.maxTreeChars, columnOneStartsTree: options.columnOneStartsTree });
  const badLines: BadLine[] = [];
  const items: SplitItem[] = [];

  // JSONL state.
  let partial = '';
  let jsonLine = 1;

  /** The first bad UTF-8 line within [line, endLine], consuming all of them. */
  const takeBadLines = (line: number, endLine: number): BadLine | undefined => {
    // Bad lines before this item belong to nothing else: report them alone.
    while (badLines.length > 0 && badLines[0].line < line) {
      const b = badLines.shift()!;
      bad(new DataError('invalid-utf8', b.reason, { file, line: b.line, column: b.column }));
    }
    const first = badLines.length > 0 && badLines[0].line <= endLine ? badLines[0] : undefined;
    while (badLines.length > 0 && badLines[0].line <= endLine) badLines.shift();
    return first;
  };

  const fromBrackets = function* (list: SplitItem[]): Generator<TreeRecord> {
    for (const item of list) {
      if (isSplitError(item)) {
        if (item.tree) ordinal++;
        const b = takeBadLines(item.line, item.endLine);
        const id = item.tree ? String(ordinal) : undefined;
        // Bad bytes explain a broken tree better than its brackets do.
        bad(b ? new DataError('invalid-utf8', b.reason, { file, line: b.line, column: b.column, id }) : item.error.relocate({ file, id }));
        continue;
      }
      ordinal++;
      const id = String(ordinal);
      const b = takeBadLines(item.line, item.endLine);
      if (b) {
        bad(new DataError('invalid-utf8', b.reason, { file, line: b.line, column: b.column, id }));
        continue;
      }
      try {
        const tree = parseTree(item.text, options.vocab, { builder });
        yield { id, ordinal, file, line: item.line, column: item.column, tree };
      } catch (e) {
        if (!(e instanceof DataError)) throw e;
        const line = item.line + (e.line ?? 1) - 1;
        const column = (e.line ?? 1) === 1 ? item.column + (e.column ?? 1) - 1 : e.column;
        bad(e.relocate({ file, line, column, id }));
      }
    }
  };

  const fromJsonLine = (text: string, line: number): TreeRecord | null => {
    ordinal++;
    let value: unknown;
    try {
      value = JSON.parse(text);
    } catch (e) {
      bad(new DataError('bad-json', `expected a JSON object {"id", "tree"} on this line: ${(e as Error).message}`, { file, line }));
      return null;
    }
    if (value === null || typeof value !== 'object' || Array.isArray(value)) {
      bad(new DataError('bad-json', 'expected a JSON object {"id", "tree"} on this line', { file, line }));
      return null;
    }
    const rec = value as { id?: unknown; tree?: unknown };
    const id = rec.id === undefined ? String(ordinal) : typeof rec.id === 'string' || typeof rec.id === 'number' ? String(rec.id) : null;
    if (id === null) {
      bad(new DataError('bad-field', 'expected `id` to be a string or a number', { file, line }));
      return null;
    }
    if (typeof rec.tree !== 'string') {
      bad(new DataError('bad-field', 'expected `tree` to be a string holding one bracketed tree', { file, line, id }));
      return null;
    }
    try {
      return { id, ordinal, file, line, column: 1, tree: parseTree(rec.tree, options.vocab, { builder }) };
    } catch (e) {
      if (!(e instanceof DataError)) throw e;
      bad(new DataError(e.code, `in the \`tree\` string at its line ${e.line}, column ${e.column}: ${e.reason}`, { file, line, id }));
      return null;
    }
  };

  for await (const piece of pieces) {
    if (format === 'auto') {
      const m = /\S/.exec(piece.text);
      if (!m) continue;
      format = m[0] === '{' ? 'jsonl' : 'brackets';
    }
    if (format === 'brackets') {
      badLines.push(...piece.bad);
      items.length = 0;
      splitter.push(piece.text, items);
      yield* fromBrackets(items);
    } else {
      const badAt = new Map(piece.bad.map((b) => [b.line, b]));
      const text = partial + piece.text;
      let line = piece.line;
      let s = 0;
      for (let e = text.indexOf('\n'); e >= 0; e = text.indexOf('\n', s)) {
        const l = text.slice(s, e);
        s = e + 1;
        const b = badAt.get(line);
        if (b) {
          ordinal++;
          bad(new DataError('invalid-utf8', b.reason, { file, line, column: b.column }));
        } else if (l.trim().length > 0) {
          const r = fromJsonLine(l, line);
          if (r) yield r;
        }
        line++;
      }
      partial = text.slice(s);
      jsonLine = line;
    }
  }
  if (format === 'brackets') {
    items.length = 0;
    splitter.end(items);
    yield* fromBrackets(items);
    for (const b of badLines.splice(0)) bad(new DataError('invalid-utf8', b.reason, { file, line: b.line, column: b.column }));
  } else if (format === 'jsonl' && partial.trim().length > 0) {
    const r = fromJsonLine(partial, jsonLine);
    if (r) yield r;
  }
}
