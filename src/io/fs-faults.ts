/**
 * Faults of the environment (errno codes of file operations) as sentences a
 * user can act on: which path, what went wrong, what to do. Everything else
 * is passed on unchanged.
 */
import { mkdirSync, readdirSync, rmSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { EnvironmentError } from '../core/errors.js';

const WHAT: Record<string, string> = {
  EACCES: 'permission denied; make it writable (and its folder searchable) for this user, or choose another place',
  EPERM: 'the operation is not permitted there; choose another place',
  EEXIST: 'a file of that name is in the way where a folder is expected; choose a folder path, or move the file',
  ENOTDIR: 'a part of that path is a file, not a folder; choose a folder path',
  EISDIR: 'it is a folder where a file is expected',
  ENOSPC: 'the disk is full',
  EDQUOT: 'the disk quota is used up',
  EROFS: 'it is on a read-only file system; choose a place on a writable one',
  EMFILE: 'too many files are open; raise the limit (`ulimit -n`) or run fewer jobs at once',
  ENFILE: 'the system has too many files open; try again when fewer are',
  ENAMETOOLONG: 'the path is too long; choose a shorter one',
  ELOOP: 'the path holds a loop of symbolic links',
  EIO: 'the device reported an input/output error; check the disk',
};

const TRANSIENT = new Set(['EMFILE', 'ENFILE', 'EIO']);

/** Whether `e` is a file-system fault of the environment (not a bug, not bad data). */
export function isEnvironmentFault(e: unknown): e is NodeJS.ErrnoException {
  return e instanceof Error && typeof (e as NodeJS.ErrnoException).code === 'string' && Object.hasOwn(WHAT, (e as NodeJS.ErrnoException).code!);
}

/**
 * `e` as an EnvironmentError naming a path (the error's own, else `path`)
 * and what to do; `then` adds what happens next (e.g. how to resume). Other
 * errors come back unchanged.
 */
export function environmentError(e: unknown, path: string, doing: string, then = ''): unknown {
  if (e instanceof EnvironmentError) {
    // Named deeper down (the file being written); the command adds how to go on.
    if (!then || !passes(e.code) || e.then) return e;
    return new EnvironmentError(e.code, e.path, sentence(e.code, e.path, e.doing || doing, then), { cause: e.cause ?? e, doing: e.doing || doing, then });
  }
  if (!isEnvironmentFault(e)) return e;
  const code = e.code!;
  // Files are written under NAME.tmp and renamed: the user knows them by NAME.
  const where = e.path ? e.path.replace(/\.tmp$/, '') : path;
  return new EnvironmentError(code, where, sentence(code, where, doing, then), { cause: e, doing, then });
}

/** Faults that pass with time or room: a full disk, too many open files, a device error. */
const passes = (code: string) => code === 'ENOSPC' || code === 'EDQUOT' || TRANSIENT.has(code);

function sentence(code: string, where: string, doing: string, then: string): string {
  // `then` (how to go on) follows faults that pass.
  const full = code === 'ENOSPC' || code === 'EDQUOT' ? `; free some space${then ? ` and ${then}` : ''}` : then && TRANSIENT.has(code) ? `; ${then}` : '';
  return `cannot ${doing} \`${where}\`: ${WHAT[code]}${full} (${code})`;
}

/** Runs `fn`; an environment fault becomes an EnvironmentError naming `path`. */
export function onPath<T>(path: string, doing: string, fn: () => T): T {
  try {
    return fn();
  } catch (e) {
    throw environmentError(e, path, doing);
  }
}

/**
 * Makes a folder and its parents, one level at a time from the nearest
 * existing folder, so a fault names the folder that could not be made.
 * (Node's recursive mkdirSync never returns on file systems where mkdir
 * fails with ENOENT, such as /proc: `split -o /proc/x` spun forever.)
 */
export function makeFolder(path: string): void {
  const missing: string[] = [];
  let p = resolve(path);
  for (;;) {
    try {
      statSync(p);
      break;
    } catch {
      missing.push(p);
      const up = dirname(p);
      if (up === p) break;
      p = up;
    }
  }
  for (let i = missing.length - 1; i >= 0; i--) {
    try {
      mkdirSync(missing[i]);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code !== 'EEXIST') throw environmentError(e, missing[i], 'make the folder');
    }
  }
}

/**
 * Removes the files of a command's own under a temporary name (`owned`,
 * names ending in `.tmp`) directly in `dir`, but those `keep` names: after a
 * failed run, so a full disk does not stay full of half-written files. Other
 * files, the user's among them, are left alone. Never throws.
 */
export function removeTemporaries(dir: string, owned: RegExp, keep: (name: string) => boolean = () => false): void {
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return;
  }
  for (const f of names) {
    if (!f.endsWith('.tmp') || !owned.test(f) || keep(f)) continue;
    try {
      rmSync(join(dir, f), { force: true });
    } catch {
      // Left for the next run, which starts over.
    }
  }
}
