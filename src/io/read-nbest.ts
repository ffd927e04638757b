/**
 * Streams n-best dumps: JSON Lines (fast path: line splitting + JSON.parse)
 * or one top-level JSON array (stream-json's streaming array: never loaded
 * whole); `.gz` by magic bytes; `-` for stdin. Every record comes out either
 * as an NbestRecord or as a RejectRecord naming file, line and reason.
 */
import { Readable } from 'node:stream';
import { streamArray } from 'stream-json/streamers/stream-array.js';
import { DataError } from '../core/errors.js';
import type { CandidateText, NbestRecord, RejectRecord } from '../records.js';
import { decodeText, readBytes } from './open-input.js';

export type NbestItem = { record: NbestRecord } | { reject: RejectRecord };

export interface ReadNbestOptions {
  /** Keep at most this many candidates (0: all). */
  maxCandidates?: number;
  /** Sees the raw bytes of the file (for its digest). */
  tap?: (chunk: Buffer) => void;
}

function reject(file: string, line: number | null, id: string | null, code: string, reason: string): NbestItem {
  return { reject: { file, line, id, code, reason } };
}

/** Checks one decoded record; `where` is how messages name it. */
export function validateNbest(value: unknown, file: string, line: number, index: number, maxCandidates = 0): NbestItem {
  const at = line > 0 ? line : null;
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    return reject(file, at, null, 'bad-json', 'expected a JSON object {"id", "fold", "source", "candidates"}');
  }
  const r = value as Record<string, unknown>;
  const id = typeof r.id === 'string' ? r.id : typeof r.id === 'number' && Number.isFinite(r.id) ? String(r.id) : null;
  if (id === null) return reject(file, at, null, 'bad-field', `expected \`id\` to be a string or a number, got ${JSON.stringify(r.id) ?? 'nothing'}`);
  let fold: number | null = null;
  if (r.fold !== undefined && r.fold !== null) {
    if (typeof r.fold !== 'number' || !Number.isInteger(r.fold) || r.fold < 0) {
      return reject(file, at, id, 'bad-field', `expected \`fold\` to be an integer ≥ 0 or null, got ${JSON.stringify(r.fold)}`);
    }
    fold = r.fold;
  }
  let source: NbestRecord['source'] = null;
  if (r.source !== undefined && r.source !== null) {
    const s = r.source as Record<string, unknown>;
    if (typeof s !== 'object' || typeof s.parser !== 'string' || typeof s.fingerprint !== 'string') {
      return reject(file, at, id, 'bad-field', 'expected `source` to be {"parser": string, "fingerprint": string}');
    }
    source = { parser: s.parser, fingerprint: s.fingerprint };
  }
  if (!Array.isArray(r.candidates)) return reject(file, at, id, 'bad-field', 'expected `candidates` to be a list of {"tree", "score"}');
  const n = maxCandidates > 0 ? Math.min(maxCandidates, r.candidates.length) : r.candidates.length;
  const candidates: CandidateText[] = new Array(n);
  for (let k = 0; k < n; k++) {
    const c = r.candidates[k] as Record<string, unknown> | null;
    if (c === null || typeof c !== 'object') return reject(file, at, id, 'bad-field', `expected candidate ${k} to be an object {"tree", "score"}`);
    if (typeof c.tree !== 'string') return reject(file, at, id, 'bad-field', `expected candidate ${k}'s \`tree\` to be a string`);
    if (typeof c.score !== 'number' || !Number.isFinite(c.score)) {
      return reject(file, at, id, 'bad-field', `expected candidate ${k}'s \`score\` to be a finite number, got ${JSON.stringify(c.score)}`);
    }
    candidates[k] = { tree: c.tree, score: c.score };
  }
  return { record: { id, fold, source, candidates, file, line, index } };
}

/** Yields every record of one dump file, in file order. */
export async function* readNbest(file: string, options: ReadNbestOptions = {}): AsyncGenerator<NbestItem> {
  const max = options.maxCandidates ?? 0;
  const bytes = readBytes(file, options.tap);
  // Peek at the first non-space byte to choose the format.
  const first = await bytes.next();
  if (first.done) return;
  const head = first.value;
  let k = 0;
  while (k < head.length && (head[k] === 0x20 || head[k] === 0x0a || head[k] === 0x0d || head[k] === 0x09)) k++;
  async function* all(): AsyncGenerator<Buffer> {
    yield head;
    yield* bytes;
  }
  if (head[k] === 0x5b /* [ */) {
    yield* readArray(file, all(), max);
    return;
  }
  let index = 0;
  let partial = '';
  let line = 1;
  try {
    for await (const piece of decodeText(all())) {
      const bad = new Map(piece.bad.map((b) => [b.line, b]));
      const text = partial + piece.text;
      line = piece.line;
      let s = 0;
      for (let e = text.indexOf('\n'); e >= 0; e = text.indexOf('\n', s)) {
        const l = text.slice(s, e);
        s = e + 1;
        const b = bad.get(line);
        if (b) yield reject(file, line, null, 'invalid-utf8', b.reason);
        else if (l.length > 0 && !/^\s*$/.test(l)) yield parseLine(l, file, line, index, max);
        if (b || l.trim()) index++;
        line++;
      }
      partial = text.slice(s);
    }
    if (partial.trim()) yield parseLine(partial, file, line, index, max);
  } catch (e) {
    if (e instanceof DataError && e.code === 'truncated') {
      yield reject(file, line, null, 'truncated', `${e.reason}; records after line ${line - 1} are lost`);
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
    // A cut-off last line is the usual cause; say so when it looks like it.
    return reject(file, line, null, 'bad-json', `expected one JSON object per line: ${(e as Error).message}`);
  }
  return validateNbest(value, file, line, index, max);
}

async function* readArray(file: string, bytes: AsyncGenerator<Buffer>, max: number): AsyncGenerator<NbestItem> {
  const stream = Readable.from(bytes).pipe(streamArray.withParserAsStream());
  let index = 0;
  try {
    for await (const item of stream as AsyncIterable<{ key: number; value: unknown }>) {
      index = item.key + 1;
      yield validateNbest(item.value, file, 0, item.key, max);
    }
  } catch (e) {
    const why = e instanceof DataError ? e.reason : (e as Error).message;
    yield reject(file, null, null, e instanceof DataError ? e.code : 'bad-json',
      `expected a well-formed JSON array of n-best records; it breaks after element ${index} (${why}); the rest of the file is lost`);
  }
}
