/**
 * Reading Slurm's own view of jobs, as text: `squeue -h -r -o '%i|%T|%r'`
 * (one line per array element: `41_3|RUNNING|None`) and
 * `scontrol -o show job ID` (one line per job record, `Key=Value` fields;
 * array elements carry ArrayJobId and ArrayTaskId, which for elements not
 * yet split off is a range such as `2-3` or `4,6-9%2`). There is no
 * accounting storage on the single-node set-up, so no sacct.
 *
 * Pure: no node: imports.
 */

export interface TaskState {
  /** Slurm's state word: PENDING, RUNNING, COMPLETED, FAILED, CANCELLED, TIMEOUT, OUT_OF_MEMORY … */
  state: string;
  reason: string;
  /** `status:signal`, where Slurm gave it. */
  exitCode: string | null;
}

/** Task key: `<arrayJobId>_<index>` for an array element, the job id otherwise. */
export const taskKey = (job: string, index: number | null) => (index === null ? job : `${job}_${index}`);

/** `squeue -h -r -o '%i|%T|%r'` → task key → state. */
export function parseSqueue(text: string): Map<string, TaskState> {
  const out = new Map<string, TaskState>();
  for (const line of text.split('\n')) {
    const [id, state, reason] = line.trim().split('|');
    if (!id || !state) continue;
    const m = /^(\d+)(?:_(\d+))?$/.exec(id);
    if (!m) continue;
    out.set(taskKey(m[1], m[2] === undefined ? null : Number(m[2])), { state, reason: reason ?? '', exitCode: null });
  }
  return out;
}

/** The indices of an ArrayTaskId value: `3`, `2-3`, `0,4-6`, `0-9%2`. */
export function arrayIndices(spec: string): number[] {
  const out: number[] = [];
  for (const part of spec.replace(/%\d+$/, '').split(',')) {
    const m = /^(\d+)(?:-(\d+))?(?::(\d+))?$/.exec(part);
    if (!m) continue;
    const a = Number(m[1]);
    const b = m[2] === undefined ? a : Number(m[2]);
    const step = m[3] === undefined ? 1 : Number(m[3]);
    for (let k = a; k <= b && out.length < 1_000_000; k += step) out.push(k);
  }
  return out;
}

/** `scontrol -o show job ID` → task key → state (array records expanded to their elements). */
export function parseScontrol(text: string): Map<string, TaskState> {
  const out = new Map<string, TaskState>();
  const field = (line: string, key: string) => new RegExp(`(?:^|\\s)${key}=(\\S*)`).exec(line)?.[1] ?? null;
  for (const line of text.split('\n')) {
    const jobId = field(line, 'JobId');
    const state = field(line, 'JobState');
    if (!jobId || !state) continue;
    const s: TaskState = { state, reason: field(line, 'Reason') ?? '', exitCode: field(line, 'ExitCode') };
    const arrayJob = field(line, 'ArrayJobId');
    const arrayTask = field(line, 'ArrayTaskId');
    if (arrayJob && arrayTask) for (const k of arrayIndices(arrayTask)) out.set(taskKey(arrayJob, k), s);
    else out.set(jobId, s);
  }
  return out;
}
