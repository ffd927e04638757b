/**
 * `sheaf task TASK_FILE --index I | --merge`: what a batch script runs on a
 * cluster node. The task file (written by the submission) says everything;
 * the task runs in the folder sheaf was submitted from, with the CPUs Slurm
 * gave it (SLURM_CPUS_PER_TASK, else 1) as workers.
 */
import { existsSync, readFileSync } from 'node:fs';
import { UsageError } from '../core/errors.js';
import { parseTaskFile, type ClusterTask } from '../formats/task-file.js';
import { runJackknife, type JackknifeOptions } from '../jackknife/run-jackknife.js';
import { runMerge, type MergeOptions } from '../merge/run-merge.js';
import { runPrepare, type PrepareOptions } from '../prepare/run-prepare.js';

export interface TaskOptions {
  file: string;
  index?: number;
  merge?: boolean;
}

/** Workers for a task: the CPUs Slurm allotted to it. */
export function taskWorkers(env: NodeJS.ProcessEnv = process.env): number {
  const n = Number(env.SLURM_CPUS_PER_TASK);
  return Number.isInteger(n) && n >= 1 ? Math.min(n, 256) : 1;
}

export async function runTask(o: TaskOptions, log: (line: string) => void = () => {}): Promise<ClusterTask> {
  if (!existsSync(o.file)) throw new UsageError(`no task file \`${o.file}\` (the batch script runs in the folder it was submitted to run in, beside its task file)`);
  const tf = parseTaskFile(readFileSync(o.file, 'utf8'), o.file);
  let task: ClusterTask;
  if (o.merge) {
    if (!tf.merge) throw new UsageError(`${o.file} has no merge task`);
    task = tf.merge;
  } else {
    const k = o.index;
    if (k === undefined || !Number.isInteger(k) || k < 0 || k >= tf.tasks.length) throw new UsageError(`expected \`--index\` from 0 to ${tf.tasks.length - 1} (the tasks of ${o.file}), got \`${o.index}\``);
    task = tf.tasks[k];
  }
  if (!existsSync(tf.cwd)) throw new UsageError(`the folder the task was submitted from, \`${tf.cwd}\`, is not visible on this node; sheaf's cluster tasks need a file system shared with the submitting machine`);
  process.chdir(tf.cwd);
  log(`sheaf task: ${task.label} (${task.run})`);
  const workers = taskWorkers();
  if (task.run === 'jackknife') await runJackknife({ ...(task.options as unknown as JackknifeOptions), workers }, log);
  else if (task.run === 'prepare') await runPrepare({ ...(task.options as unknown as PrepareOptions), workers });
  else await runMerge(task.options as unknown as MergeOptions);
  return task;
}
