/**
 * Streams n-best dumps: JSON Lines (fast path: line splitting + JSON.parse)
 * or one top-level JSON array (stream-json's streaming array: never loaded
 * whole); `.gz` by magic bytes; `-` for stdin. Every record comes out either
 * as an NbestRecord or as a RejectRecord naming file, line and reason (the
 * checks are the read-nbest stage's, stages/read-nbest.ts).
 */
import { Readable } from 'node:stream';
import { streamArray } from 'stream-json/streamers/stream-array.js';
import { DataError } from '../core/errors.js';
import { checkNbestRecord, type NbestItem } from '../stages/read-nbest.js';
import { inflateBytes, readBytes } from './open-input.js';
import { jsonLines } from './read-jsonl.js';

export type { NbestItem };

export interface ReadNbestOptions {
  /** Keep at most this many candidates (0: all). */
  maxCandidates?: number;
  /** Sees the raw bytes of the file (for its digest). */
  tap?: (chunk: Buffer) => void;
  /** Raw bytes to read instead of opening `file` (gzip still recognised; tests feed random chunks here). */
  source?: AsyncIterable<Buffer>;
}

function reject(file: string, line: number | null, code: 'bad-json' | 'invalid-utf8' | 'truncated', reason: string): NbestItem {
  return { reject: { file, line, column: null, id: null, code, reason } };
}

/** Yields every record of one dump file, in file order. */
export async function* readNbest(file: string, options: ReadNbestOptions = {}): AsyncGenerator<NbestItem> {
  const max = options.maxCandidates ?? 0;
  const bytes = options.source ? inflateBytes(options.source, file, options.tap) : readBytes(file, options.tap);
  // Peek at the first non-space byte to choose the format.
  let head: Buffer | null = null;
  const firstChunks: Buffer[] = [];
  let k = 0;
  for (;;) {
    const next = await bytes.next();
    if (next.done) break;
    firstChunks.push(next.value);
    head = next.value;
    k = 0;
    // Skip a UTF-8 byte order mark and white space.
    if (firstChunks.length === 1 && head.length >= 3 && head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf) k = 3;
    while (k < head.length && (head[k] === 0x20 || head[k] === 0x0a || head[k] === 0x0d || head[k] === 0x09)) k++;
    if (k < head.length) break;
  }
  if (head === null || k >= head.length) return;
  async function* all(): AsyncGenerator<Buffer> {
    yield* firstChunks;
    yield* bytes;
  }
  if (head[k] === 0x5b /* [ */) {
    // A JSON Lines dump may also start with `[` (a bad first record): peek at its first lines to tell.
    let peeked = firstChunks.reduce((a, c) => a + c.length, 0);
    while (peeked < PEEK_LIMIT && newlines(firstChunks) < 3) {
      const next = await bytes.next();
      if (next.done) break;
      firstChunks.push(next.value);
      peeked += next.value.length;
    }
    if (!looksLikeJsonLines(Buffer.concat(firstChunks))) {
      yield* readArray(file, all(), max);
      return;
    }
  }
  let index = 0;
  let lastLine = 0;
  try {
    for await (const l of jsonLines(all())) {
      lastLine = l.line;
      if (l.bad) yield reject(file, l.line, 'invalid-utf8', l.bad.reason);
      else yield parseLine(l.text!, file, l.line, index, max);
      index++;
    }
  } catch (e) {
    if (e instanceof DataError && e.code === 'truncated') {
      yield reject(file, lastLine + 1, 'truncated', `${e.reason}; records after line ${lastLine} are lost`);
      return;
    }
    throw e;
  }
}

/** Bytes peeked at most to tell a JSON array from JSON Lines whose first line starts with `[`. */
const PEEK_LIMIT = 8 << 20;

function newlines(chunks: Buffer[]): number {
  let n = 0;
  for (const c of chunks) for (let i = c.indexOf(10); i >= 0; i = c.indexOf(10, i + 1)) n++;
  return n;
}

const parses = (text: string): { ok: boolean; value?: unknown } => {
  try {
    return { ok: true, value: JSON.parse(text) };
  } catch {
    return { ok: false };
  }
};

/**
 * Whether text that starts with `[` is JSON Lines rather than one JSON
 * array: its first line is a whole JSON value and more lines follow, or its
 * first line is a broken one (not a lone `[`) and its second line is a whole
 * JSON object. An array laid out over lines never has a first line that
 * parses alone with more after it, nor a later element line that parses
 * alone (commas separate elements).
 */
export function looksLikeJsonLines(bytes: Buffer): boolean {
  let start = bytes.length >= 3 && bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? 3 : 0;
  const lines: string[] = [];
  while (lines.length < 2) {
    const e = bytes.indexOf(10, start);
    if (e < 0) break;
    const line = bytes.toString('utf8', start, e).trim();
    if (line) lines.push(line);
    start = e + 1;
  }
  if (lines.length === 0) return false;
  const rest = bytes.toString('utf8', start).trim();
  const first = parses(lines[0]);
  if (first.ok) return lines.length > 1 || rest.length > 0;
  if (lines[0] === '[' || lines.length < 2) return false;
  const second = parses(lines[1]);
  return second.ok && second.value !== null && typeof second.value === 'object' && !Array.isArray(second.value);
}

function parseLine(text: string, file: string, line: number, index: number, max: number): NbestItem {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    return reject(file, line, 'bad-json', `expected one JSON object per line: ${(e as Error).message}`);
  }
  return checkNbestRecord(value, file, line, index, max);
}

async function* readArray(file: string, bytes: AsyncGenerator<Buffer>, max: number): AsyncGenerator<NbestItem> {
  // pipe() does not pass errors on: a truncated gzip would otherwise be an unhandled stream error.
  const source = Readable.from(bytes);
  const stream = streamArray.withParserAsStream();
  source.on('error', (e) => stream.destroy(e));
  source.pipe(stream);
  let index = 0;
  try {
    for await (const item of stream as AsyncIterable<{ key: number; value: unknown }>) {
      index = item.key + 1;
      yield checkNbestRecord(item.value, file, 0, item.key, max);
    }
  } catch (e) {
    const why = e instanceof DataError ? e.reason : (e as Error).message;
    yield reject(file, null, e instanceof DataError && e.code === 'truncated' ? 'truncated' : 'bad-json',
      `expected a well-formed JSON array of n-best records; it breaks after element ${index} (${why}); the rest of the file is lost`);
  }
}
