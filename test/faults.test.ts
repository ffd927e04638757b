/**
 * Faults of the environment, through the built CLI: an output path that is
 * a file, an unwritable folder (run as an unprivileged user: root passes
 * every permission check), a full disk (a small tmpfs; /dev/full for one
 * stream), a read-only file system. Each must end with status 1 and a
 * sentence naming the path and what to do, never "internal error"; a failed
 * `prepare` keeps what a resume needs (completed shards, the journal, the
 * rejects so far) and nothing else, and the resumed run gives the bytes of
 * an undisturbed one; a failed `jackknife` keeps the outputs it finished,
 * `split` and `merge` leave no file of theirs under a temporary name (and
 * no folds.json or shards that a later run could mistake for its own); run
 * again with room, each gives the bytes of an undisturbed run. Tests that need root (mount, setpriv) are skipped with
 * the reason in their name when it is not available.
 */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { makeDemoData, type DemoData } from './helpers/make-demo-data.js';
import { demoPipeline } from './helpers/demo-pipeline.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const BIN = join(root, 'bin/sheaf.js');
const sheaf = (args: string[], as?: number) =>
  as === undefined
    ? spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8' })
    : spawnSync('setpriv', [`--reuid=${as}`, `--regid=${as}`, '--clear-groups', process.execPath, BIN, ...args], { encoding: 'utf8' });
const run = (cmd: string, args: string[]) => spawnSync(cmd, args, { encoding: 'utf8' });

const dir = mkdtempSync(join(tmpdir(), 'sheaf-faults-'));
// Readable by the unprivileged user too.
chmodSync(dir, 0o755);
const mounts: string[] = [];
afterAll(() => {
  for (const m of mounts.reverse()) run('umount', [m]);
  rmSync(dir, { recursive: true, force: true });
});

/** Why mounting a tmpfs is not possible here, or null. */
function mountUnavailable(): string | null {
  if (process.getuid?.() !== 0) return 'not running as root';
  const probe = join(dir, 'probe');
  mkdirSync(probe);
  const r = run('mount', ['-t', 'tmpfs', '-o', 'size=64k', 'tmpfs', probe]);
  if (r.status !== 0) return `mount refused: ${(r.stderr || r.error?.message || '').trim()}`;
  run('umount', [probe]);
  return null;
}
/** Why running as another user is not possible here, or null. */
function setprivUnavailable(): string | null {
  if (process.getuid?.() !== 0) return 'not running as root';
  const r = run('setpriv', ['--reuid=65534', '--regid=65534', '--clear-groups', process.execPath, '-e', `require('fs').accessSync(${JSON.stringify(BIN)})`]);
  return r.status === 0 ? null : `setpriv cannot run node as user 65534: ${(r.stderr || r.error?.message || '').trim().split('\n')[0]}`;
}
const noMount = mountUnavailable();
const noSetpriv = setprivUnavailable();
const skipped = (why: string | null) => (why ? ` — skipped: ${why}` : '');

function mountTmpfs(path: string, options: string): void {
  mkdirSync(path, { recursive: true });
  const r = run('mount', ['-t', 'tmpfs', '-o', options, 'tmpfs', path]);
  if (r.status !== 0) throw new Error(`mount ${options} ${path}: ${r.stderr}`);
  mounts.push(path);
}

let data: DemoData;
let gold: string;
let pipeline: string;
beforeAll(async () => {
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/).slice(0, 150);
  gold = join(dir, 'gold.trees');
  writeFileSync(gold, trees.join('\n') + '\n');
  data = await makeDemoData(gold, join(dir, 'in'), { folds: 3, nbest: 10 });
  const p = demoPipeline({ sentencesPerShard: 10, names: 0 });
  pipeline = join(dir, 'pipeline.json');
  writeFileSync(pipeline, JSON.stringify(p));
  for (const f of [gold, pipeline, ...data.dumps]) chmodSync(f, 0o644);
  chmodSync(join(dir, 'in'), 0o755);
});

