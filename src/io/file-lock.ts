/**
 * A lock file for read-modify-write of a small shared file by processes that
 * may run at once (cluster tasks writing jackknife.json): created with
 * O_EXCL, removed when done. A lock older than `staleMs` is taken to be left
 * by a process that died and is broken.
 */
import { closeSync, openSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { hostname } from 'node:os';
import { UsageError } from '../core/errors.js';

export async function withFileLock<T>(lock: string, fn: () => T, o: { timeoutMs?: number; staleMs?: number } = {}): Promise<T> {
  const timeoutMs = o.timeoutMs ?? 120_000;
  const staleMs = o.staleMs ?? 600_000;
  const started = Date.now();
  for (let wait = 20; ; wait = Math.min(wait * 2, 500)) {
    try {
      const fd = openSync(lock, 'wx');
      writeSync(fd, `${hostname()} ${process.pid}\n`);
      closeSync(fd);
      break;
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw e;
      try {
        if (Date.now() - statSync(lock).mtimeMs > staleMs) unlinkSync(lock);
      } catch {
        // gone meanwhile: try again
      }
      if (Date.now() - started > timeoutMs) throw new UsageError(`\`${lock}\` has been held by another sheaf process for over ${Math.round(timeoutMs / 1000)} s; if no sheaf process is running on this folder, remove it`);
      await new Promise((r) => setTimeout(r, wait));
    }
  }
  try {
    return fn();
  } finally {
    unlinkSync(lock);
  }
}
