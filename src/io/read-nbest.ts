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
    yield* readArray(file, all(), max);
    return;
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
