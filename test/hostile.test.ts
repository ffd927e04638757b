/**
 * Hostile input: shard and model folders whose files lead outside them
 * (`../`, absolute paths, symbolic links), MessagePack extension types in a
 * shard, JSON keys named like prototype members, and external parser
 * commands with shell metacharacters in file names. Each is refused with a
 * message (status 1 through the CLI) or, for the command templates, runs
 * exactly the one program with the literal file names. Held before these
 * tests were written, kept as regression tests: `../` and absolute paths in
 * manifests, extension types, prototype keys in dumps, plans and pipelines,
 * argument arrays for external commands. New: symbolic links out of a
 * folder, and model.json naming files other than its own.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, symlinkSync, unlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gunzipSync, gzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DataError, UsageError } from '../src/core/errors.js';
import { createVocabulary } from '../src/core/interner.js';
import { parseFoldPlan } from '../src/formats/fold-plan.js';
import { parseManifest } from '../src/formats/manifest.js';
import { loadPipeline } from '../src/io/load-pipeline.js';
import { loadModel } from '../src/io/model-dir.js';
import { readNbest } from '../src/io/read-nbest.js';
import { readManifest, readRankingListDir, readShardDir } from '../src/io/read-shards.js';
import { readTreebank } from '../src/io/read-treebank.js';
import { runPrepare } from '../src/prepare/run-prepare.js';
import { runTrain } from '../src/train/run-train.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const BIN = join(root, 'bin/sheaf.js');
const dir = mkdtempSync(join(tmpdir(), 'sheaf-hostile-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const sheaf = (args: string[], cwd?: string) => spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8', cwd });
let n = 0;
const fresh = (name: string) => join(dir, `${n++}-${name}`);

const tree = (k: number) => `(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD ${k}) (NNS crates))) (. .))`;
const flatTree = (k: number) => `(S (NP (DT the) (NN porter)) (VP (VBD carried) (CD ${k}) (NNS crates)) (. .))`;
let shards: string;
let model: string;
beforeAll(async () => {
  const gold = fresh('gold.trees');
  writeFileSync(gold, Array.from({ length: 30 }, (_, k) => tree(k)).join('\n') + '\n');
  const dump = fresh('d.jsonl');
  writeFileSync(dump, Array.from({ length: 30 }, (_, k) => JSON.stringify({ id: String(k + 1), candidates: [{ tree: flatTree(k), score: -1 }, { tree: tree(k), score: -2 }] })).join('\n') + '\n');
  const p = JSON.parse(readFileSync(join(root, 'pipelines/default.json'), 'utf8'));
  p.stages.find((s: any) => s.stage === 'write-shards.v1').sentencesPerShard = 10;
  p.stages.find((s: any) => s.stage === 'hash-features.v2').names = 1;
  const pipeline = fresh('pipeline.json');
  writeFileSync(pipeline, JSON.stringify(p));
  shards = fresh('shards');
  await runPrepare({ gold, nbest: [dump], pipeline, out: shards, workers: 0, quiet: true });
  model = fresh('model');
  await runTrain({ shards, out: model, cutoff: 0, epochs: 1, quiet: true });
});

const copyOf = (d: string) => {
  const c = fresh('copy');
  cpSync(d, c, { recursive: true });
  return c;
};
async function drain(it: AsyncIterable<unknown>) {
  for await (const _ of it) void _;
}

describe('hostile: folders that name files outside themselves', () => {
  it('a manifest naming `../` or an absolute path is refused (formats/manifest.ts), also through the readers and the CLI', async () => {
    for (const file of ['../elsewhere/shard-00000.msgpack.gz', '/etc/passwd', 'shard-00000.msgpack.gz/../../x']) {
      const d = copyOf(shards);
      const m = JSON.parse(readFileSync(join(d, 'manifest.json'), 'utf8'));
      m.shards[0].file = file;
      writeFileSync(join(d, 'manifest.json'), JSON.stringify(m));
      expect(() => readManifest(d)).toThrow(/expected a plain name like `shard-00000\.msgpack\.gz` inside the directory/);
      const r = sheaf(['export', d, '--format', 'svmlight']);
      expect(r.status).toBe(1);
      expect(r.stdout).toBe('');
    }
  });

  it('a shard, count, names or manifest file that is a symbolic link to outside the folder is refused; a link inside it is fine', async () => {
    const outside = fresh('outside');
    mkdirSync(outside);
    for (const f of ['shard-00001.msgpack.gz', 'shard-00000.counts.msgpack', 'names.json', 'manifest.json', 'pipeline-files.msgpack']) {
      const d = copyOf(shards);
      cpSync(join(d, f), join(outside, f));
      unlinkSync(join(d, f));
      symlinkSync(join(outside, f), join(d, f));
      const runs: [string, () => Promise<unknown>][] = [
        ['inspect', () => drain(readShardDir(d, readManifest(d)))],
        ['eval path', () => drain(readRankingListDir(d, readManifest(d)))],
        ['train', () => runTrain({ shards: d, out: fresh('m'), cutoff: 0, epochs: 1, quiet: true })],
      ];
      let refused = 0;
      for (const [what, run] of runs) {
        try {
          await run();
        } catch (e) {
          expect(e, what).toBeInstanceOf(UsageError);
          expect((e as Error).message).toMatch(/leads outside .*copy the file in instead of linking to it/);
          refused++;
        }
      }
      // Each file is read by at least one of them (the names and pipeline files by train).
      expect(refused, f).toBeGreaterThanOrEqual(1);
      const r = sheaf(['train', d, '-o', fresh('m'), '--quiet', '--cutoff', '0']);
      expect(r.status, f).toBe(1);
      expect(r.stderr).toContain('leads outside');
    }
    // A link that stays inside the folder is read.
    const d = copyOf(shards);
    mkdirSync(join(d, 'store'));
    cpSync(join(d, 'shard-00001.msgpack.gz'), join(d, 'store', 'kept.gz'));
    unlinkSync(join(d, 'shard-00001.msgpack.gz'));
    symlinkSync(join(d, 'store', 'kept.gz'), join(d, 'shard-00001.msgpack.gz'));
    let k = 0;
    for await (const _ of readShardDir(d)) k++;
    expect(k).toBe(30);
  });

  it('a model folder whose files lead outside it, or whose model.json names other files, is refused', () => {
    const outside = fresh('outside-model');
    mkdirSync(outside);
    const d = copyOf(model);
    cpSync(join(d, 'weights.msgpack'), join(outside, 'weights.msgpack'));
    unlinkSync(join(d, 'weights.msgpack'));
    symlinkSync(join(outside, 'weights.msgpack'), join(d, 'weights.msgpack'));
    expect(() => loadModel(d)).toThrow(/leads outside/);
    for (const [key, value] of [['files', '../../etc/passwd'], ['names', '/etc/passwd']] as const) {
      const e = copyOf(model);
      const info = JSON.parse(readFileSync(join(e, 'model.json'), 'utf8'));
      if (key === 'files') info.pipeline.files = value;
      else info.names = value;
      writeFileSync(join(e, 'model.json'), JSON.stringify(info));
      expect(() => loadModel(e)).toThrow(/expected `(pipeline-files\.msgpack|names\.json)` inside the folder/);
      const r = sheaf(['inspect', e, '--top', '3']);
      expect(r.status).toBe(1);
    }
  });
});

describe('hostile: MessagePack extension types in a shard', () => {
  it('are refused by the shard reader (both paths) and the CLI, naming the file and the byte', async () => {
    const d = copyOf(shards);
    const file = join(d, 'shard-00000.msgpack.gz');
    // The first record, as a gzip member of its own (prepare writes one member per sentence).
    const all = gunzipSync(readFileSync(file));
    // Replace the nil of `flag` (key "flag" then 0xc0) with a fixext 1 value, and recompress.
    const key = Buffer.from([0xa4, ...Buffer.from('flag')]);
    const at = all.indexOf(key) + key.length;
    expect(all[at]).toBe(0xc0);
    for (const ext of [[0xd4, 0x01, 0x00], [0xd5, 0x7f, 0x00, 0x00], [0xc7, 0x01, 0x05, 0x00]]) {
      writeFileSync(file, gzipSync(Buffer.concat([all.subarray(0, at), Buffer.from(ext), all.subarray(at + 1)])));
      for (const read of [() => drain(readShardDir(d)), () => drain(readRankingListDir(d))]) {
        const e = await read().then(() => null, (x) => x);
        expect(e).toBeInstanceOf(DataError);
        expect(e).toMatchObject({ code: 'bad-shard', file });
        expect(e.message).toMatch(/extension/i);
        expect(e.message).toMatch(/byte \d+/);
      }
      const r = sheaf(['inspect', d, '--jsonl']);
      expect(r.status).toBe(1);
      expect(r.stderr).toMatch(/extension/i);
    }
  });
});

describe('hostile: JSON keys named like prototype members change no object', () => {
  const protoBefore = Object.getOwnPropertyNames(Object.prototype).sort().join();
  afterAll(() => {
    expect(Object.getOwnPropertyNames(Object.prototype).sort().join()).toBe(protoBefore);
    expect(({} as Record<string, unknown>).fold).toBeUndefined();
  });

  it('an n-best record: `__proto__` does not give it a fold or candidates; `constructor` and `toString` are only unknown fields', async () => {
    const text = [
      '{"id": "1", "__proto__": {"fold": 3, "candidates": [{"tree": "(S (NN x))", "score": 0}]}, "candidates": []}',
      '{"__proto__": {"id": "2"}, "candidates": []}',
      '{"id": "3", "constructor": {"prototype": {"fold": 1}}, "toString": 5, "candidates": []}',
    ].join('\n') + '\n';
    const items = [];
    async function* one() {
      yield Buffer.from(text);
    }
    for await (const i of readNbest('d.jsonl', { source: one() })) items.push(i);
    expect(items[0]).toEqual({ record: expect.objectContaining({ id: '1', fold: null, candidates: [] }) });
    expect(items[1]).toEqual({ reject: expect.objectContaining({ code: 'bad-field', line: 2 }) });
    expect(items[2]).toEqual({ record: expect.objectContaining({ id: '3', fold: null, candidates: [] }) });
  });

  it('a gold JSON Lines record: `__proto__` does not give it an id', async () => {
    const f = fresh('gold.jsonl');
    writeFileSync(f, '{"__proto__": {"id": "hut-7"}, "tree": "(S (NN lamp))"}\n');
    const ids = [];
    for await (const r of readTreebank(f, { vocab: createVocabulary() })) ids.push([r.id, r.byPosition]);
    expect(ids).toEqual([['1', true]]);
  });

  it('a fold plan, a manifest and a pipeline file: what `__proto__` carries is not read as their fields', () => {
    expect(() => parseFoldPlan('{"__proto__": {"format": "sheaf-folds/1", "folds": [{"fold": 0, "ids": ["1"]}]}}', 'folds.json')).toThrow(/expected `format` to be `sheaf-folds\/1`/);
    expect(() => parseFoldPlan('{"format": "sheaf-folds/1", "folds": [{"__proto__": {"fold": 0, "ids": ["1"]}}]}', 'folds.json')).toThrow(/expected `fold` to be an integer/);
    const good = readFileSync(join(shards, 'manifest.json'), 'utf8');
    const m = JSON.parse(good);
    const hidden = `{"__proto__": ${JSON.stringify({ format: m.format, hashing: m.hashing })}, ${good.trim().slice(1).replace(/"format": "[^"]+",/, '').replace(/"hashing": \{[^}]*\},/, '')}`;
    expect(() => parseManifest(hidden, 'shards')).toThrow(UsageError);
    const p = readFileSync(join(root, 'pipelines/default.json'), 'utf8');
    const file = fresh('pipeline.json');
    writeFileSync(file, p.replace('{', '{"__proto__": {"format": "sheaf-pipeline/1"},'));
    expect(() => loadPipeline(file)).toThrow(/unknown key `__proto__`/);
  });
});

describe('hostile: shell metacharacters in the file names of external parser commands', () => {
  it('the commands run as argument arrays: each placeholder is one literal argument, and nothing else runs', () => {
    const work = fresh('work');
    mkdirSync(work);
    const fake = join(work, 'fake-parser.mjs');
    const log = join(work, 'argv.log');
    // A stand-in parser: logs its arguments, trains nothing, parses every sentence as a flat tree.
    writeFileSync(fake, `
import { appendFileSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
const [mode, ...rest] = process.argv.slice(2);
appendFileSync(${JSON.stringify(log)}, JSON.stringify([mode, ...rest]) + '\\n');
if (mode === 'train') { mkdirSync(rest[1], { recursive: true }); writeFileSync(rest[1] + '/model.txt', 'ok'); }
else {
  const [model, input, output] = rest;
  readFileSync(model + '/model.txt');
  const blocks = readFileSync(input, 'utf8').split('\\n').filter(Boolean).map((s) => '-1\\t(S ' + s.split(' ').map((w) => '(X ' + w + ')').join(' ') + ')\\n');
  writeFileSync(output, blocks.join('\\n'));
}
`);
    const gold = join(work, 'gold.trees');
    writeFileSync(gold, Array.from({ length: 12 }, (_, k) => `( ${tree(k)} )`).join('\n') + '\n');
    const nasty = "nb $(touch PWNED1) ; touch PWNED2 `touch PWNED3` | touch PWNED4 && 'q' \"d\" *";
    const plan = join(work, `plan ${'$(touch PWNED5)'}; x`);
    expect(sheaf(['split', gold, '--folds', '2', '-o', plan, '--quiet'], work).status).toBe(0);
    const out = join(work, nasty);
    const r = sheaf(['jackknife', '--plan', plan, '--nbest', '1', '-o', out, '--quiet', '--json',
      '--train-cmd', `node ${fake} train {train} {model} ; touch PWNED6`,
      '--parse-cmd', `node ${fake} parse {model} {input} {output} $(touch PWNED7) \`touch PWNED8\``], work);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).outputs).toHaveLength(2);
    // Nothing but the parser ran: no file from the shell fragments, anywhere they could have landed.
    for (const d of [work, root, out, plan]) expect(readdirSync(d).filter((f) => /^PWNED\d$/.test(f)), d).toEqual([]);
    // Each placeholder arrived as one argument holding the literal folder name; the fragments as plain arguments.
    const calls = readFileSync(log, 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    const train = calls.filter((c) => c[0] === 'train');
    const parse = calls.filter((c) => c[0] === 'parse');
    expect(train.length).toBeGreaterThanOrEqual(2);
    expect(parse.length).toBeGreaterThanOrEqual(2);
    for (const c of train) {
      expect(c[2].startsWith(out)).toBe(true);
      expect(c.slice(3)).toEqual([';', 'touch', 'PWNED6']);
    }
    for (const c of parse) {
      expect(c[1].startsWith(out)).toBe(true);
      expect(c.slice(4)).toEqual(['$(touch', 'PWNED7)', '`touch', 'PWNED8`']);
    }
  });
});
