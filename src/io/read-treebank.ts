/**
 * Streams a gold treebank: bracketed trees (any layout) or JSON Lines
 * `{"id": "...", "tree": "(...)"}`, from a file, `.gz`, or stdin (`-`).
 * Yields each tree with its id, file, line and column. A bad tree is thrown
 * as a DataError, or, with `onBad`, reported there and skipped.
 */
import { DataError } from '../core/errors.js';
import type { Vocabulary } from '../core/interner.js';
import { checkTree, parseTree } from '../core/read-brackets.js';
import { BracketSplitter, isSplitError, type SplitItem } from '../core/split-brackets.js';
import { TreeBuilder } from '../core/tree.js';
import { notWellFormed } from '../core/well-formed.js';
import type { TreeLocation, TreeRecord, TreeTextRecord } from '../records.js';

export type { TreeRecord, TreeTextRecord };
import { decodeText, inflateBytes, readBytes, type BadLine } from './open-input.js';
import { jsonLines } from './read-jsonl.js';

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
  /** Raw bytes to read instead of opening `file` (gzip still recognised; tests feed random chunks here). */
  source?: AsyncIterable<Buffer>;
}

/** The stream's chunks with the first ones peeked: the first non-space byte says brackets or JSON Lines. */
async function peekFormat(chunks: AsyncIterable<Buffer>): Promise<{ format: 'brackets' | 'jsonl' | null; all: AsyncIterable<Buffer> }> {
  const it = chunks[Symbol.asyncIterator]();
  const seen: Buffer[] = [];
  let format: 'brackets' | 'jsonl' | null = null;
  for (;;) {
    const next = await it.next();
    if (next.done) break;
    seen.push(next.value);
    const b = next.value;
    let k = seen.length === 1 && b.length >= 3 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf ? 3 : 0;
    while (k < b.length && (b[k] === 0x20 || b[k] === 0x0a || b[k] === 0x0d || b[k] === 0x09)) k++;
    if (k < b.length) {
      format = b[k] === 0x7b /* { */ ? 'jsonl' : 'brackets';
      break;
    }
  }
  async function* all(): AsyncGenerator<Buffer> {
    yield* seen;
    for (;;) {
      const next = await it.next();
      if (next.done) return;
      yield next.value;
    }
  }
  return { format, all: all() };
}

export async function* readTreebank(file: string, options: ReadTreebankOptions): AsyncGenerator<TreeRecord> {
  for await (const r of readTrees(file, options, (text, builder) => parseTree(text, options.vocab, { builder }))) {
    yield { id: r.id, ordinal: r.ordinal, file: r.file, line: r.line, column: r.column, byPosition: r.byPosition, tree: r.value };
  }
}

/**
 * The same trees as their text, checked but not built (no allocation per
 * tree): for readers that only pass the text on, like the gold index.
 */
export async function* readTreeTexts(file: string, options: ReadTreebankOptions): AsyncGenerator<TreeTextRecord> {
  for await (const r of readTrees(file, options, (text, builder) => {
    checkTree(text, options.vocab, builder);
    return text;
  })) {
    yield { id: r.id, ordinal: r.ordinal, file: r.file, line: r.line, column: r.column, byPosition: r.byPosition, text: r.value };
  }
}

interface Located<T> extends TreeLocation {
  value: T;
}

async function* readTrees<T>(file: string, options: ReadTreebankOptions, make: (text: string, builder: TreeBuilder) => T): AsyncGenerator<Located<T>> {
  const bad = (e: DataError): void => {
    const located = e.file === undefined ? e.relocate({ file }) : e;
    if (!options.onBad) throw located;
    options.onBad(located);
  };
  const peeked = await peekFormat(options.source ? inflateBytes(options.source, file, options.tap) : readBytes(file, options.tap));
  const format = options.format === undefined || options.format === 'auto' ? peeked.format : options.format;
  if (format === null) return;
  const builder = new TreeBuilder(options.vocab);
  let ordinal = 0;

  if (format === 'jsonl') {
    for await (const l of jsonLines(peeked.all)) {
      ordinal++;
      if (l.bad) {
        bad(new DataError('invalid-utf8', l.bad.reason, { file, line: l.line, column: l.bad.column }));
        continue;
      }
      const r = fromJsonLine(l.text!, l.line, ordinal, file, builder, bad, make);
      if (r) yield r;
    }
    return;
  }

  const splitter = new BracketSplitter({ maxTreeChars: options.maxTreeChars, columnOneStartsTree: options.columnOneStartsTree });
  const badLines: BadLine[] = [];
  const items: SplitItem[] = [];

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

  const fromBrackets = function* (list: SplitItem[]): Generator<Located<T>> {
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
        const value = make(item.text, builder);
        yield { id, ordinal, file, line: item.line, column: item.column, byPosition: true, value };
      } catch (e) {
        if (!(e instanceof DataError)) throw e;
        const line = item.line + (e.line ?? 1) - 1;
        const column = (e.line ?? 1) === 1 ? item.column + (e.column ?? 1) - 1 : e.column;
        bad(e.relocate({ file, line, column, id }));
      }
    }
  };

  let first = true;
  for await (const piece of decodeText(peeked.all)) {
    let text = piece.text;
    if (first) {
      if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
      first = false;
    }
    badLines.push(...piece.bad);
    items.length = 0;
    splitter.push(text, items);
    yield* fromBrackets(items);
  }
  items.length = 0;
  splitter.end(items);
  yield* fromBrackets(items);
  for (const b of badLines.splice(0)) bad(new DataError('invalid-utf8', b.reason, { file, line: b.line, column: b.column }));
}

function fromJsonLine<T>(text: string, line: number, ordinal: number, file: string, builder: TreeBuilder, bad: (e: DataError) => void, make: (text: string, builder: TreeBuilder) => T): Located<T> | null {
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
  const rec = value as Record<string, unknown>;
  const rawId = Object.hasOwn(rec, 'id') ? rec.id : undefined;
  const id = rawId === undefined ? String(ordinal) : typeof rawId === 'string' || (typeof rawId === 'number' && Number.isFinite(rawId)) ? String(rawId) : null;
  if (id === null) {
    bad(new DataError('bad-field', 'expected `id` to be a string or a number', { file, line }));
    return null;
  }
  const tree = Object.hasOwn(rec, 'tree') ? rec.tree : undefined;
  if (typeof tree !== 'string') {
    bad(new DataError('bad-field', 'expected `tree` to be a string holding one bracketed tree', { file, line, id }));
    return null;
  }
  const notText = notWellFormed(id, '`id`') ?? notWellFormed(tree, '`tree`');
  if (notText) {
    bad(new DataError('bad-field', notText, { file, line, id }));
    return null;
  }
  try {
    return { id, ordinal, file, line, column: 1, byPosition: rawId === undefined, value: make(tree, builder) };
  } catch (e) {
    if (!(e instanceof DataError)) throw e;
    bad(new DataError(e.code, `in the \`tree\` string at its line ${e.line}, column ${e.column}: ${e.reason}`, { file, line, id }));
    return null;
  }
}