const prepareArgs = (out: string) => ['prepare', '--gold', gold, '--nbest', ...data.dumps, '--pipeline', pipeline, '-o', out, '--quiet', '--workers', '1'];
const sha = (f: string) => createHash('sha256').update(readFileSync(f)).digest('hex');
const tree = (d: string) => Object.fromEntries(readdirSync(d).sort().map((f) => [f, sha(join(d, f))]));

function expectPlainFailure(r: ReturnType<typeof sheaf>, path: string, what: RegExp) {
  expect(r.status, r.stderr).toBe(1);
  expect(r.stderr).not.toContain('internal error');
  expect(r.stderr).toContain(`\`${path}`);
  expect(r.stderr).toMatch(what);
  expect(r.stderr.trim().split('\n')).toHaveLength(1);
}

describe('faults: output paths that cannot be folders', () => {
  it('`-o` naming a file', () => {
    const file = join(dir, 'a-file');
    writeFileSync(file, 'ledger');
    expectPlainFailure(sheaf(prepareArgs(file)), file, /is a file; expected a folder for sheaf prepare to write its files in/);
    expect(readFileSync(file, 'utf8')).toBe('ledger');
    expectPlainFailure(sheaf(prepareArgs(join(file, 'out'))), join(file, 'out'), /a part of that path is a file, not a folder/);
  });

  it('a full stdout (/dev/full) for export and inspect', () => {
    if (!existsSync('/dev/full')) return expect.fail('/dev/full is missing on this system');
    const out = join(dir, 'ok');
    expect(sheaf(prepareArgs(out)).status).toBe(0);
    for (const args of [['export', out, '--format', 'svmlight'], ['inspect', out, '--jsonl']]) {
      const r = spawnSync('sh', ['-c', `"${process.execPath}" "${BIN}" ${args.map((a) => `"${a}"`).join(' ')} > /dev/full`], { encoding: 'utf8' });
      expectPlainFailure(r, 'stdout', /the disk is full; free some space \(ENOSPC\)/);
    }
  });
});

describe('faults: an unwritable folder', () => {
  it.skipIf(noSetpriv !== null)(`a new output folder under a folder the user may not write, and an existing one${skipped(noSetpriv)}`, () => {
    const locked = join(dir, 'locked');
    mkdirSync(locked);
    chmodSync(locked, 0o555);
    expectPlainFailure(sheaf(prepareArgs(join(locked, 'out')), 65534), join(locked, 'out'), /permission denied; make it writable/);
    expectPlainFailure(sheaf(prepareArgs(locked), 65534), locked, /permission denied; make it writable/);
    expect(readdirSync(locked)).toEqual([]);
    // train's model folder too.
    const shards = join(dir, 'shards-for-train');
    expect(sheaf(prepareArgs(shards)).status).toBe(0);
    chmodSync(shards, 0o755);
    for (const f of readdirSync(shards)) chmodSync(join(shards, f), 0o644);
    expectPlainFailure(sheaf(['train', shards, '-o', join(locked, 'model'), '--quiet'], 65534), join(locked, 'model'), /permission denied/);
  });
});

