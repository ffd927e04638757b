/** Small file helpers shared by the writers: digests, atomic writes, cleanup. */
import { createHash } from 'node:crypto';
import { closeSync, existsSync, fsyncSync, openSync, readSync, realpathSync, renameSync, unlinkSync, writeSync } from 'node:fs';
import { join, sep } from 'node:path';
import { UsageError } from '../core/errors.js';
import { environmentError } from './fs-faults.js';

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
    throw environmentError(e, path, 'write');
  }
}

/**
 * The path of `name` in folder `dir`, refusing one that leads outside it —
 * `..`, an absolute path, or a symbolic link to elsewhere — since shard and
 * model folders name their own files and a hostile one could make sheaf read
 * (or copy into a model) any file. A missing file is left to the read to report.
 */
export function fileInside(dir: string, name: string): string {
  const path = join(dir, name);
  let base: string;
  let real: string;
  try {
    base = realpathSync(dir);
    real = realpathSync(path);
  } catch {
    if (name.split(/[\\/]/).includes('..') || name.startsWith('/')) throw new UsageError(`\`${name}\` names a file outside \`${dir}\`; expected a plain name inside the folder`);
    return path;
  }
  if (real !== base && !real.startsWith(base + sep)) {
    throw new UsageError(`\`${path}\` leads outside \`${dir}\` (to \`${real}\`); a shard or model folder must hold its own files: copy the file in instead of linking to it`);
  }
  return path;
}

export function removeIfExists(path: string): void {
  if (existsSync(path)) unlinkSync(path);
}
