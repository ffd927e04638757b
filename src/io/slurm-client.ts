/**
 * The Slurm commands sheaf runs — sbatch, squeue, scontrol — always as
 * argument arrays (never through a shell), found on the PATH.
 */
import { execFile } from 'node:child_process';
import { accessSync, constants, statSync } from 'node:fs';
import { userInfo } from 'node:os';
import { delimiter, join } from 'node:path';
import { UsageError } from '../core/errors.js';

/** The full path of `name` on the PATH, or null. */
export function onPath(name: string, path = process.env.PATH ?? ''): string | null {
  for (const d of path.split(delimiter)) {
    if (!d) continue;
    const f = join(d, name);
    try {
      if (statSync(f).isFile()) {
        accessSync(f, constants.X_OK);
        return f;
      }
    } catch {
      // not here
    }
  }
  return null;
}

/** Refuses plainly when this machine cannot submit to Slurm. */
export function requireSbatch(): string {
  const sbatch = onPath('sbatch');
  if (!sbatch) {
    throw new UsageError('`--engine slurm` needs Slurm, and `sbatch` is not on the PATH of this machine: run sheaf where you submit cluster jobs (a login node), or leave out `--engine slurm` to run here');
  }
  return sbatch;
}

function run(file: string, args: string[], env?: NodeJS.ProcessEnv): Promise<{ code: number; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    execFile(file, args, { env: env ?? process.env, timeout: 60_000, maxBuffer: 64 << 20 }, (error, stdout, stderr) => {
      if (error && typeof (error as NodeJS.ErrnoException).code === 'string') return reject(error);
      resolve({ code: error ? (typeof error.code === 'number' ? error.code : 1) : 0, stdout: String(stdout), stderr: String(stderr) });
    });
  });
}

/**
 * Submits `script` with `sbatch --parsable`; `options` come first (sheaf's,
 * then the user's). Returns the job id.
 */
export async function sbatch(sbatchPath: string, options: string[], script: string, env: NodeJS.ProcessEnv): Promise<string> {
  const r = await run(sbatchPath, ['--parsable', ...options, script], env);
  const id = /^(\d+)(;\S+)?\s*$/.exec(r.stdout.trim())?.[1];
  if (r.code !== 0 || !id) {
    throw new UsageError(`sbatch refused \`${script}\` (status ${r.code}): ${(r.stderr || r.stdout).trim() || 'no message'}`);
  }
  return id;
}

/** `squeue` for this user, one line per array element: `id|state|reason`; null when squeue cannot be run. */
export async function squeueText(): Promise<string | null> {
  const squeue = onPath('squeue');
  if (!squeue) return null;
  const r = await run(squeue, ['-h', '-r', '-u', userInfo().username, '-o', '%i|%T|%r']);
  return r.code === 0 ? r.stdout : null;
}

/** `scontrol -o show job ID`, or null when Slurm no longer knows the job (or scontrol is missing). */
export async function scontrolJobText(id: string): Promise<string | null> {
  const scontrol = onPath('scontrol');
  if (!scontrol) return null;
  const r = await run(scontrol, ['-o', 'show', 'job', id]);
  return r.code === 0 ? r.stdout : null;
}
