/**
 * Opens an input path as a stream of byte chunks: `-` is stdin, gzip is
 * recognised by its magic bytes (not the file name) and inflated on the fly,
 * and text is validated as UTF-8 line by line so that a bad byte costs one
 * record, not the file.
 */
import { createReadStream } from 'node:fs';
import { isUtf8 } from 'node:buffer';
import { Readable } from 'node:stream';
import { createGunzip } from 'node:zlib';
import { DataError, UsageError } from '../core/errors.js';

const CHUNK = 1 << 20;

async function* rawBytes(path: string): AsyncGenerator<Buffer> {
  const stream = path === '-' ? process.stdin : createReadStream(path, { highWaterMark: CHUNK });
  try {
    for await (const chunk of stream) yield chunk as Buffer;
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    if (code === 'ENOENT') throw new UsageError(`cannot read \`${path}\`: no such file (expected a path to an existing file, or \`-\` for stdin)`, { cause: error });
    if (code === 'EISDIR') throw new UsageError(`cannot read \`${path}\`: it is a directory (expected a file)`, { cause: error });
    if (code === 'EACCES') throw new UsageError(`cannot read \`${path}\`: permission denied`, { cause: error });
    throw error;
  }
}

/**
 * Byte chunks of the file, gunzipped when it starts with the gzip magic bytes.
 * `tap` sees the raw (compressed) bytes, e.g. to digest the input as read.
 */
export async function* readBytes(path: string, tap?: (chunk: Buffer) => void): AsyncGenerator<Buffer> {
  yield* inflateBytes(rawBytes(path), path, tap);
}

/**
 * The same over bytes from anywhere (a file's raw chunks, or a test's):
 * gunzipped when they start with the gzip magic bytes. `path` names them in errors.
 */
export async function* inflateBytes(raw: AsyncIterable<Buffer>, path: string, tap?: (chunk: Buffer) => void): AsyncGenerator<Buffer> {
  const source = tapped(raw, tap);
  // The magic bytes may arrive in separate chunks (a pipe can deliver one byte first).
  let head: Buffer = Buffer.alloc(0);
  while (head.length < 2) {
    const next = await source.next();
    if (next.done) break;
    head = head.length === 0 ? next.value : Buffer.concat([head, next.value]);
  }
  if (head.length === 0) return;
  if (head.length >= 2 && head[0] === 0x1f && head[1] === 0x8b) {
    async function* again(): AsyncGenerator<Buffer> {
      yield head;
      yield* source;
    }
    // pipe() does not pass the source's errors on; forward them so they surface here.
    const input = Readable.from(again());
    const gunzip = createGunzip({ chunkSize: CHUNK });
    input.on('error', (e) => gunzip.destroy(e));
    input.pipe(gunzip);
    try {
      for await (const chunk of gunzip) yield chunk as Buffer;
    } catch (error) {
      const msg = (error as Error).message;
      throw new DataError('truncated', `expected a complete gzip stream: ${msg}`, { file: path }, { cause: error });
    }
    return;
  }
  yield head;
  yield* source;
}

async function* tapped(chunks: AsyncIterable<Buffer>, tap?: (chunk: Buffer) => void): AsyncGenerator<Buffer> {
  for await (const c of chunks) {
    tap?.(c);
    yield c;
  }
}

export interface BadLine {
  line: number;
  column: number;
  reason: string;
}

export interface TextPiece {
  /** Decoded text: whole lines, except when a single line is longer than the chunk size. */
  text: string;
  /** 1-based line number of the first character of `text`. */
  line: number;
  /** Lines of this piece that are not valid UTF-8 (decoded with U+FFFD). */
  bad: BadLine[];
}

/** Offset of the first byte that breaks UTF-8 in `b` (only called on invalid lines). */
function firstInvalid(b: Buffer): number {
  let i = 0;
  while (i < b.length) {
    const c = b[i];
    if (c < 0x80) {
      i++;
      continue;
    }
    const n = c >= 0xc2 && c <= 0xdf ? 1 : c >= 0xe0 && c <= 0xef ? 2 : c >= 0xf0 && c <= 0xf4 ? 3 : 0;
    // isUtf8 on the one sequence also rejects overlong forms and surrogates.
    if (n === 0 || i + n >= b.length || !isUtf8(b.subarray(i, i + n + 1))) return i;
    i += n + 1;
  }
  return b.length;
}

function checkLines(bytes: Buffer, firstLine: number): BadLine[] {
  const bad: BadLine[] = [];
  let line = firstLine;
  let s = 0;
  while (s <= bytes.length) {
    let e = bytes.indexOf(10, s);
    if (e < 0) e = bytes.length;
    const lineBytes = bytes.subarray(s, e);
    if (!isUtf8(lineBytes)) {
      const at = firstInvalid(lineBytes);
      const column = lineBytes.toString('utf8', 0, at).length + 1;
      bad.push({ line, column, reason: `expected UTF-8 text, got the byte 0x${lineBytes[at].toString(16).padStart(2, '0')} that no UTF-8 sequence allows here` });
    }
    line++;
    s = e + 1;
  }
  return bad;
}

function countLines(bytes: Buffer): number {
  let n = 0;
  for (let i = bytes.indexOf(10); i >= 0; i = bytes.indexOf(10, i + 1)) n++;
  return n;
}

/** Decodes byte chunks into text pieces that end at line ends. */
export async function* decodeText(chunks: AsyncIterable<Buffer>): AsyncGenerator<TextPiece> {
  let carry: Buffer | null = null;
  let line = 1;
  const emit = (bytes: Buffer): TextPiece => {
    const valid = isUtf8(bytes);
    const piece: TextPiece = { text: bytes.toString('utf8'), line, bad: valid ? [] : checkLines(bytes, line) };
    line += countLines(bytes);
    return piece;
  };
  // Pieces of a line still open, joined once it ends (joining per chunk would be quadratic for a long line in small chunks).
  const open: Buffer[] = [];
  let openBytes = 0;
  for await (const chunk of chunks) {
    const nl = chunk.indexOf(10);
    if (nl < 0 && (carry?.length ?? 0) + openBytes + chunk.length < CHUNK) {
      open.push(chunk);
      openBytes += chunk.length;
      continue;
    }
    let buf: Buffer = chunk;
    if (carry || open.length) {
      // The open line ends in this chunk: finish it as a piece of its own, so that the rest of the
      // chunk is not copied (joining carry and chunk copied every chunk: 5 % of the main thread).
      const head = nl >= 0 ? chunk.subarray(0, nl + 1) : chunk;
      const joined = Buffer.concat([...(carry ? [carry] : []), ...open, head]);
      carry = null;
      open.length = 0;
      openBytes = 0;
      if (nl >= 0) {
        yield emit(joined);
        buf = chunk.subarray(nl + 1);
      } else buf = joined;
    }
    let cut = buf.lastIndexOf(10) + 1;
    if (cut === 0) {
      if (buf.length < CHUNK) {
        carry = buf.length > 0 ? Buffer.from(buf) : null;
        continue;
      }
      // One very long line: cut at a character boundary and go on.
      cut = buf.length;
      while (cut > 0 && (buf[cut - 1] & 0xc0) === 0x80) cut--;
      if (cut > 0 && buf[cut - 1] >= 0xc0) cut--;
      if (cut === 0) cut = buf.length;
    }
    carry = cut < buf.length ? Buffer.from(buf.subarray(cut)) : null;
    yield emit(buf.subarray(0, cut));
  }
  if (open.length) carry = Buffer.concat([...(carry ? [carry] : []), ...open]);
  if (carry && carry.length > 0) yield emit(carry);
}
