/**
 * What sheaf hands to a cluster: the task file (`sheaf-tasks/1`) that every
 * batch script runs `sheaf task` on, and the record of what was submitted
 * (`sheaf-submitted/1`). The batch scripts hold no text of the user's: paths,
 * commands and settings travel in the task file, as JSON, and reach sheaf's
 * own option objects without passing through a shell.
 *
 *   {"format": "sheaf-tasks/1", "command": "prepare", "cwd": "/home/warden/huts",
 *    "tasks": [{"label": "part 0 of 4", "run": "prepare", "options": {…}}, …],
 *    "merge": {"label": "merge", "run": "merge", "options": {…}} | null}
 *
 *   {"format": "sheaf-submitted/1", "command": "prepare", "at": "2026-12-02T10:00:00.000Z", "taskFile": "prepare-tasks.json",
 *    "jobs": [{"role": "tasks", "id": "41", "script": "prepare.sbatch", "tasks": 4},
 *             {"role": "merge", "id": "42", "script": "merge.sbatch", "tasks": 1, "after": "41"}]}
 *
 * Pure: no node: imports.
 */
import { UsageError } from '../core/errors.js';

export const TASKS_FORMAT = 'sheaf-tasks/1';
export const SUBMITTED_FORMAT = 'sheaf-submitted/1';
/** The folder, inside the output folder, that holds scripts, task files, logs and the submission record. */
export const CLUSTER_DIR = 'slurm';
export const SUBMITTED_FILE = 'submitted.json';

export type TaskRun = 'jackknife' | 'prepare' | 'merge';

export interface ClusterTask {
  /** What the task is, for people (`fold 3`, `part 2 of 4`, `merge`). */
  label: string;
  run: TaskRun;
  /** The options object of runJackknife / runPrepare / runMerge (paths as the user gave them, relative to `cwd`; no worker count: a task uses the CPUs Slurm gives it). */
  options: Record<string, unknown>;
  /** jackknife: per output, what jackknife.json must record once it is made (model, input digest, depth). */
  expect?: Record<string, { fold: number | null; model: { parser: string; fingerprint: string }; input: string; nbest: number }>;
}

export interface TaskFile {
  format: typeof TASKS_FORMAT;
  command: 'jackknife' | 'prepare';
  /** The folder sheaf was run from: tasks run there, so paths mean what they meant to the user (and manifests record them as given). */
  cwd: string;
  tasks: ClusterTask[];
  merge: ClusterTask | null;
}

export interface SubmittedJob {
  role: 'tasks' | 'merge';
  id: string;
  script: string;
  /** Array tasks (1 for a job that is not an array). */
  tasks: number;
  /** The job this one waits for (afterok), if any. */
  after: string | null;
}

export interface Submitted {
  format: typeof SUBMITTED_FORMAT;
  command: 'jackknife' | 'prepare';
  /** When it was submitted (ISO 8601), for people; outputs are compared with this file's own time. */
  at: string;
  taskFile: string;
  jobs: SubmittedJob[];
}

export function formatTaskFile(t: TaskFile): string {
  return JSON.stringify(t, null, 2) + '\n';
}

export function formatSubmitted(s: Submitted): string {
  return JSON.stringify(s, null, 2) + '\n';
}

const RUNS: TaskRun[] = ['jackknife', 'prepare', 'merge'];

function checkTask(t: any, where: string, fail: (why: string) => never): ClusterTask {
  if (!t || typeof t !== 'object' || typeof t.label !== 'string' || !RUNS.includes(t.run) || !t.options || typeof t.options !== 'object' || Array.isArray(t.options)) {
    fail(`${where}: expected {"label", "run" (one of ${RUNS.join(', ')}), "options"}`);
  }
  return t as ClusterTask;
}

/** Parses and checks a task file (`file` names it in errors). */
export function parseTaskFile(text: string, file: string): TaskFile {
  const fail = (why: string): never => {
    throw new UsageError(`${file}: not a usable task file: ${why} (task files are written by \`sheaf jackknife|prepare --engine slurm\`)`);
  };
  let raw: any;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    return fail(`not JSON (${(e as Error).message})`);
  }
  if (!raw || raw.format !== TASKS_FORMAT) return fail(`expected format \`${TASKS_FORMAT}\``);
  if (raw.command !== 'jackknife' && raw.command !== 'prepare') return fail('expected `command` to be `jackknife` or `prepare`');
  if (typeof raw.cwd !== 'string' || !raw.cwd.startsWith('/')) return fail('expected `cwd` to be an absolute path');
  if (!Array.isArray(raw.tasks) || raw.tasks.length === 0) return fail('expected a non-empty `tasks` list');
  raw.tasks.forEach((t: unknown, k: number) => checkTask(t, `task ${k}`, fail));
  if (raw.merge !== null) checkTask(raw.merge, 'the merge task', fail);
  return raw as TaskFile;
}

/** Parses and checks a submission record. */
export function parseSubmitted(text: string, file: string): Submitted {
  const fail = (why: string): never => {
    throw new UsageError(`${file}: not a usable submission record: ${why}`);
  };
  let raw: any;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    return fail(`not JSON (${(e as Error).message})`);
  }
  if (!raw || raw.format !== SUBMITTED_FORMAT) return fail(`expected format \`${SUBMITTED_FORMAT}\``);
  if (raw.command !== 'jackknife' && raw.command !== 'prepare') return fail('expected `command` to be `jackknife` or `prepare`');
  if (typeof raw.taskFile !== 'string' || !/^[\w.-]+$/.test(raw.taskFile)) return fail('expected `taskFile` to be a plain file name');
  if (!Array.isArray(raw.jobs) || raw.jobs.some((j: any) => !j || (j.role !== 'tasks' && j.role !== 'merge') || typeof j.id !== 'string' || !/^\d+$/.test(j.id) || !Number.isInteger(j.tasks) || j.tasks < 1)) {
    return fail('expected `jobs`: [{"role": "tasks" | "merge", "id": "<digits>", "script", "tasks", "after"}]');
  }
  return raw as Submitted;
}
