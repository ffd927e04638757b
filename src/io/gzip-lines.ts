/**
 * A gzip file of text lines, written in independent gzip members of about
 * 1 MB each (deterministic bytes, one valid gzip stream), under NAME.tmp until
 * finished; its sha256 as written.
 */
import { createHash } from 'node:crypto';
import { closeSync, openSync, renameSync, writeSync } from 'node:fs';
import { gzipSync } from 'node:zlib';

export class GzipLines {
  private readonly fd: number;
  private parts: string[] = [];
  private size = 0;
  private readonly hash = createHash('sha256');
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
    while (off < z.length) off += writeSync(this.fd, z, off, z.length - off);
    this.parts = [];
    this.size = 0;
  }

  /** Closes and renames into place; returns `sha256:<hex>` of the file. */
  finish(): string {
    this.flush();
    closeSync(this.fd);
    renameSync(`${this.path}.tmp`, this.path);
    return `sha256:${this.hash.digest('hex')}`;
  }

  /** Closes without renaming (a failed run leaves nothing under the final name). */
  abandon(): void {
    closeSync(this.fd);
  }
}
