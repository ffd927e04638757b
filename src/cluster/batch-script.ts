/**
 * The batch scripts sheaf writes for Slurm. They hold no text of the user's:
 * no path, command or setting, only sheaf's own fixed words and the name of
 * the task file beside them (a name sheaf chose). A task runs
 * `sheaf task TASK_FILE --index $SLURM_ARRAY_TASK_ID` (or `--merge`) in the
 * folder the job was submitted to run in (`sbatch --chdir`); the node and
 * sheaf to run come from the environment sheaf submits with (SHEAF_NODE,
 * SHEAF_CLI), always expanded inside double quotes, so no value is ever
 * parsed by the shell.
 *
 * Pure: no node: imports.
 */

export const LOG_DIR = 'logs';

export interface BatchScript {
  /** The job's name in the queue. */
  jobName: 'sheaf-jackknife' | 'sheaf-prepare' | 'sheaf-merge';
  /** The task file's name, in the same folder (a plain name sheaf chose). */
  taskFile: string;
  /** Array tasks 0 … array − 1, or null for one task (the merge). */
  array: number | null;
}

const PLAIN = /^[A-Za-z0-9][\w.-]*$/;

export function batchScript(s: BatchScript): string {
  if (!PLAIN.test(s.taskFile)) throw new Error(`a task file name sheaf chose must be plain, got ${JSON.stringify(s.taskFile)}`);
  if (s.array !== null && !(Number.isInteger(s.array) && s.array >= 1)) throw new Error(`expected an array size ≥ 1, got ${s.array}`);
  const log = s.array === null ? `${LOG_DIR}/${s.jobName}-%j.out` : `${LOG_DIR}/${s.jobName}-%A_%a.out`;
  const run = s.array === null ? `--merge` : `--index "$SLURM_ARRAY_TASK_ID"`;
  return [
    '#!/bin/sh',
    '# Written by sheaf. This script holds no text of the user\'s: the task file',
    '# beside it says what each task does, and sheaf reads it as JSON.',
    `#SBATCH --job-name=${s.jobName}`,
    ...(s.array === null ? [] : [`#SBATCH --array=0-${s.array - 1}`]),
    `#SBATCH --output=${log}`,
    'if [ -z "${SHEAF_NODE:-}" ] || [ -z "${SHEAF_CLI:-}" ]; then',
    '  echo "sheaf task: SHEAF_NODE and SHEAF_CLI are not set (sheaf submits with them; was the environment not exported?)" >&2',
    '  exit 2',
    'fi',
    `exec "$SHEAF_NODE" "$SHEAF_CLI" task ${s.taskFile} ${run}`,
    '',
  ].join('\n');
}
