/** Small file helpers shared by the writers: digests, atomic writes, cleanup. */
import { createHash } from 'node:crypto';
import { closeSync, existsSync, fsyncSync, openSync, readSync, renameSync, unlinkSync, writeSync } from 'node:fs';

/** sha256 of a file on disk, `sha256:<hex>`. */
export function fileSha256(path: string): string {
  const h = createHash('sha256');
  const fd = openSync(path, 'r');
  const buf = Buffer.allocUnsafe(1 << 20);
  try {
    for (let n; (n = readSync(fd, buf)) > 0; ) h.update(buf.subarray(0, n));
  } finally {
    closeSync(fd);
  }
  return `sha256:${h.digest('hex')}`;
}

export function sha256(bytes: Uint8Array | string): string {
  return `sha256:${createHash('sha256').update(bytes).digest('hex')}`;
}

/** Writes `data` to `path.tmp`, then renames it to `path`: never a half-written file under the final name. */
export function writeFileAtomic(path: string, data: Uint8Array | string): void {
  const tmp = `${path}.tmp`;
  const fd = openSync(tmp, 'w');
  try {
    try {
      const bytes = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
      let off = 0;
      while (off < bytes.length) off += writeSync(fd, bytes, off, bytes.length - off);
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
    renameSync(tmp, path);
  } catch (e) {
    // A full disk must not stay full of half-written files.
    if (existsSync(tmp)) unlinkSync(tmp);
    throw e;
  }
}

export function removeIfExists(path: string): void {
  if (existsSync(path)) unlinkSync(path);
}
