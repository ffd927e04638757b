/**
 * A file read front to back in chunks (1 MiB), synchronously: byte runs,
 * lines and MessagePack values, with the sha256 of everything read. What
 * `sheaf merge` streams its parts through: one of these per open file per
 * part, so memory follows the number of parts, not the corpus.
 */
import { createHash, type Hash } from 'node:crypto';
import { closeSync, openSync, readSync } from 'node:fs';
import { DataError, UsageError } from '../core/errors.js';
import { MsgpackError, MsgpackReader, type Decoded } from '../formats/msgpack.js';

const CHUNK = 1 << 20;
const utf8 = new TextDecoder('utf-8', { fatal: true });

export class ChunkedFile {
  private fd: number;
  private buf = new Uint8Array(CHUNK);
  private start = 0;
  private end = 0;
  private eof = false;
  private readonly hash: Hash = createHash('sha256');
  private reader: MsgpackReader | null = null;
  /** Bytes consumed so far (taken, or read as lines or values). */
  offset = 0;
  /** Lines read so far. */
  lines = 0;

  constructor(readonly path: string) {
    try {
      this.fd = openSync(path, 'r');
    } catch (e) {
      throw new UsageError(`cannot read \`${path}\`: ${(e as Error).message}`, { cause: e });
    }
  }

  /** Makes at least `need` unconsumed bytes available, if the file has them. */
  private fill(need: number): boolean {
    if (this.end - this.start >= need) return true;
    if (this.start > 0) {
      this.buf.copyWithin(0, this.start, this.end);
      this.end -= this.start;
      this.start = 0;
    }
    if (need > this.buf.length) {
      const b = new Uint8Array(Math.max(need, 2 * this.buf.length));
      b.set(this.buf.subarray(0, this.end));
      this.buf = b;
    }
    while (this.end < need && !this.eof) {
      const n = readSync(this.fd, this.buf, this.end, this.buf.length - this.end, null);
      if (n === 0) this.eof = true;
      else {
        this.hash.update(this.buf.subarray(this.end, this.end + n));
        this.end += n;
      }
    }
    return this.end >= need;
  }

  /** A copy of the next `n` bytes; throws if the file ends first. */
  take(n: number): Uint8Array {
    if (!this.fill(n)) throw new DataError('bad-shard', `the file ends ${n - (this.end - this.start)} byte(s) short of a ${n}-byte record at byte ${this.offset}`, { file: this.path });
    const out = this.buf.slice(this.start, this.start + n);
    this.start += n;
    this.offset += n;
    return out;
  }

  /** The next line without its `\n`, or null at the end of the file. */
  line(): string | null {
    let from = this.start;
    for (;;) {
      const at = this.buf.subarray(from, this.end).indexOf(10);
      if (at >= 0) {
        const nl = from + at;
        const text = this.decode(this.buf.subarray(this.start, nl));
        this.offset += nl + 1 - this.start;
        this.start = nl + 1;
        this.lines++;
        return text;
      }
      const have = this.end - this.start;
      if (!this.fill(have + 1)) {
        if (have === 0) return null;
        throw new DataError('bad-json', `the last line (${have} bytes) has no line end: the file is cut short`, { file: this.path, line: this.lines + 1 });
      }
      from = this.start + have;
    }
  }

  private decode(bytes: Uint8Array): string {
    try {
      return utf8.decode(bytes);
    } catch (e) {
      throw new DataError('invalid-utf8', 'the line is not valid UTF-8', { file: this.path, line: this.lines + 1 }, { cause: e });
    }
  }

  /** The next MessagePack value, or null at the end of the file. */
  value(): Decoded | null {
    this.reader ??= new MsgpackReader(new Uint8Array(0));
    for (;;) {
      if (!this.fill(1)) return null;
      const have = this.end - this.start;
      this.reader.load(this.buf.subarray(this.start, this.end));
      try {
        const v = this.reader.decode();
        this.start += this.reader.offset;
        this.offset += this.reader.offset;
        return v;
      } catch (e) {
        if (!(e instanceof MsgpackError)) throw e;
        if (!e.truncated) throw new DataError('bad-shard', `byte ${this.offset + e.offset}: ${e.reason}`, { file: this.path }, { cause: e });
        if (!this.fill(have + 1)) throw new DataError('bad-shard', `the data ends inside a value at byte ${this.offset}: the file is truncated`, { file: this.path });
      }
    }
  }

  /** True when every byte has been consumed. */
  get atEnd(): boolean {
    return !this.fill(1);
  }

  /** Closes the file; its sha256 once every byte has been read (else null). */
  close(): string | null {
    const whole = this.atEnd;
    closeSync(this.fd);
    return whole ? `sha256:${this.hash.digest('hex')}` : null;
  }
}
