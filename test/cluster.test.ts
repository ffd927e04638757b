/**
 * `--engine slurm` without a Slurm: batch scripts and task files, the checks
 * on `--slurm-opt`, the refusal where there is no sbatch, and reading
 * squeue / scontrol text. A stand-in `sbatch` on the PATH (a few lines of
 * shell written here) records the arguments and environment it is given and
 * prints a job id; the test then runs the batch scripts itself with /bin/sh
 * as Slurm would (array index in SLURM_ARRAY_TASK_ID, in the --chdir folder),
 * into an output folder whose name holds spaces and shell metacharacters.
 * References: /bin/sh (dash) for script syntax (`sh -n`); one-machine
 * `prepare` and `jackknife` runs for the outputs, byte for byte. The real
 * Slurm run is CI's (scripts/check-slurm.sh).
 */
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { batchScript } from '../src/cluster/batch-script.js';
import { formatStatus, runStatus } from '../src/cluster/run-status.js';
import { taskWorkers } from '../src/cluster/run-task.js';
import { checkSlurmOptions } from '../src/cluster/slurm-options.js';
import { arrayIndices, parseScontrol, parseSqueue } from '../src/cluster/slurm-queue.js';
import { main } from '../src/cli.js';
import { runSplit } from '../src/folds/run-split.js';
import { parseTaskFile } from '../src/formats/task-file.js';
import { runJackknife } from '../src/jackknife/run-jackknife.js';
import { runPrepare } from '../src/prepare/run-prepare.js';
import { makeDemoData, type DemoData } from './helpers/make-demo-data.js';
import { demoPipeline } from './helpers/demo-pipeline.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-cluster-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const WEIRD = `huts $(touch PWNED) ; 'q' "d" & | \`touch PWNED2\``;

/** Runs the CLI in this process; returns status, stdout and stderr. */
async function cli(args: string[], env: Record<string, string> = {}): Promise<{ status: number; out: string; err: string }> {
  const out: string[] = [];
  const err: string[] = [];
  const saved = { log: console.log, error: console.error, env: { ...process.env } };
  console.log = (m: string) => out.push(String(m));
  console.error = (m: string) => err.push(String(m));
  Object.assign(process.env, env);
  try {
    const status = await main(args);
    return { status, out: out.join('\n'), err: err.join('\n') };
  } finally {
    console.log = saved.log;
    console.error = saved.error;
    for (const k of Object.keys(env)) {
      if (saved.env[k] === undefined) delete process.env[k];
      else process.env[k] = saved.env[k];
    }
  }
}

/** A stand-in sbatch: records argv (one per line) and the SHEAF_* environment, prints the next job id. */
function fakeSlurm(): { bin: string; state: string; env: Record<string, string> } {
  const bin = mkdtempSync(join(dir, 'bin-'));
  const state = mkdtempSync(join(dir, 'jobs-'));
  writeFileSync(join(bin, 'sbatch'), [
    '#!/bin/sh',
    'd="$FAKE_SLURM_DIR"',
    'n=$(cat "$d/next" 2>/dev/null || echo 41)',
    'echo $((n + 1)) > "$d/next"',
    'for a in "$@"; do printf \'%s\\n\' "$a"; done > "$d/sbatch-$n.args"',
    'printf \'%s\\n%s\\n\' "$SHEAF_NODE" "$SHEAF_CLI" > "$d/sbatch-$n.env"',
    'echo "$n"',
    '',
  ].join('\n'), { mode: 0o755 });
  return { bin, state, env: { PATH: `${bin}:${process.env.PATH}`, FAKE_SLURM_DIR: state } };
}

interface Recorded { id: string; args: string[]; chdir: string; script: string; node: string; cli: string }
function recorded(state: string): Recorded[] {
  return readdirSync(state).filter((f) => f.endsWith('.args')).sort().map((f) => {
    const id = f.replace(/^sbatch-|\.args$/g, '');
    const args = readFileSync(join(state, f), 'utf8').split('\n').slice(0, -1);
    const [node, cliPath] = readFileSync(join(state, `sbatch-${id}.env`), 'utf8').split('\n');
    return { id, args, chdir: args.find((a) => a.startsWith('--chdir='))!.slice('--chdir='.length), script: args[args.length - 1], node, cli: cliPath };
  });
}

