/**
 * `sheaf status OUTPUT_DIR`: the state of the cluster tasks submitted for a
 * folder — Slurm's word for each (squeue while queued or running, then
 * scontrol while Slurm still remembers the job; there is no accounting
 * storage to ask later) beside what the folder holds: each task's outputs.
 */
import { existsSync, readFileSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { UsageError } from '../core/errors.js';
import { parseJackknifeState } from '../formats/jackknife-state.js';
import { CLUSTER_DIR, parseSubmitted, parseTaskFile, SUBMITTED_FILE, type ClusterTask } from '../formats/task-file.js';
import { fileSha256 } from '../io/files.js';
import { scontrolJobText, squeueText } from '../io/slurm-client.js';
import { parseScontrol, parseSqueue, taskKey, type TaskState } from './slurm-queue.js';

export interface TaskRow {
  job: string;
  /** Array index, or null for a job that is not an array. */
  index: number | null;
  label: string;
  /** Slurm's state word, or `UNKNOWN` when Slurm no longer lists the job. */
  state: string;
  reason: string;
  exitCode: string | null;
  /** What the folder holds of the task's outputs. */
  output: string;
  /** Whether the outputs are all there, made after the submission. */
  done: boolean;
}

export interface StatusReport {
  dir: string;
  command: string;
  submitted: string;
  /** False when squeue could not be run here: states come from the outputs alone. */
  slurm: boolean;
  rows: TaskRow[];
}

/** Whether `file` exists and was written after the submission (2 s of slack for the clocks of a shared file system). */
const since = (file: string, t0: number) => existsSync(file) && statSync(file).mtimeMs >= t0 - 2000;

function outputOf(task: ClusterTask, t0: number, cwd: string): { output: string; done: boolean } {
  const o = task.options as Record<string, any>;
  const at = (p: string) => resolve(cwd, p);
  if (task.run === 'jackknife') {
    const out = at(o.out);
    const stateFile = join(out, 'jackknife.json');
    const state = existsSync(stateFile) ? parseJackknifeState(readFileSync(stateFile, 'utf8')) : null;
    // Made: recorded as made from what the submission planned, and the file is what was recorded.
    const made = (o.only as string[]).map((f) => {
      const p = join(out, f);
      const had = state?.outputs[f];
      const want = task.expect?.[f];
      const ok = Boolean(had && want) && had!.model.fingerprint === want!.model.fingerprint && had!.input === want!.input && had!.nbest === want!.nbest && existsSync(p) && had!.sha256 === fileSha256(p);
      return { f, ok };
    });
    return { output: made.map(({ f, ok }) => `${f} ${ok ? 'made' : 'not yet'}`).join(', '), done: made.every((m) => m.ok) };
  }
  const out = at(o.out);
  if (since(join(out, 'manifest.json'), t0) && (task.run === 'merge') !== existsSync(join(out, 'part.json'))) {
    let shards = '';
    try {
      shards = `, ${JSON.parse(readFileSync(join(out, 'manifest.json'), 'utf8')).shards.length} shard(s)`;
    } catch {
      // an unreadable manifest is named by whoever reads it
    }
    return { output: `${task.run === 'merge' ? 'merged' : 'complete'}${shards}`, done: true };
  }
  if (task.run === 'prepare' && existsSync(join(out, 'journal.jsonl'))) {
    const shards = readFileSync(join(out, 'journal.jsonl'), 'utf8').split('\n').filter((l) => l.trim()).length - 1;
    return { output: `started: ${Math.max(0, shards)} shard(s) complete`, done: false };
  }
  return { output: 'not started', done: false };
}

export async function runStatus(dir: string): Promise<StatusReport> {
  const clusterDir = join(dir, CLUSTER_DIR);
  const subFile = join(clusterDir, SUBMITTED_FILE);
  if (!existsSync(subFile)) throw new UsageError(`\`${dir}\` has no cluster submission (no ${CLUSTER_DIR}/${SUBMITTED_FILE}); submit with \`sheaf jackknife|prepare … --engine slurm\` first`);
  const sub = parseSubmitted(readFileSync(subFile, 'utf8'), subFile);
  const tf = parseTaskFile(readFileSync(join(clusterDir, sub.taskFile), 'utf8'), join(clusterDir, sub.taskFile));
  const t0 = statSync(subFile).mtimeMs;
  const queueText = await squeueText();
  const queue = parseSqueue(queueText ?? '');
  const remembered = new Map<string, Map<string, TaskState>>();
  const rows: TaskRow[] = [];
  for (const job of sub.jobs) {
    const tasks = job.role === 'tasks' ? tf.tasks : tf.merge ? [tf.merge] : [];
    for (const [k, task] of tasks.entries()) {
      const index = job.role === 'tasks' ? k : null;
      const key = taskKey(job.id, index);
      let st = queue.get(key);
      if (!st && queueText !== null) {
        if (!remembered.has(job.id)) remembered.set(job.id, parseScontrol((await scontrolJobText(job.id)) ?? ''));
        st = remembered.get(job.id)!.get(key);
      }
      rows.push({ job: job.id, index, label: task.label, state: st?.state ?? 'UNKNOWN', reason: st?.reason ?? '', exitCode: st?.exitCode ?? null, ...outputOf(task, t0, tf.cwd) });
    }
  }
  return { dir, command: sub.command, submitted: sub.at, slurm: queueText !== null, rows };
}

/** The report as lines for people. */
export function formatStatus(r: StatusReport): string[] {
  const lines = [`sheaf status ${r.dir}: ${r.command}, submitted ${r.submitted}${r.slurm ? '' : ' (squeue cannot be run here: states from the outputs alone)'}`];
  // Slurm's word, with the exit status of a task that ended badly, or the reason it waits or was ended.
  const slurmWord = (x: TaskRow) => {
    if (x.state === 'UNKNOWN') return r.slurm ? 'gone' : '?';
    if (x.exitCode && x.exitCode !== '0:0' && x.state !== 'PENDING' && x.state !== 'RUNNING') return `${x.state} (exit ${x.exitCode})`;
    return x.reason && x.reason !== 'None' ? `${x.state} (${x.reason})` : x.state;
  };
  const ids = r.rows.map((x) => (x.index === null ? x.job : `${x.job}_${x.index}`));
  const words = r.rows.map(slurmWord);
  const w = [Math.max(4, ...ids.map((x) => x.length)), Math.max(4, ...r.rows.map((x) => x.label.length)), Math.max(5, ...words.map((x) => x.length))];
  lines.push(`${'task'.padEnd(w[0])}  ${'what'.padEnd(w[1])}  ${'slurm'.padEnd(w[2])}  output`);
  r.rows.forEach((x, k) => lines.push(`${ids[k].padEnd(w[0])}  ${x.label.padEnd(w[1])}  ${words[k].padEnd(w[2])}  ${x.output}`));
  const done = r.rows.filter((x) => x.done).length;
  lines.push(`${done} of ${r.rows.length} task(s) have their outputs`);
  return lines;
}
