/**
 * `--engine slurm`: the work of `jackknife` or `prepare` as Slurm jobs.
 * sheaf decides what to run here, writes a task file and batch scripts into
 * OUTPUT_DIR/slurm/, submits them with sbatch (the user's `--slurm-opt`
 * passed through) and records the job ids in slurm/submitted.json, which
 * `sheaf status` reads.
 *
 * - jackknife: one array task per stale fold, and one more for the stale
 *   `--parse` files (the folds' models are recorded in the plan now: they
 *   are fixed by the training parts and the parser, not by running it);
 * - prepare `--tasks N`: an array job of N parts (`--part I/N`, each into
 *   slurm/parts/part-I) and a merge job that runs once all of them succeed
 *   (`--dependency=afterok`, and is cancelled if one fails).
 */
import { existsSync, mkdirSync, readFileSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { UsageError } from '../core/errors.js';
import { MAX_PARTS } from '../formats/part-file.js';
import { CLUSTER_DIR, formatSubmitted, formatTaskFile, parseSubmitted, SUBMITTED_FILE, SUBMITTED_FORMAT, TASKS_FORMAT, type ClusterTask, type Submitted, type SubmittedJob, type TaskFile } from '../formats/task-file.js';
import { writeFileAtomic } from '../io/files.js';
import { loadFoldPlan } from '../io/fold-plan-file.js';
import { claimOutputFolder } from '../io/output-folder.js';
import { loadPipeline } from '../io/load-pipeline.js';
import { requireSbatch, sbatch, squeueText } from '../io/slurm-client.js';
import { runJackknife, type JackknifeOptions } from '../jackknife/run-jackknife.js';
import type { PrepareOptions } from '../prepare/run-prepare.js';
import { batchScript, LOG_DIR } from './batch-script.js';
import { checkSlurmOptions } from './slurm-options.js';
import { parseSqueue } from './slurm-queue.js';

export interface SubmitSummary {
  out: string;
  /** The folder holding the scripts, task file, logs and submission record. */
  clusterDir: string;
  jobs: SubmittedJob[];
  /** Labels of the tasks submitted. */
  tasks: string[];
}

/** sheaf's launcher, which the batch scripts run (with this node) on the cluster's nodes. */
const CLI = fileURLToPath(new URL('../../bin/sheaf.js', import.meta.url));

const abs = (p: string) => resolve(p);

/** Refuses to submit over jobs of an earlier submission still in the queue. */
async function refuseIfQueued(clusterDir: string): Promise<void> {
  const file = join(clusterDir, SUBMITTED_FILE);
  if (!existsSync(file)) return;
  let before: Submitted;
  try {
    before = parseSubmitted(readFileSync(file, 'utf8'), file);
  } catch {
    return;
  }
  const text = await squeueText();
  if (text === null) return;
  const queued = [...parseSqueue(text).keys()];
  const ours = before.jobs.filter((j) => queued.some((k) => k === j.id || k.startsWith(`${j.id}_`)));
  if (ours.length > 0) {
    throw new UsageError(`job(s) ${ours.map((j) => j.id).join(', ')} of an earlier submission for this folder are still in Slurm's queue; wait for them (\`sheaf status\`) or cancel them (\`scancel ${ours.map((j) => j.id).join(' ')}\`), then submit again`);
  }
}

interface Job {
  role: 'tasks' | 'merge';
  script: string;
  text: string;
  tasks: number;
}

async function submit(command: 'jackknife' | 'prepare', out: string, taskFile: TaskFile, jobs: Job[], sbatchPath: string, userOpts: string[]): Promise<SubmitSummary> {
  const clusterDir = join(out, CLUSTER_DIR);
  mkdirSync(join(clusterDir, LOG_DIR), { recursive: true });
  await refuseIfQueued(clusterDir);
  const taskName = `${command}-tasks.json`;
  writeFileAtomic(join(clusterDir, taskName), formatTaskFile(taskFile));
  for (const j of jobs) writeFileAtomic(join(clusterDir, j.script), j.text);
  const env = { ...process.env, SHEAF_NODE: process.execPath, SHEAF_CLI: CLI };
  const done: SubmittedJob[] = [];
  const record = () => writeFileAtomic(join(clusterDir, SUBMITTED_FILE), formatSubmitted({ format: SUBMITTED_FORMAT, command, at: new Date().toISOString(), taskFile: taskName, jobs: done }));
  for (const j of jobs) {
    const after = j.role === 'merge' ? done[0]?.id ?? null : null;
    const options = [`--chdir=${clusterDir}`, '--export=ALL', ...(after ? [`--dependency=afterok:${after}`, '--kill-on-invalid-dep=yes'] : []), ...userOpts];
    let id: string;
    try {
      id = await sbatch(sbatchPath, options, join(clusterDir, j.script), env);
    } catch (e) {
      if (done.length > 0) {
        record();
        throw new UsageError(`${(e as Error).message}\njob ${done.map((d) => d.id).join(', ')} was submitted and runs; once it has, merge by hand: sheaf merge ${join(clusterDir, 'parts')}/part-* -o ${out}`, { cause: e });
      }
      throw e;
    }
    done.push({ role: j.role, id, script: j.script, tasks: j.tasks, after });
  }
  record();
  return { out, clusterDir, jobs: done, tasks: [...taskFile.tasks.map((t) => t.label), ...(taskFile.merge ? [taskFile.merge.label] : [])] };
}

/** `sheaf jackknife --engine slurm`. */
export async function submitJackknife(o: JackknifeOptions, slurmOpts: string[], log: (line: string) => void = () => {}): Promise<SubmitSummary> {
  const sbatchPath = requireSbatch();
  const userOpts = checkSlurmOptions(slurmOpts);
  // Paths as given: tasks run in this folder (the task file's cwd).
  const base = { plan: o.plan, out: o.out, nbest: o.nbest ?? 50, parse: o.parse ?? [], trainCmd: o.trainCmd, parseCmd: o.parseCmd, pcfg: o.pcfg };
  // Decide here (and record the folds' models in the plan): only stale outputs become tasks.
  const decided = await runJackknife({ ...base, workers: 0, quiet: true, decideOnly: true });
  const stale = decided.stale ?? [];
  if (stale.length === 0) {
    log(`sheaf jackknife: ${o.out} is up to date (${decided.upToDate} outputs); nothing submitted`);
    return { out: o.out, clusterDir: join(abs(o.out), CLUSTER_DIR), jobs: [], tasks: [] };
  }
  const byFile = new Map(decided.outputs.map((x) => [x.file, x]));
  const tasks: ClusterTask[] = [];
  const parseOutputs: string[] = [];
  for (const f of stale) {
    const x = byFile.get(f)!;
    if (x.fold === null) parseOutputs.push(f);
    else tasks.push({ label: `fold ${x.fold}`, run: 'jackknife', options: { ...base, only: [f] }, expect: { [f]: decided.planned![f] } });
  }
  if (parseOutputs.length > 0) {
    tasks.push({ label: `--parse files (${parseOutputs.join(', ')})`, run: 'jackknife', options: { ...base, only: parseOutputs }, expect: Object.fromEntries(parseOutputs.map((f) => [f, decided.planned![f]])) });
  }
  const taskFile: TaskFile = { format: TASKS_FORMAT, command: 'jackknife', cwd: process.cwd(), tasks, merge: null };
  const s = await submit('jackknife', abs(o.out), taskFile, [{ role: 'tasks', script: 'jackknife.sbatch', text: batchScript({ jobName: 'sheaf-jackknife', taskFile: 'jackknife-tasks.json', array: tasks.length }), tasks: tasks.length }], sbatchPath, userOpts);
  for (const f of stale) log(`sheaf jackknife: ${f}: ${byFile.get(f)!.why}`);
  return s;
}

/** `sheaf prepare --engine slurm --tasks N`. */
export async function submitPrepare(o: PrepareOptions, tasksWanted: number, slurmOpts: string[]): Promise<SubmitSummary> {
  const sbatchPath = requireSbatch();
  const userOpts = checkSlurmOptions(slurmOpts);
  if (!Number.isInteger(tasksWanted) || tasksWanted < 1 || tasksWanted > MAX_PARTS) throw new UsageError(`expected \`--tasks\` to be an integer from 1 to ${MAX_PARTS}, got \`${tasksWanted}\``);
  if (o.part) throw new UsageError('`--part` goes without `--engine slurm`: with it, `--tasks N` cuts the run into parts');
  if (o.nbest.length === 0) throw new UsageError('expected at least one n-best dump after `--nbest`');
  for (const f of [o.gold, ...o.nbest]) {
    if (f === '-') throw new UsageError('`--engine slurm` reads the inputs on the cluster\'s nodes: give files, not `-` (stdin)');
    if (!existsSync(f) || !statSync(f).isFile()) throw new UsageError(`cannot read \`${f}\`: no such file (expected a path to an existing file)`);
  }
  // Check the pipeline and the plan before anything is submitted.
  loadPipeline(o.pipeline);
  if (o.plan) loadFoldPlan(o.plan);
  const out = abs(o.out);
  // The merge writes here once the parts are done: refuse a folder it would refuse, before anything runs.
  claimOutputFolder(out, 'shards', { force: o.force });
  const partsDir = join(out, CLUSTER_DIR, 'parts');
  const N = tasksWanted;
  // Inputs as given: tasks run in this folder (the task file's cwd), so the parts' manifests record what one machine's would.
  const common = { gold: o.gold, nbest: o.nbest, pipeline: o.pipeline, plan: o.plan, strict: o.strict ?? false };
  const partDirs = [...Array(N).keys()].map((I) => join(partsDir, `part-${I}`));
  const tasks: ClusterTask[] = partDirs.map((d, I) => ({ label: `part ${I} of ${N}`, run: 'prepare', options: { ...common, out: d, part: { index: I, of: N } } }));
  const merge: ClusterTask = { label: 'merge', run: 'merge', options: { parts: partDirs, out, force: o.force ?? false } };
  mkdirSync(partsDir, { recursive: true });
  const taskFile: TaskFile = { format: TASKS_FORMAT, command: 'prepare', cwd: process.cwd(), tasks, merge };
  return submit('prepare', out, taskFile, [
    { role: 'tasks', script: 'prepare.sbatch', text: batchScript({ jobName: 'sheaf-prepare', taskFile: 'prepare-tasks.json', array: N }), tasks: N },
    { role: 'merge', script: 'merge.sbatch', text: batchScript({ jobName: 'sheaf-merge', taskFile: 'prepare-tasks.json', array: null }), tasks: 1 },
  ], sbatchPath, userOpts);
}

/** What a submission prints: one line per job with its id, then how to follow it. */
export function formatSubmission(s: SubmitSummary, dir: string): string[] {
  if (s.jobs.length === 0) return [];
  const lines = s.jobs.map((j) => j.role === 'merge'
    ? `job ${j.id}: merge of the parts, runs once every task of job ${j.after} has succeeded`
    : `job ${j.id}: ${j.tasks} array task(s): ${s.tasks.slice(0, j.tasks).join('; ')}`);
  lines.push(`scripts, task file and logs in ${s.clusterDir}; follow with: sheaf status ${dir}`);
  return lines;
}
