/**
 * A gzip file of text lines, written in independent gzip members of about
 * 1 MB each (deterministic bytes, one valid gzip stream), under NAME.tmp until
 * finished; its sha256 as written.
 */
import { createHash } from 'node:crypto';
import { closeSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { environmentError } from './fs-faults.js';

export class GzipLines {
  private readonly fd: number;
  private parts: string[] = [];
  private size = 0;
  private readonly hash = createHash('sha256');
  private closed = false;
  lines = 0;

  constructor(private readonly path: string, private readonly level = 6) {
    this.fd = openSync(`${path}.tmp`, 'w');
  }

  line(text: string): void {
    this.parts.push(text, '\n');
    this.size += text.length + 1;
    this.lines++;
    if (this.size >= 1 << 20) this.flush();
  }

  private flush(): void {
    if (this.size === 0) return;
    const z = gzipSync(Buffer.from(this.parts.join(''), 'utf8'), { level: this.level });
    this.hash.update(z);
    let off = 0;
    try {
      while (off < z.length) off += writeSync(this.fd, z, off, z.length - off);
    } catch (e) {
      throw environmentError(e, this.path, 'write');
    }
    this.parts = [];
    this.size = 0;
  }

  /** Closes and renames into place; returns `sha256:<hex>` of the file. */
  finish(): string {
    this.flush();
    this.closed = true;
    closeSync(this.fd);
    try {
      renameSync(`${this.path}.tmp`, this.path);
    } catch (e) {
      throw environmentError(e, this.path, 'write');
    }
    return `sha256:${this.hash.digest('hex')}`;
  }

  /** Closes and removes the temporary file (a failed run leaves nothing under the final name, nor a half-written file). */
  abandon(): void {
    if (!this.closed) {
      this.closed = true;
      closeSync(this.fd);
    }
    rmSync(`${this.path}.tmp`, { force: true });
  }
}
