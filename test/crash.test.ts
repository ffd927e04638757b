/**
 * Crash and resume, through the built CLI: a child process is killed with
 * SIGKILL at many points and run again.
 * - prepare: one output killed again and again — while the gold treebank is
 *   read, right after the journal starts, after each shard (with a seeded
 *   delay of 0–25 ms, so kills land inside shards too), while the manifest
 *   is written — each run resuming the last; at every poll (every few ms)
 *   and after every kill, each file under a final name is byte-identical to
 *   the same file of an undisturbed run, and the output the last run leaves
 *   is byte-identical to it, file for file.
 * - jackknife: killed after each finished fold; the re-run keeps the folds
 *   finished before (same bytes, not re-made) and makes the rest; the end
 *   result equals an undisturbed run.
 * - train: killed at spread times and while the model is written; a model
 *   folder never holds a model.json without the whole model, and a re-run
 *   gives the undisturbed run's weights.
 * - merge and split start over when run again: killed at spread times, no
 *   file under a final name ever differs from an undisturbed run's, and the
 *   re-run ends with its bytes.
 * rerank writes only to stdout and keeps no state: nothing to resume.
 */
import { spawn, spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeDemoData, type DemoData } from './helpers/make-demo-data.js';
import { seededRandom } from './helpers/synthetic-nbest.js';
import { demoPipeline } from './helpers/demo-pipeline.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const BIN = join(root, 'bin/sheaf.js');
const dir = mkdtempSync(join(tmpdir(), 'sheaf-crash-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const sheaf = (...args: string[]) => spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8' });

/** Files of a folder by name → bytes. */
function files(d: string): Map<string, Buffer> {
  return new Map(readdirSync(d, { withFileTypes: true }).filter((e) => e.isFile()).map((e) => e.name).sort().map((f) => [f, readFileSync(join(d, f))]));
}
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * Runs sheaf in a child; `poll` is called every ~2 ms while it runs and may
 * ask for a SIGKILL by returning true. Resolves with how the child ended.
 */
function runUntil(args: string[], poll: (elapsed: number) => boolean): Promise<{ killed: boolean; status: number | null; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [BIN, ...args], { stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    const started = Date.now();
    let killed = false;
    const timer = setInterval(() => {
      if (!killed && poll(Date.now() - started)) {
        killed = true;
        child.kill('SIGKILL');
      }
    }, 2);
    child.on('exit', (status, signal) => {
      clearInterval(timer);
      resolve({ killed: killed && signal === 'SIGKILL', status, stderr });
    });
  });
}

/**
 * A check, to call at every poll: each file of `out` under a final name
 * equals the reference's, else a line goes to `violations` (the journal is
 * appended by design: a torn last line is allowed).
 */
function finalNamesCheck(out: string, ref: Map<string, Buffer>, violations: string[]): () => void {
  return () => {
    let names: string[];
    try {
      names = readdirSync(out);
    } catch {
      return; // not made yet, or removed
    }
    for (const f of names) {
      if (f.endsWith('.tmp') || f === 'journal.jsonl') continue;
      let bytes: Buffer;
      try {
        bytes = readFileSync(join(out, f));
      } catch {
        continue; // replaced or removed between the listing and the read
      }
      if (!ref.has(f) || !ref.get(f)!.equals(bytes)) violations.push(`${f} (${bytes.length} bytes) differs from the undisturbed run's`);
    }
  };
}

let data: DemoData;
let gold: string;
let pipeline: string;
beforeAll(async () => {
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/).slice(0, 240);
  gold = join(dir, 'gold.trees');
  writeFileSync(gold, trees.join('\n') + '\n');
  data = await makeDemoData(gold, join(dir, 'in'), { folds: 3, nbest: 10 });
  const p = demoPipeline({ sentencesPerShard: 12, names: 0 });
  pipeline = join(dir, 'pipeline.json');
  writeFileSync(pipeline, JSON.stringify(p));
});

