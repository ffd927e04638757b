/**
 * Conventions every command keeps: usage errors that name the problem and the
 * command's own help, exit status 1 when a run writes nothing or rejects too
 * much, output folders that are claimed rather than overwritten, and progress
 * that counts finished work. Runs the built launcher (`npm test` builds first)
 * where the CLI itself is the subject, the run functions elsewhere.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { closest } from '../src/cli.js';
import { claimOutputFolder, outputKinds } from '../src/io/output-folder.js';
import { createProgress, RateWindow } from '../src/io/progress.js';
import { runPrepare } from '../src/prepare/run-prepare.js';

const BIN = fileURLToPath(new URL('../bin/sheaf.js', import.meta.url));
const sheaf = (...args: string[]) => spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8' });
const dir = mkdtempSync(join(tmpdir(), 'sheaf-conv-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const at = (n: string) => join(dir, n);
const pipeline = fileURLToPath(new URL('../pipelines/default.json', import.meta.url));

const GOLD = '(S (NP (NN warden)) (VP (VBD counted) (NP (NNS ropes))))\n(S (NP (NN porter)) (VP (VBD carried) (NP (NNS crates))))\n(S (NP (NN stove)) (VP (VBD failed)))\n(S (NP (NN ledger)) (VP (VBD lay)))\n';
const list = (id: string, tree: string) => JSON.stringify({ id, candidates: [{ tree, score: -1 }, { tree: tree.replace('(NP (NN', '(NP (NNP'), score: -2 }] });
const GOOD = [
  list('1', '(S (NP (NN warden)) (VP (VBD counted) (NP (NNS ropes))))'),
  list('2', '(S (NP (NN porter)) (VP (VBD carried) (NP (NNS crates))))'),
  list('3', '(S (NP (NN stove)) (VP (VBD failed)))'),
  list('4', '(S (NP (NN ledger)) (VP (VBD lay)))'),
];
writeFileSync(at('gold.trees'), GOLD);
writeFileSync(at('good.jsonl'), GOOD.join('\n') + '\n');
// Three of four lists have words that are not their gold sentence's.
writeFileSync(at('mostly-bad.jsonl'), [GOOD[0], ...GOOD.slice(1).map((l) => l.replace(/stove|porter|ledger/g, 'kettle'))].join('\n') + '\n');

describe('usage errors', () => {
  it('lists the commands when none is given (status 1)', () => {
    const r = sheaf();
    expect(r.status).toBe(1);
    for (const c of ['split', 'jackknife', 'prepare', 'train', 'eval', 'rerank', 'inspect', 'export', 'demo']) expect(r.stderr).toMatch(new RegExp(`^  ${c} `, 'm'));
    expect(r.stderr).toContain('sheaf <command> --help');
  });

  it('names an unknown command as such, with the closest command', () => {
    const r = sheaf('prepar', '--gold', 'x');
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('unknown command `prepar`; did you mean `sheaf prepare`?');
  });

  it('names an unknown option before complaining of the required one it was meant to be', () => {
    const r = sheaf('prepare', '--gold', 'g', '--nbest', 'n', '--pipline', 'demo', '-o', 'out');
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('unknown option `--pipline` for `sheaf prepare`; did you mean `--pipeline`?');
    expect(r.stderr).toContain('(see `sheaf prepare --help`)');
  });

  it('points a missing option at the command\'s own help', () => {
    const r = sheaf('train', 'shards');
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('expected `--out`');
    expect(r.stderr).toContain('(see `sheaf train --help`)');
  });

  it('keeps --version to sheaf itself and help examples on one line each', () => {
    expect(sheaf('--version').stdout.trim()).toBe(JSON.parse(readFileSync(fileURLToPath(new URL('../package.json', import.meta.url)), 'utf8')).version);
    expect(sheaf('prepare', '--version').stderr).toContain('unknown option `--version`');
    const help = sheaf('jackknife', '--help').stdout;
    expect(help).not.toContain('--version');
    // The longest example is whole on its line: it can be copied and pasted.
    expect(help).toMatch(/^ *sheaf jackknife --plan plan\/ --train-cmd "myparser train \{train\} \{model\}" --parse-cmd "myparser parse \{model\} \{input\} \{output\}" -o nbest\//m);
  });

  it('suggests only close spellings (edit distance, prefixes)', () => {
    expect(closest('epoch', ['epochs', 'cutoff'])).toBe('epochs');
    expect(closest('wrokers', ['workers', 'out'])).toBe('workers');
    expect(closest('zzz', ['workers', 'out'])).toBeNull();
  });
});

describe('prepare: status 1 when a run writes nothing or rejects too much', () => {
  it('refuses two inputs on stdin', async () => {
    await expect(runPrepare({ gold: '-', nbest: ['-'], pipeline, out: at('stdin2'), quiet: true })).rejects.toThrow(/at most one input on stdin/);
  });

  it('fails when every list is rejected (gold and n-best swapped), keeping the rejects', async () => {
    await expect(runPrepare({ gold: at('good.jsonl'), nbest: [at('gold.trees')], pipeline, out: at('swapped'), workers: 0, quiet: true }))
      .rejects.toThrow(/wrote no sentence: all \d+ n-best lists read were rejected \(most often `[a-z-]+` \(\d+\).*rejects\.jsonl\); were `--gold` and `--nbest` given the right files\?/);
    expect(readFileSync(at('swapped/rejects.jsonl'), 'utf8').trim().split('\n').length).toBeGreaterThan(0);
  });

  it('fails above --max-reject-rate and passes when the rate allows it', async () => {
    await expect(runPrepare({ gold: at('gold.trees'), nbest: [at('mostly-bad.jsonl')], pipeline, out: at('bad'), workers: 0, quiet: true }))
      .rejects.toThrow(/rejected 3 of 4 n-best lists \(75\.0 %, over the limit of 50 %/);
    // A list whose every candidate has other words than its gold sentence is refused whole (one bad candidate is only dropped).
    const reasons = readFileSync(at('bad/rejects.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(reasons.map((r) => [r.code, r.candidate ?? null])).toEqual([['yield-mismatch', null], ['yield-mismatch', null], ['yield-mismatch', null]]);
    expect(reasons[0].reason).toMatch(/the words of every candidate \(2\) differ from the gold tree's/);
    // The same output, re-run: up to date, and still over the limit.
    await expect(runPrepare({ gold: at('gold.trees'), nbest: [at('mostly-bad.jsonl')], pipeline, out: at('bad'), workers: 0, quiet: true })).rejects.toThrow(/rejected 3 of 4/);
    const s = await runPrepare({ gold: at('gold.trees'), nbest: [at('mostly-bad.jsonl')], pipeline, out: at('bad'), workers: 0, quiet: true, maxRejectRate: 0.8 });
    expect(s).toMatchObject({ upToDate: true, written: 1, rejected: 3 });
  });
});

describe('output folders', () => {
  it('takes a new or empty folder, refuses a file, and says whose output a folder holds', () => {
    expect(claimOutputFolder(at('new/deeper'), 'shards')).toEqual({ fresh: true });
    mkdirSync(at('empty'));
    expect(claimOutputFolder(at('empty'), 'model')).toEqual({ fresh: true });
    writeFileSync(at('a-file'), 'x');
    expect(() => claimOutputFolder(at('a-file'), 'shards')).toThrow(/is a file; expected a folder for sheaf prepare/);
    expect(() => claimOutputFolder(at('a-file/under'), 'shards')).toThrow(/cannot make the folder .*a part of that path is a file.*ENOTDIR/);
    // A file system where mkdir fails with ENOENT (Node's recursive mkdir never returns there).
    if (existsSync('/proc/self')) expect(() => claimOutputFolder('/proc/sheaf-out/deeper', 'model')).toThrow(/cannot make the output folder `\/proc\/sheaf-out\/deeper`.*ENOENT/);
    expect(outputKinds(['manifest.json', 'shard-00000.msgpack.gz', 'rejects.jsonl'])).toEqual(['shards']);
    expect(outputKinds(['model.json', 'weights.msgpack', 'names.json'])).toEqual(['model']);
    expect(outputKinds(['folds.json', 'heldout-0.jsonl'])).toEqual(['plan']);
    expect(outputKinds(['jackknife.json', 'fold-0.jsonl.gz', 'models', 'logs'])).toEqual(['nbest']);
    expect(outputKinds(['notes.txt', 'rejects.jsonl'])).toEqual([]);
  });

  it('refuses a folder of other files or of another command unless --force', async () => {
    mkdirSync(at('mine'));
    writeFileSync(at('mine/field-notes.txt'), 'keep me');
    expect(() => claimOutputFolder(at('mine'), 'shards')).toThrow(/is not empty and holds no output of sheaf prepare .*`field-notes\.txt`.*--force/);
    mkdirSync(at('model-dir'));
    writeFileSync(at('model-dir/model.json'), '{}');
    expect(() => claimOutputFolder(at('model-dir'), 'shards')).toThrow(/holds the output of sheaf train; sheaf prepare would mix its files into it/);
    expect(claimOutputFolder(at('mine'), 'shards', { force: true })).toEqual({ fresh: false });
    // --force writes alongside and leaves the user's file alone.
    await runPrepare({ gold: at('gold.trees'), nbest: [at('good.jsonl')], pipeline, out: at('mine'), workers: 0, quiet: true, force: true });
    expect(readFileSync(at('mine/field-notes.txt'), 'utf8')).toBe('keep me');
    expect(existsSync(at('mine/manifest.json'))).toBe(true);
  });

  it('re-runs prepare into its own folder (up to date), but refuses other inputs there, naming them, unless --force', async () => {
    const o = { gold: at('gold.trees'), nbest: [at('good.jsonl')], pipeline, out: at('shards'), workers: 0, quiet: true };
    expect(await runPrepare(o)).toMatchObject({ upToDate: false, written: 4 });
    expect(await runPrepare(o)).toMatchObject({ upToDate: true, written: 4 });
    writeFileSync(at('good2.jsonl'), GOOD.slice(0, 3).join('\n') + '\n');
    await expect(runPrepare({ ...o, nbest: [at('good2.jsonl')] })).rejects.toThrow(/holds shards prepared from other inputs or config \(n-best dumps `.*good\.jsonl` then, `.*good2\.jsonl` now\).*--force/);
    const demo = fileURLToPath(new URL('../pipelines/demo.json', import.meta.url));
    await expect(runPrepare({ ...o, pipeline: demo })).rejects.toThrow(/other inputs or config \(pipeline sha256:/);
    expect(await runPrepare({ ...o, nbest: [at('good2.jsonl')], force: true })).toMatchObject({ upToDate: false, written: 3 });
  });

  it('the CLI reports a file given as output folder as a usage error (status 1), not an internal one', () => {
    const r = sheaf('prepare', '--gold', at('gold.trees'), '--nbest', at('good.jsonl'), '--pipeline', pipeline, '-o', at('a-file'), '--quiet');
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/^sheaf: .*is a file; expected a folder/);
  });
});

describe('progress', () => {
  it('averages rates over at least the last 10 seconds', () => {
    const w = new RateWindow(0);
    // 100 candidates/s for 20 s, then 1,000/s: the rate follows within the window, not since the start.
    let c = 0;
    let r = { candidates: 0, bytes: 0 };
    for (let t = 1; t <= 20; t++) r = w.add(t * 1000, (c += 100), c);
    expect(r.candidates).toBeCloseTo(100, 6);
    for (let t = 21; t <= 40; t++) r = w.add(t * 1000, (c += 1000), c);
    expect(r.candidates).toBeCloseTo(1000, 6);
    // Never over less than 10 s once 10 s have passed: one fast second does not swing it.
    r = w.add(41_000, (c += 10_000), c);
    expect(r.candidates).toBeLessThan(2000);
  });

  it('shows finished work, the first line in a pipe one interval after the start', () => {
    let now = 0;
    const lines: string[] = [];
    const stream = { isTTY: false, write: (s: string) => lines.push(s) } as unknown as NodeJS.WriteStream;
    const p = createProgress({ quiet: false, label: 'sheaf prepare', totalBytes: 1000, stream, now: () => now });
    p.update({ sentences: 1, candidates: 10, bytesDone: 10 });
    expect(lines).toEqual([]);
    now = 6000;
    p.update({ sentences: 300, candidates: 3000, bytesDone: 600 });
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^sheaf prepare: \[#{14}\.{10}\] 60% 300 sentences, 3,000 candidates done, 500 candidates\/s, about 4 s left\n$/);
  });
});