describe('faults: a full disk', () => {
  it.skipIf(noMount !== null)(`prepare on a small tmpfs stops with status 1, keeps completed shards, the journal and the rejects, removes the rest; the resumed run gives the same bytes${skipped(noMount)}`, () => {
    const reference = join(dir, 'reference');
    expect(sheaf(prepareArgs(reference)).status).toBe(0);
    const shards = readdirSync(reference).filter((f) => /^shard-\d+\.msgpack\.gz$/.test(f));
    expect(shards.length).toBeGreaterThanOrEqual(10);
    // Room for the gold spill and about half of the shards (tmpfs counts whole 4 KiB pages per file).
    const page = (n: number) => Math.ceil(n / 4096) * 4096;
    const half = shards.slice(0, Math.floor(shards.length / 2)).reduce((a, f) => a + page(statSync(join(reference, f)).size) + 4096, 0);
    const size = page(statSync(gold).size) + half + 8 * 4096;
    const small = join(dir, 'small');
    mountTmpfs(small, `size=${size}`);
    const out = join(small, 'out');
    const r = sheaf(prepareArgs(out));
    expectPlainFailure(r, small, /the disk is full; free some space and run the same command again: it resumes after the shards completed so far \(ENOSPC\)/);
    // Left: completed shards (as the journal lists them, bytes intact), their count files, the journal, the rejects so far.
    const left = readdirSync(out).sort();
    const journal = readFileSync(join(out, 'journal.jsonl'), 'utf8').trim().split('\n').map((l) => { try { return JSON.parse(l); } catch { return null; } }).filter(Boolean);
    const done = journal[journal.length - 1].state.shards as { file: string; sha256: string; counts: string }[];
    expect(done.length).toBeGreaterThanOrEqual(1);
    for (const s of done) expect(`sha256:${sha(join(out, s.file))}`).toBe(s.sha256);
    for (const f of left) expect(/^(shard-\d{5}\.(counts\.)?msgpack(\.gz)?|journal\.jsonl|rejects\.jsonl\.tmp)$/.test(f), f).toBe(true);
    expect(left).not.toContain('manifest.json');
    // More room, the same command: it resumes and ends with the reference's bytes.
    expect(run('mount', ['-o', 'remount,size=16m', small]).status).toBe(0);
    const again = sheaf([...prepareArgs(out).filter((a) => a !== '--quiet'), '--json']);
    expect(again.status, again.stderr).toBe(0);
    expect(JSON.parse(again.stdout).resumedShards).toBeGreaterThanOrEqual(1);
    const a = tree(out);
    const b = tree(reference);
    delete a['manifest.json'];
    delete b['manifest.json'];
    expect(a).toEqual(b);
    const m = (d: string) => { const x = JSON.parse(readFileSync(join(d, 'manifest.json'), 'utf8')); return { shards: x.shards, totals: x.totals }; };
    expect(m(out)).toEqual(m(reference));
  });
});

describe('faults: a read-only file system', () => {
  it.skipIf(noMount !== null)(`prepare and train cannot write there: status 1 naming the path; a complete shard directory there is read, and is up to date${skipped(noMount)}`, () => {
    const ro = join(dir, 'ro');
    mountTmpfs(ro, 'size=8m');
    const shards = join(ro, 'shards');
    expect(sheaf(prepareArgs(shards)).status).toBe(0);
    expect(run('mount', ['-o', 'remount,ro', ro]).status).toBe(0);
    expectPlainFailure(sheaf(prepareArgs(join(ro, 'other'))), join(ro, 'other'), /read-only file system; choose a place on a writable one \(EROFS\)/);
    expectPlainFailure(sheaf(['train', shards, '-o', join(ro, 'model'), '--quiet']), join(ro, 'model'), /read-only file system/);
    // Reading is fine: a re-run finds the output up to date, train writes elsewhere.
    const again = sheaf(prepareArgs(shards));
    expect(again.status, again.stderr).toBe(0);
    const t = sheaf(['train', shards, '-o', join(dir, 'model-from-ro'), '--quiet', '--cutoff', '1']);
    expect(t.status, t.stderr).toBe(0);
  });
});

/** Every file under `d` (sub-folders too), by relative path → sha256. */
function deepTree(d: string, prefix = ''): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of readdirSync(join(d, prefix), { withFileTypes: true })) {
    const rel = prefix ? `${prefix}/${e.name}` : e.name;
    if (e.isDirectory()) Object.assign(out, deepTree(d, rel));
    else out[rel] = sha(join(d, rel));
  }
  return out;
}
/** Bytes a folder takes on a tmpfs (whole 4 KiB pages per file). */
const pages = (d: string) => Object.keys(deepTree(d)).reduce((a, f) => a + Math.ceil(statSync(join(d, f)).size / 4096) * 4096 + 4096, 0);