describe('crash and resume: prepare', () => {
  it('killed at 20 or more points (gold, journal start, inside and after shards, manifest), it resumes to the bytes of an undisturbed run; no partial file ever has a final name', async () => {
    const args = (out: string) => ['prepare', '--gold', gold, '--nbest', ...data.dumps, '--plan', data.plan, '--pipeline', pipeline, '-o', out, '--quiet', '--workers', '1'];
    const reference = join(dir, 'reference');
    expect(sheaf(...args(reference)).status).toBe(0);
    const ref = files(reference);
    const shards = [...ref.keys()].filter((f) => /^shard-\d{5}\.msgpack\.gz$/.test(f)).length;
    expect(shards).toBe(20);

    const out = join(dir, 'killed');
    const violations: string[] = [];
    const checkFinalNames = finalNamesCheck(out, ref, violations);
    const journalShards = () => {
      try {
        return readFileSync(join(out, 'journal.jsonl'), 'utf8').split('\n').filter((l) => l.startsWith('{"shard"')).length;
      } catch {
        return -1;
      }
    };

    const rand = seededRandom(2026);
    const kinds: string[] = [];
    let done = false;
    let endKilled = false;
    for (let round = 0; round < 40 && !done; round++) {
      const before = journalShards();
      let armedAt = -1;
      const delay = Math.floor(rand() * 25);
      const r = await runUntil(args(out), (t) => {
        checkFinalNames();
        if (armedAt >= 0) return t >= armedAt + delay;
        // Where to kill this round: early (gold being read), when the journal starts, after a new shard, or at the end.
        const ready = round === 0 ? t >= 150
          : round === 1 ? existsSync(join(out, '.gold-spill.tmp'))
          : round === 2 ? journalShards() >= 0
          : journalShards() > before || (!endKilled && (existsSync(join(out, 'pipeline-files.msgpack.tmp')) || existsSync(join(out, 'manifest.json.tmp'))));
        if (ready) armedAt = t;
        return false;
      });
      const atEnd = existsSync(join(out, 'pipeline-files.msgpack.tmp')) || existsSync(join(out, 'manifest.json.tmp')) || existsSync(join(out, 'manifest.json'));
      if (r.killed && atEnd) endKilled = true;
      checkFinalNames();
      if (r.killed) kinds.push(round <= 2 ? ['early', 'gold', 'journal'][round] : atEnd ? 'writing the manifest' : `after shard ${before} +${delay} ms`);
      else {
        expect(r.status, r.stderr).toBe(0);
        done = true;
      }
    }
    expect(done).toBe(true);
    if (process.env.SHEAF_CRASH_REPORT) console.log(`prepare: ${kinds.length} kills: ${kinds.join('; ')}`);
    expect(kinds.length).toBeGreaterThanOrEqual(20);
    expect(violations).toEqual([]);
    // The output, file for file, is the undisturbed run's.
    const got = files(out);
    expect([...got.keys()]).toEqual([...ref.keys()]);
    for (const [f, b] of ref) expect(got.get(f)!.equals(b), f).toBe(true);
  }, 240_000);
});

describe('crash and resume: jackknife', () => {
  it('a fold killed mid-way is made again; folds finished before the kill are kept as they are', async () => {
    const plan = join(dir, 'jk-plan');
    expect(sheaf('split', gold, '--folds', '4', '-o', plan, '--quiet').status).toBe(0);
    const planCopy = join(dir, 'jk-plan-ref');
    cpSync(plan, planCopy, { recursive: true });
    const args = (p: string, out: string) => ['jackknife', '--plan', p, '--nbest', '5', '--workers', '1', '-o', out, '--quiet', '--json'];
    const reference = join(dir, 'jk-reference');
    expect(sheaf(...args(planCopy, reference)).status).toBe(0);
    const dumps = (d: string) => new Map([...files(d)].filter(([f]) => f.endsWith('.jsonl.gz')));
    const ref = dumps(reference);
    expect(ref.size).toBe(4);

    const out = join(dir, 'jk-killed');
    const finished = () => {
      try {
        return Object.keys(JSON.parse(readFileSync(join(out, 'jackknife.json'), 'utf8')).outputs).length;
      } catch {
        return 0;
      }
    };
    let kills = 0;
    for (let k = 1; k <= 3; k++) {
      const r = await runUntil(args(plan, out), () => finished() >= k);
      if (!r.killed) break;
      kills++;
      // Every dump under its final name is whole (the reference's bytes); those recorded stay untouched by the next run.
      const kept = dumps(out);
      for (const [f, b] of kept) expect(ref.get(f)!.equals(b), f).toBe(true);
      expect(kept.size).toBeGreaterThanOrEqual(k);
      await sleep(5);
    }
    expect(kills).toBe(3);
    const before = dumps(out);
    const last = sheaf(...args(plan, out));
    expect(last.status, last.stderr).toBe(0);
    const summary = JSON.parse(last.stdout);
    // Only what was not finished is made again.
    expect(summary.remade).toBe(4 - before.size);
    expect(summary.upToDate).toBe(before.size);
    const after = dumps(out);
    for (const [f, b] of ref) expect(after.get(f)!.equals(b), f).toBe(true);
  }, 240_000);
});

