/**
 * Reads one bracketed tree, `(S (NP (NN warden)) (VP (VBD counted) ...))`,
 * into the compact form.
 *
 * Hot path: one pass over char codes, no regular expressions, no recursion
 * (an explicit stack in the builder), so depth and length are limited only by
 * memory. Line and column are computed only when an error is raised.
 *
 * Accepted: any whitespace layout; an unlabeled outer wrapper `( (S ...) )`
 * (dropped when it holds exactly one constituent, kept as an unlabeled root
 * otherwise); labels and words are runs of characters other than ASCII
 * whitespace and round brackets, so bracket words are written as the field
 * writes them (`-LRB-`, `-RRB-`).
 */
import { DataError } from './errors.js';
import type { Vocabulary } from './interner.js';
import { scratchBuilder, TreeBuilder, treeFromData, treeRoom, type TreeArena, type Tree } from './tree.js';

const OPEN = 40; // (
const CLOSE = 41; // )

/** ASCII whitespace: space, \t, \n, \v, \f, \r. */
export function isSpace(c: number): boolean {
  return c === 32 || (c >= 9 && c <= 13);
}

function isAtomEnd(c: number): boolean {
  return c === OPEN || c === CLOSE || c === 32 || (c >= 9 && c <= 13);
}

/** 1-based line and column (in code points) of `offset` in `text`. */
export function positionAt(text: string, offset: number): { line: number; column: number } {
  let line = 1;
  let lineStart = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      lineStart = i + 1;
    }
  }
  let column = 1;
  for (let i = lineStart; i < offset && i < text.length; i++) {
    const c = text.charCodeAt(i);
    // Count a surrogate pair once.
    if (c >= 0xd800 && c <= 0xdbff && i + 1 < offset) i++;
    column++;
  }
  return { line, column };
}

function describe(text: string, i: number): string {
  if (i >= text.length) return 'the end of the text';
  let j = i;
  while (j < text.length && j - i < 20 && !isSpace(text.charCodeAt(j))) j++;
  return `\`${text.slice(i, Math.max(j, i + 1))}\``;
}

export interface ParseOptions {
  /** Reused scratch builder (saves allocation in a loop). */
  builder?: TreeBuilder;
}

/**
 * Parses exactly one tree from `text` (surrounding whitespace allowed).
 * Throws DataError with line/column relative to `text`.
 */
export function parseTree(text: string, vocab: Vocabulary, options: ParseOptions = {}): Tree {
  const b = options.builder && options.builder.vocab === vocab ? options.builder : scratchBuilder(vocab);
  return finish(b, scan(text, vocab, b));
}

/**
 * Checks that `text` holds exactly one well-formed tree, as parseTree would
 * read it, without building the tree (no allocation per tree: for readers
 * that only need to know the text is good). Throws the same DataErrors.
 */
export function checkTree(text: string, vocab: Vocabulary, builder?: TreeBuilder): void {
  scan(text, vocab, builder && builder.vocab === vocab ? builder : scratchBuilder(vocab));
}

/** Reads the tree into the builder; returns whether it had an unlabeled outer bracket. */
function scan(text: string, vocab: Vocabulary, b: TreeBuilder): boolean {
  b.reset();
  const labels = vocab.labels;
  const words = vocab.words;
  const n = text.length;
  const fail = (code: ConstructorParameters<typeof DataError>[0], reason: string, at: number): never => {
    throw new DataError(code, reason, positionAt(text, at));
  };

  let i = 0;
  while (i < n && isSpace(text.charCodeAt(i))) i++;
  if (i >= n) fail('empty-tree', 'expected a tree starting with `(`, got only whitespace', i);
  if (text.charCodeAt(i) !== OPEN) fail('stray-text', `expected a tree starting with \`(\`, got ${describe(text, i)}`, i);

  let wrapped = false;
  // Offsets of open brackets, for the "opened at" part of error messages.
  const openAt: number[] = [];
  while (i < n) {
    const c = text.charCodeAt(i);
    if (c === OPEN) {
      const at = i;
      i++;
      while (i < n && isSpace(text.charCodeAt(i))) i++;
      if (i >= n) {
        openAt.push(at);
        break;
      }
      const d = text.charCodeAt(i);
      if (d === OPEN) {
        if (b.nodeCount !== 0) {
          fail('missing-label', 'expected a label after `(`, got `(`; only the outermost bracket may be unlabeled', at);
        }
        wrapped = true;
        b.open(labels.intern(''));
      } else if (d === CLOSE) {
        fail(b.nodeCount === 0 ? 'empty-tree' : 'empty-constituent', 'expected a label after `(`, got `)` (an empty constituent)', at);
      } else {
        const s = i;
        while (i < n && !isAtomEnd(text.charCodeAt(i))) i++;
        b.open(labels.internRange(text, s, i));
      }
      openAt.push(at);
    } else if (c === CLOSE) {
      const node = b.current;
      if (!b.hasChildren(node)) {
        fail('empty-constituent', `expected a word or \`(\` inside \`(${labels.name(b.labelOf(node))}\`, got \`)\``, i);
      }
      b.close();
      openAt.pop();
      i++;
      if (b.openCount === 0) {
        while (i < n && isSpace(text.charCodeAt(i))) i++;
        if (i < n) {
          fail(text.charCodeAt(i) === CLOSE ? 'unexpected-close' : 'stray-text',
            `expected the end of the tree after the root's \`)\`, got ${describe(text, i)}`, i);
        }
        return wrapped;
      }
    } else if (isSpace(c)) {
      i++;
    } else {
      const s = i;
      while (i < n && !isAtomEnd(text.charCodeAt(i))) i++;
      if (b.current === 0 && wrapped) {
        fail('missing-label', `expected a constituent inside the unlabeled outer bracket, got the word ${describe(text, s)}`, s);
      }
      b.word(words.internRange(text, s, i));
    }
  }
  const at = openAt[0] ?? 0;
  const p = positionAt(text, at);
  return fail('unbalanced',
    `expected \`)\`: the text ends with ${openAt.length} bracket(s) open (outermost opened at line ${p.line}, column ${p.column})`, n);
}

function finish(b: TreeBuilder, wrapped: boolean): Tree {
  if (!wrapped) return b.finish();
  // Drop the unlabeled wrapper when it holds exactly one constituent.
  const tree = b.finish();
  const first = 1;
  if (tree.end[first] === tree.size && !tree.isWord[first]) return dropRoot(tree, b.arena);
  return tree;
}

/** The same tree without node 0 (whose only child is node 1). */
function dropRoot(t: Tree, arena: TreeArena | null): Tree {
  const n = t.size - 1;
  const w = t.wordNodes.length;
  const { data, at } = treeRoom(arena, 6 * n + w);
  data.set(t.sym.subarray(1), at);
  data.set(t.isWord.subarray(1), at + n);
  data.set(t.start.subarray(1), at + 4 * n);
  data.set(t.stop.subarray(1), at + 5 * n);
  for (let k = 0; k < n; k++) {
    data[at + 2 * n + k] = t.end[k + 1] - 1;
    data[at + 3 * n + k] = t.parent[k + 1] - 1;
  }
  data[at + 3 * n] = -1;
  for (let k = 0; k < w; k++) data[at + 6 * n + k] = t.wordNodes[k] - 1;
  return treeFromData(t.vocab, data, n, w, at);
}