describe('faults: a full disk for split, jackknife and merge', () => {
  const full = /the disk is full; free some space and run the same command again/;
  let n = 0;
  /**
   * Runs `args(out)` once into a roomy folder (the reference), then on a tmpfs
   * with about half the room it needs: status 1 naming the output, no file
   * under a temporary name left anywhere, `check` on what is left; then with
   * room the same command ends with the reference's bytes.
   */
  function fullDisk(args: (out: string) => string[], extra: RegExp, check: (out: string) => void = () => {}) {
    const reference = join(dir, `full-reference-${n}`);
    const r0 = sheaf(args(reference));
    expect(r0.status, r0.stderr).toBe(0);
    const small = join(dir, `full-small-${n++}`);
    mountTmpfs(small, `size=${Math.floor(pages(reference) / 2 / 4096) * 4096}`);
    const out = join(small, 'out');
    const r = sheaf(args(out));
    expectPlainFailure(r, out, full);
    expect(r.stderr).toMatch(extra);
    const left = Object.keys(deepTree(out));
    expect(left.filter((f) => f.endsWith('.tmp'))).toEqual([]);
    check(out);
    expect(run('mount', ['-o', 'remount,size=64m', small]).status).toBe(0);
    const again = sheaf(args(out));
    expect(again.status, again.stderr).toBe(0);
    return { reference, out, again, failure: r };
  }

  it.skipIf(noMount !== null)(`split: no folds.json and no temporary file left; run again with room, the same bytes${skipped(noMount)}`, () => {
    const { reference, out } = fullDisk((o) => ['split', gold, '--folds', '3', '--write-train', '-o', o, '--quiet'], /\(ENOSPC\)/, (o) => {
      expect(existsSync(join(o, 'folds.json'))).toBe(false);
    });
    expect(deepTree(out)).toEqual(deepTree(reference));
  });

  it.skipIf(noMount !== null)(`split again over a plan, and the disk fills: the earlier plan stays whole (folds.json and its fold files)${skipped(noMount)}`, () => {
    const plan = join(dir, 'resplit-ref');
    expect(sheaf(['split', gold, '--folds', '3', '-o', plan, '--quiet']).status).toBe(0);
    const small = join(dir, 'resplit-small');
    mountTmpfs(small, `size=${Math.ceil((pages(plan) * 1.5) / 4096) * 4096}`);
    const out = join(small, 'plan');
    expect(sheaf(['split', gold, '--folds', '3', '-o', out, '--quiet']).status).toBe(0);
    const before = deepTree(out);
    // Fill the rest of the disk, then split again another way.
    const filler = join(small, 'filler');
    spawnSync('dd', ['if=/dev/zero', `of=${filler}`, 'bs=4096'], { encoding: 'utf8' });
    const r = sheaf(['split', gold, '--folds', '3', '--seed', '1', '-o', out, '--quiet']);
    expectPlainFailure(r, out, full);
    expect(deepTree(out)).toEqual(before);
  });

  it('a failed split removes its own temporary files only, not a user\'s', () => {
    const out = join(dir, 'split-user-tmp');
    mkdirSync(out);
    writeFileSync(join(out, 'notes.tmp'), 'warden notes');
    const r = sheaf(['split', gold, '--folds', '200', '-o', out, '--force', '--quiet']);
    expect(r.status, r.stderr).toBe(1);
    expect(r.stderr).toMatch(/at most the number of sentences/);
    expect(readdirSync(out).sort()).toEqual(['notes.tmp']);
    expect(readFileSync(join(out, 'notes.tmp'), 'utf8')).toBe('warden notes');
  });

  it.skipIf(noMount !== null)(`jackknife: outputs finished before the disk filled are kept whole; run again with room, only the rest is made and the bytes are the same${skipped(noMount)}`, () => {
    const plan = join(dir, 'jk-fault-plan');
    expect(sheaf(['split', gold, '--folds', '3', '-o', plan, '--quiet']).status).toBe(0);
    const args = (o: string) => ['jackknife', '--plan', plan, '--nbest', '20', '--workers', '1', '-o', o, '--quiet', '--json'];
    let finishedBefore = 0;
    let models = 0;
    const { reference, out, again } = fullDisk(args, /the outputs finished so far are kept/, (o) => {
      // What jackknife.json lists is whole: the reference's bytes.
      const state = existsSync(join(o, 'jackknife.json')) ? JSON.parse(readFileSync(join(o, 'jackknife.json'), 'utf8')) : { outputs: {} };
      for (const f of Object.keys(state.outputs)) expect(sha(join(o, f))).toBe(sha(join(join(dir, `full-reference-${n - 1}`), f)));
      finishedBefore = Object.keys(state.outputs).length;
      models = existsSync(join(o, 'models')) ? readdirSync(join(o, 'models')).filter((f) => f.endsWith('.pcfg')).length : 0;
    });
    expect(finishedBefore).toBeGreaterThanOrEqual(1);
    // No fold queued after the fault started: models of at most the finished folds and the one that failed.
    expect(models).toBeLessThanOrEqual(finishedBefore + 1);
    expect(JSON.parse(again.stdout).upToDate).toBe(finishedBefore);
    const dumps = (d: string) => Object.fromEntries(Object.entries(deepTree(d)).filter(([f]) => f.endsWith('.jsonl.gz')));
    expect(dumps(out)).toEqual(dumps(reference));
  });

  it.skipIf(noMount !== null)(`merge: what it wrote is removed (it starts over); run again with room, the same bytes${skipped(noMount)}`, () => {
    const parts = [0, 1, 2].map((I) => {
      const p = join(dir, `fault-part-${I}`);
      const r = sheaf([...prepareArgs(p), '--part', `${I}/3`]);
      expect(r.status, r.stderr).toBe(0);
      return p;
    });
    const { reference, out, failure } = fullDisk((o) => ['merge', ...parts, '-o', o, '--quiet'], /\(ENOSPC\)/, (o) => {
      expect(readdirSync(o).filter((f) => /^shard-|^manifest\.json$/.test(f))).toEqual([]);
    });
    // The message names the file being written (by its final name), not only the folder.
    expect(failure.stderr).toMatch(/cannot write `[^`]*\/out\/(shard-\d{5}\.(counts\.)?msgpack(\.gz)?|rejects\.jsonl|manifest\.json|pipeline-files\.msgpack)`/);
    expect(deepTree(out)).toEqual(deepTree(reference));
  });
});

describe('faults: an unwritable folder for split, jackknife and merge', () => {
  it.skipIf(noSetpriv !== null)(`each ends with status 1 naming the folder; nothing is written${skipped(noSetpriv)}`, () => {
    const locked = join(dir, 'locked-3');
    mkdirSync(locked);
    chmodSync(locked, 0o555);
    const plan = join(dir, 'plan-for-locked');
    expect(sheaf(['split', gold, '--folds', '3', '-o', plan, '--quiet']).status).toBe(0);
    const part = join(dir, 'part-for-locked');
    expect(sheaf([...prepareArgs(part), '--part', '0/1']).status).toBe(0);
    for (const d of [plan, part]) {
      chmodSync(d, 0o755);
      for (const f of readdirSync(d)) chmodSync(join(d, f), 0o644);
    }
    expectPlainFailure(sheaf(['split', gold, '--folds', '3', '-o', join(locked, 'plan'), '--quiet'], 65534), join(locked, 'plan'), /permission denied; make it writable/);
    expectPlainFailure(sheaf(['jackknife', '--plan', plan, '--nbest', '5', '-o', join(locked, 'nbest'), '--quiet'], 65534), join(locked, 'nbest'), /permission denied; make it writable/);
    expectPlainFailure(sheaf(['merge', part, '-o', join(locked, 'merged'), '--quiet'], 65534), join(locked, 'merged'), /permission denied; make it writable/);
    expect(readdirSync(locked)).toEqual([]);
  });
});