describe('crash and resume: train', () => {
  it('killed at spread times and while writing the model: never a model.json without its whole model; a re-run gives the same weights', async () => {
    const shards = join(dir, 'train-shards');
    expect(sheaf('prepare', '--gold', gold, '--nbest', ...data.dumps, '--pipeline', pipeline, '-o', shards, '--quiet', '--workers', '1').status).toBe(0);
    const args = (out: string) => ['train', shards, '-o', out, '--quiet', '--epochs', '4', '--cutoff', '1'];
    const reference = join(dir, 'train-reference');
    const t0 = Date.now();
    expect(sheaf(...args(reference)).status).toBe(0);
    const took = Date.now() - t0;
    const weights = readFileSync(join(reference, 'weights.msgpack'));
    const out = join(dir, 'train-killed');
    let kills = 0;
    const whole = () => {
      // A model.json means the whole model is there: the weights of this training.
      if (existsSync(join(out, 'model.json'))) expect(readFileSync(join(out, 'weights.msgpack')).equals(weights)).toBe(true);
    };
    const points = [0.2, 0.4, 0.6, 0.8, 0.9, 0.95].map((f) => ({ at: f * took, writing: false })).concat([{ at: 0, writing: true }]);
    for (const p of points) {
      rmSync(out, { recursive: true, force: true });
      const r = await runUntil(args(out), (t) => {
        if (existsSync(out)) whole();
        return p.writing ? existsSync(join(out, 'weights.msgpack.tmp')) || existsSync(join(out, 'weights.msgpack')) : t >= p.at;
      });
      if (r.killed) kills++;
      whole();
      const again = sheaf(...args(out));
      expect(again.status, again.stderr).toBe(0);
      expect(readFileSync(join(out, 'weights.msgpack')).equals(weights)).toBe(true);
    }
    expect(kills).toBeGreaterThanOrEqual(5);
  }, 240_000);
});

/**
 * A command that starts over when run again (merge, split): killed at spread
 * times of an undisturbed run, every file under a final name equals the
 * undisturbed run's at every poll and after every kill (appended logs
 * excepted), and the same command run again ends with its bytes.
 */
async function killAndRerun(args: (out: string) => string[], name: string, minKills: number): Promise<{ kills: number; violations: string[] }> {
  const reference = join(dir, `${name}-reference`);
  const t0 = Date.now();
  const first = sheaf(...args(reference));
  expect(first.status, first.stderr).toBe(0);
  const took = Date.now() - t0;
  const ref = files(reference);
  const out = join(dir, `${name}-killed`);
  const violations: string[] = [];
  const check = finalNamesCheck(out, ref, violations);
  let kills = 0;
  // From Node's start-up to the last write: kills land in every phase of the run.
  const points = Array.from({ length: 12 }, (_, k) => ((k + 1) / 13) * took);
  for (const at of points) {
    const r = await runUntil(args(out), (t) => {
      check();
      return t >= at;
    });
    check();
    if (r.killed) kills++;
    else expect(r.status, r.stderr).toBe(0);
  }
  const last = sheaf(...args(out));
  expect(last.status, last.stderr).toBe(0);
  const got = files(out);
  expect([...got.keys()]).toEqual([...ref.keys()]);
  for (const [f, b] of ref) expect(got.get(f)!.equals(b), f).toBe(true);
  expect(kills).toBeGreaterThanOrEqual(minKills);
  return { kills, violations };
}

describe('crash and run again: merge', () => {
  it('killed at spread times: never a file under a final name that differs from an undisturbed merge; a re-run gives its bytes', async () => {
    const parts = [0, 1, 2, 3].map((I) => {
      const p = join(dir, `part-${I}-of-4`);
      const r = sheaf('prepare', '--gold', gold, '--nbest', ...data.dumps, '--plan', data.plan, '--pipeline', pipeline, '--part', `${I}/4`, '-o', p, '--quiet', '--workers', '1');
      expect(r.status, r.stderr).toBe(0);
      return p;
    });
    const { kills, violations } = await killAndRerun((out) => ['merge', ...parts, '-o', out, '--quiet'], 'merge', 6);
    if (process.env.SHEAF_CRASH_REPORT) console.log(`merge: ${kills} kills`);
    expect(violations).toEqual([]);
  }, 240_000);
});

describe('crash and run again: split', () => {
  it('killed at spread times: never a fold file or folds.json under its final name that differs from an undisturbed split; a re-run gives its bytes', async () => {
    const { kills, violations } = await killAndRerun((out) => ['split', gold, '--folds', '5', '--write-train', '-o', out, '--quiet'], 'split', 6);
    if (process.env.SHEAF_CRASH_REPORT) console.log(`split: ${kills} kills`);
    expect(violations).toEqual([]);
  }, 240_000);
});