/** Runs one batch script as Slurm would: /bin/sh, in its --chdir folder, with the array index. */
function runScript(r: Recorded, index: number | null): Promise<{ status: number | null; stderr: string }> {
  return new Promise((resolve) => {
    const env = { ...process.env, SHEAF_NODE: r.node, SHEAF_CLI: r.cli, ...(index === null ? {} : { SLURM_ARRAY_TASK_ID: String(index) }) };
    const child = spawn('/bin/sh', [r.script], { cwd: r.chdir, env, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    child.on('close', (status) => resolve({ status, stderr }));
  });
}

/** Every file under a folder (the cluster folder `slurm/` left out), by relative path. */
const contents = (d: string) => Object.fromEntries((readdirSync(d, { recursive: true }) as string[]).filter((f) => !f.startsWith('slurm') && statSync(join(d, f)).isFile()).sort().map((f) => [f, readFileSync(join(d, f))]));
function expectSameFiles(a: string, b: string): void {
  const x = contents(a);
  const y = contents(b);
  expect(Object.keys(x)).toEqual(Object.keys(y));
  for (const f of Object.keys(y)) expect(x[f].equals(y[f]), `${f} differs`).toBe(true);
}

describe('batch scripts and options', () => {
  it('writes scripts with no text of the user\'s that /bin/sh accepts', () => {
    const array = batchScript({ jobName: 'sheaf-prepare', taskFile: 'prepare-tasks.json', array: 4 });
    expect(array).toBe([
      '#!/bin/sh',
      '# Written by sheaf. This script holds no text of the user\'s: the task file',
      '# beside it says what each task does, and sheaf reads it as JSON.',
      '#SBATCH --job-name=sheaf-prepare',
      '#SBATCH --array=0-3',
      '#SBATCH --output=logs/sheaf-prepare-%A_%a.out',
      'if [ -z "${SHEAF_NODE:-}" ] || [ -z "${SHEAF_CLI:-}" ]; then',
      '  echo "sheaf task: SHEAF_NODE and SHEAF_CLI are not set (sheaf submits with them; was the environment not exported?)" >&2',
      '  exit 2',
      'fi',
      'exec "$SHEAF_NODE" "$SHEAF_CLI" task prepare-tasks.json --index "$SLURM_ARRAY_TASK_ID"',
      '',
    ].join('\n'));
    const merge = batchScript({ jobName: 'sheaf-merge', taskFile: 'prepare-tasks.json', array: null });
    expect(merge).toContain('exec "$SHEAF_NODE" "$SHEAF_CLI" task prepare-tasks.json --merge');
    expect(merge).not.toContain('--array');
    for (const [k, text] of [array, merge].entries()) {
      const f = join(dir, `syntax-${k}.sh`);
      writeFileSync(f, text);
      expect(spawnSync('/bin/sh', ['-n', f]).status).toBe(0);
    }
    expect(() => batchScript({ jobName: 'sheaf-merge', taskFile: 'x y.json', array: null })).toThrow(/plain/);
    // Without the environment sheaf submits with, the script says so instead of running something else.
    const f = join(dir, 'noenv.sh');
    writeFileSync(f, array);
    const r = spawnSync('/bin/sh', [f], { env: { PATH: process.env.PATH }, encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/SHEAF_NODE and SHEAF_CLI are not set/);
  });

  it('passes sbatch options through in long form and refuses what is not one, or what sheaf sets', () => {
    expect(checkSlurmOptions(['--partition=main', '--mem=4G', '--time=02:00:00', '--exclusive', '--constraint=a&b'])).toEqual(['--partition=main', '--mem=4G', '--time=02:00:00', '--exclusive', '--constraint=a&b']);
    for (const bad of ['-p main', 'main', '-pmain', '--', '--Partition=x', '--time=1\n#SBATCH --array=0-9']) expect(() => checkSlurmOptions([bad])).toThrow(/long form/);
    for (const own of ['--array=0-3', '--dependency=afterok:1', '--chdir=/tmp', '--output=x', '--export=NONE', '--parsable']) expect(() => checkSlurmOptions([own])).toThrow(/sheaf sets/);
  });

  it('takes its workers from the CPUs Slurm gives the task', () => {
    expect(taskWorkers({ SLURM_CPUS_PER_TASK: '4' })).toBe(4);
    expect(taskWorkers({})).toBe(1);
    expect(taskWorkers({ SLURM_CPUS_PER_TASK: 'x' })).toBe(1);
  });

  it('reads task files strictly', () => {
    expect(() => parseTaskFile('{', 't.json')).toThrow(/t\.json: not a usable task file: not JSON/);
    expect(() => parseTaskFile(JSON.stringify({ format: 'sheaf-tasks/1', command: 'prepare', cwd: 'rel', tasks: [{ label: 'a', run: 'prepare', options: {} }], merge: null }), 't.json')).toThrow(/absolute path/);
    expect(() => parseTaskFile(JSON.stringify({ format: 'sheaf-tasks/1', command: 'prepare', cwd: '/x', tasks: [{ label: 'a', run: 'rm', options: {} }], merge: null }), 't.json')).toThrow(/task 0: expected/);
  });
});

describe('reading Slurm\'s queue', () => {
  it('reads squeue lines, one per array element', () => {
    const q = parseSqueue('41_0|RUNNING|None\n41_1|PENDING|Resources\n42|PENDING|Dependency\n\n');
    expect([...q]).toEqual([['41_0', { state: 'RUNNING', reason: 'None', exitCode: null }], ['41_1', { state: 'PENDING', reason: 'Resources', exitCode: null }], ['42', { state: 'PENDING', reason: 'Dependency', exitCode: null }]]);
  });

  // Captured from Slurm 22.05.8 (Debian slurm-wlm) on the single-node set-up of scripts/slurm-local.sh:
  // a held prepare submission (array 5 of 4 parts, merge 6 after it), then the same once its parts failed,
  // and a finished jackknife array (job 1, 4 tasks).
  const fixture = (f: string) => readFileSync(join(root, 'test/fixtures/slurm', f), 'utf8');
  it('reads what Slurm printed for held, failed, cancelled and completed jobs', () => {
    const held = parseSqueue(fixture('squeue-held.txt'));
    expect([...held.keys()]).toEqual(['6', '5_0', '5_1', '5_2', '5_3']);
    expect(held.get('5_2')).toEqual({ state: 'PENDING', reason: 'JobHeldUser', exitCode: null });
    // An array not yet split into its elements: one record for the range 0-3.
    const heldJobs = parseScontrol(fixture('scontrol-held.txt'));
    expect([...heldJobs.keys()]).toEqual(['5_0', '5_1', '5_2', '5_3', '6']);
    expect(heldJobs.get('6')).toMatchObject({ state: 'PENDING', reason: 'JobHeldUser' });
    const failed = parseScontrol(fixture('scontrol-failed.txt'));
    expect([...failed].map(([k, v]) => [k, v.state, v.reason, v.exitCode]).sort()).toEqual([
      ['5_0', 'FAILED', 'NonZeroExitCode', '1:0'], ['5_1', 'FAILED', 'NonZeroExitCode', '1:0'], ['5_2', 'FAILED', 'NonZeroExitCode', '1:0'], ['5_3', 'FAILED', 'NonZeroExitCode', '1:0'],
      ['6', 'CANCELLED', 'DependencyNeverSatisfied', '0:0'],
    ]);
    const done = parseScontrol(fixture('scontrol-completed.txt'));
    expect([...done].map(([k, v]) => [k, v.state, v.exitCode]).sort()).toEqual([['1_0', 'COMPLETED', '0:0'], ['1_1', 'COMPLETED', '0:0'], ['1_2', 'COMPLETED', '0:0'], ['1_3', 'COMPLETED', '0:0']]);
  });

  it('expands array task ranges', () => {
    expect(arrayIndices('3')).toEqual([3]);
    expect(arrayIndices('2-4')).toEqual([2, 3, 4]);
    expect(arrayIndices('0,4-6%2')).toEqual([0, 4, 5, 6]);
    expect(arrayIndices('0-6:3')).toEqual([0, 3, 6]);
  });
});

describe('--engine slurm through a stand-in sbatch', () => {
  let data: DemoData;
  let gold: string;
  let pipeline: string;
  beforeAll(async () => {
    const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/).slice(0, 60);
    gold = join(dir, 'gold.trees');
    writeFileSync(gold, trees.join('\n') + '\n');
    data = await makeDemoData(gold, join(dir, 'in'), { folds: 3, nbest: 6 });
    const p = demoPipeline({ sentencesPerShard: 15 });
    pipeline = join(dir, 'pipeline.json');
    writeFileSync(pipeline, JSON.stringify(p));
  });

  it('says plainly that there is no Slurm when sbatch is not on the PATH (status 1)', async () => {
    const empty = mkdtempSync(join(dir, 'nobin-'));
    const r = await cli(['prepare', '--gold', gold, '--nbest', ...data.dumps, '--pipeline', pipeline, '-o', join(dir, 'never'), '--engine', 'slurm', '--tasks', '2'], { PATH: empty });
    expect(r.status).toBe(1);
    expect(r.err).toMatch(/`--engine slurm` needs Slurm, and `sbatch` is not on the PATH of this machine/);
    expect(existsSync(join(dir, 'never'))).toBe(false);
    const j = await cli(['jackknife', '--plan', data.plan, '-o', join(dir, 'never'), '--engine', 'slurm'], { PATH: empty });
    expect(j.status).toBe(1);
    expect(j.err).toMatch(/`sbatch` is not on the PATH/);
    const t = await cli(['prepare', '--gold', gold, '--nbest', ...data.dumps, '--pipeline', pipeline, '-o', join(dir, 'never'), '--tasks', '2']);
    expect(t.status).toBe(1);
    expect(t.err).toMatch(/`--tasks` and `--slurm-opt` go with `--engine slurm`/);
  });

  it('prepare --tasks 3: an array of parts and a merge after it, into a folder named with shell metacharacters, equal to one machine\'s', async () => {
    const slurm = fakeSlurm();
    const base = join(dir, WEIRD);
    mkdirSync(base);
    const out = join(base, 'shards');
    const r = await cli(['prepare', '--gold', gold, '--nbest', ...data.dumps, '--plan', data.plan, '--pipeline', pipeline, '-o', out, '--engine', 'slurm', '--tasks', '3', '--slurm-opt=--partition=main', '--slurm-opt=--time=00:10:00'], slurm.env);
    expect(r.err).toBe('');
    expect(r.status).toBe(0);
    expect(r.out).toMatch(/^job 41: 3 array task\(s\): part 0 of 3; part 1 of 3; part 2 of 3\njob 42: merge of the parts, runs once every task of job 41 has succeeded\n/);
    const [array, merge] = recorded(slurm.state);
    const clusterDir = join(out, 'slurm');
    expect(array.args).toEqual(['--parsable', `--chdir=${clusterDir}`, '--export=ALL', '--partition=main', '--time=00:10:00', join(clusterDir, 'prepare.sbatch')]);
    expect(merge.args).toEqual(['--parsable', `--chdir=${clusterDir}`, '--export=ALL', '--dependency=afterok:41', '--kill-on-invalid-dep=yes', '--partition=main', '--time=00:10:00', join(clusterDir, 'merge.sbatch')]);
    expect(array.node).toBe(process.execPath);
    // The scripts hold none of the user's text.
    for (const s of ['prepare.sbatch', 'merge.sbatch']) {
      const text = readFileSync(join(clusterDir, s), 'utf8');
      expect(text).not.toContain('huts');
      expect(text).not.toContain(dir);
    }
    // Status before anything ran (no squeue here): every task waits for its outputs.
    const before = await runStatus(out);
    expect(before.rows.map((x) => [x.job, x.index, x.label, x.output])).toEqual([['41', 0, 'part 0 of 3', 'not started'], ['41', 1, 'part 1 of 3', 'not started'], ['41', 2, 'part 2 of 3', 'not started'], ['42', null, 'merge', 'not started']]);
    // Run them as Slurm would: the array's tasks (here one after the other), then the merge.
    mkdirSync(join(clusterDir, 'logs'), { recursive: true });
    for (let k = 0; k < 3; k++) {
      const t = await runScript(array, k);
      expect(t.status, t.stderr).toBe(0);
    }
    const m = await runScript(merge, null);
    expect(m.status, m.stderr).toBe(0);
    const one = await runPrepare({ gold, nbest: data.dumps, plan: data.plan, pipeline, out: join(dir, 'one-machine'), workers: 0, quiet: true });
    expect(one.shards).toBeGreaterThan(3);
    expectSameFiles(out, one.out);
    // Nothing the folder's name holds ran as a command.
    for (const d of [base, clusterDir, root, dir]) expect(readdirSync(d).filter((f) => f.startsWith('PWNED'))).toEqual([]);
    // Status from the outputs, and from a stand-in squeue / scontrol.
    writeFileSync(join(slurm.bin, 'squeue'), '#!/bin/sh\necho "41_2|RUNNING|None"\n', { mode: 0o755 });
    writeFileSync(join(slurm.bin, 'scontrol'), '#!/bin/sh\nif [ "$4" = 41 ]; then echo "JobId=43 ArrayJobId=41 ArrayTaskId=0 JobName=sheaf-prepare JobState=COMPLETED Reason=None ExitCode=0:0"; echo "JobId=44 ArrayJobId=41 ArrayTaskId=1 JobName=sheaf-prepare JobState=FAILED Reason=NonZeroExitCode ExitCode=1:0"; exit 0; fi\necho "slurm_load_jobs error: Invalid job id specified" >&2; exit 1\n', { mode: 0o755 });
    const saved = process.env.PATH;
    process.env.PATH = slurm.env.PATH;
    let after;
    try {
      after = await runStatus(out);
    } finally {
      process.env.PATH = saved;
    }
    // 20 sentences per part, 15 per shard.
    expect(after.rows.map((x) => [x.state, x.exitCode, x.output, x.done])).toEqual([
      ['COMPLETED', '0:0', 'complete, 2 shard(s)', true],
      ['FAILED', '1:0', 'complete, 2 shard(s)', true],
      ['RUNNING', null, 'complete, 2 shard(s)', true],
      ['UNKNOWN', null, `merged, ${one.shards} shard(s)`, true],
    ]);
    const text = formatStatus(after).join('\n');
    expect(text).toMatch(/41_1 +part 1 of 3 +FAILED \(exit 1:0\) +complete, 2 shard\(s\)/);
    expect(text).toMatch(/41_2 +part 2 of 3 +RUNNING +complete/);
    expect(text).toMatch(/42 +merge +gone +merged/);
    expect(text).toMatch(/4 of 4 task\(s\) have their outputs/);
  });

  it('jackknife: one array task per stale fold and one for the --parse files, run at once, equal to one machine\'s', async () => {
    const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/);
    const jkGold = join(dir, 'jk-gold.trees');
    writeFileSync(jkGold, trees.slice(0, 160).join('\n') + '\n');
    const dev = join(dir, 'jk-dev.trees');
    writeFileSync(dev, trees.slice(160, 175).join('\n') + '\n');
    const planA = join(dir, 'plan-local');
    await runSplit({ gold: jkGold, folds: 4, out: planA, quiet: true });
    const planB = join(dir, 'plan-slurm');
    cpSync(planA, planB, { recursive: true });
    const local = await runJackknife({ plan: planA, out: join(dir, 'nbest-local'), nbest: 4, workers: 0, parse: [dev], quiet: true });
    expect(local.remade).toBe(5);

    const slurm = fakeSlurm();
    const out = join(dir, WEIRD, 'nbest');
    const r = await cli(['jackknife', '--plan', planB, '--nbest', '4', '--parse', dev, '-o', out, '--engine', 'slurm', '--slurm-opt=--mem=1G'], slurm.env);
    expect(r.status, r.err).toBe(0);
    expect(r.out).toMatch(/^job 41: 5 array task\(s\): fold 0; fold 1; fold 2; fold 3; --parse files \(jk-dev\.jsonl\.gz\)\n/);
    // The submission recorded the folds' models in the plan already.
    expect(readFileSync(join(planB, 'folds.json'), 'utf8')).toBe(readFileSync(join(planA, 'folds.json'), 'utf8'));
    const [job] = recorded(slurm.state);
    // Two tasks at a time, as this machine's two CPUs would run the array: they share jackknife.json.
    for (const pair of [[0, 1], [2, 3], [4]]) {
      const runs = await Promise.all(pair.map((k) => runScript(job, k)));
      for (const t of runs) expect(t.status, t.stderr).toBe(0);
    }
    expectSameFiles(out, local.out);
    // Up to date now: nothing to submit.
    const again = await cli(['jackknife', '--plan', planB, '--nbest', '4', '--parse', dev, '-o', out, '--engine', 'slurm'], slurm.env);
    expect(again.status).toBe(0);
    expect(again.err).toMatch(/is up to date \(5 outputs\); nothing submitted/);
    expect(recorded(slurm.state)).toHaveLength(1);
    // A changed list depth makes every output stale: five tasks again.
    const deeper = await cli(['jackknife', '--plan', planB, '--nbest', '5', '--parse', dev, '-o', out, '--engine', 'slurm', '--quiet'], slurm.env);
    expect(deeper.out).toMatch(/^job 42: 5 array task\(s\)/);
    const status = await runStatus(out);
    expect(status.rows.map((x) => x.output)).toEqual(['fold-0.jsonl.gz not yet', 'fold-1.jsonl.gz not yet', 'fold-2.jsonl.gz not yet', 'fold-3.jsonl.gz not yet', 'jk-dev.jsonl.gz not yet']);
  });
});
