/**
 * `sheaf jackknife` end to end on 240 demo trees: every fold's lists hold
 * exactly its held-out sentences, stamped with the fold and the model that
 * the plan records; `prepare --plan` accepts them and refuses a crafted
 * leak; re-runs redo only what changed and say why; an external parser (a
 * small fake script) runs through argument arrays, its failures fail clearly.
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { gunzipSync, gzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runSplit } from '../src/folds/run-split.js';
import { parseFoldPlan } from '../src/formats/fold-plan.js';
import { dumpName, runJackknife, type JackknifeOptions } from '../src/jackknife/run-jackknife.js';
import { runPrepare } from '../src/prepare/run-prepare.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-jk-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let gold: string;
let plan: string;
let dev: string;

const dump = (f: string) => gunzipSync(readFileSync(f)).toString('utf8').trim().split('\n').map((l) => JSON.parse(l));
const folds = () => parseFoldPlan(readFileSync(join(plan, 'folds.json'), 'utf8'), 'folds.json');
const jk = (o: Partial<JackknifeOptions> = {}) => runJackknife({ plan, out: join(dir, 'nbest'), nbest: 5, workers: 0, parse: [dev], quiet: true, ...o });

beforeAll(async () => {
  const trees = readFileSync(join(root, 'demo-corpus/huts-train.trees'), 'utf8').split(/\n(?=\( \()/);
  gold = join(dir, 'gold.trees');
  writeFileSync(gold, trees.slice(0, 240).join('\n') + '\n');
  dev = join(dir, 'dev.trees');
  writeFileSync(dev, trees.slice(240, 260).join('\n') + '\n');
  plan = join(dir, 'plan');
  await runSplit({ gold, folds: 4, out: plan, quiet: true });
});

describe('sheaf jackknife', () => {
  it('parses every fold with a model trained on the others, stamps lists and records models in the plan', async () => {
    const s = await jk();
    expect(s.remade).toBe(5);
    const p = folds();
    for (const f of p.folds) {
      const lists = dump(join(dir, 'nbest', `fold-${f.fold}.jsonl.gz`));
      expect(lists.map((r) => r.id)).toEqual(f.ids);
      expect(f.model).toMatchObject({ parser: 'sheaf-pcfg' });
      for (const r of lists) {
        expect(r.fold).toBe(f.fold);
        expect(r.source).toEqual(f.model);
        expect(r.candidates.length).toBeGreaterThan(0);
        expect(r.candidates.length).toBeLessThanOrEqual(5);
      }
    }
    // Each fold's model differs (different training parts); the --parse file's lists have no fold.
    expect(new Set(p.folds.map((f) => f.model!.fingerprint)).size).toBe(4);
    const devLists = dump(join(dir, 'nbest', dumpName(dev)));
    expect(devLists).toHaveLength(20);
    expect(devLists[0].fold).toBeNull();
  });

  it('gives lists that prepare --plan accepts, and a crafted leak is refused', async () => {
    await jk();
    const nbest = folds().folds.map((f) => join(dir, 'nbest', `fold-${f.fold}.jsonl.gz`));
    const ok = await runPrepare({ gold, nbest, plan, pipeline: 'default', out: join(dir, 'shards'), workers: 0, quiet: true });
    expect(ok).toMatchObject({ read: 240, written: 240, rejected: 0 });
    // Fold 1's lists relabelled as fold 0's: the fingerprint gives them away.
    const leak = dump(nbest[1]).map((r) => ({ ...r, fold: 0 }));
    const f = join(dir, 'leak.jsonl.gz');
    writeFileSync(f, gzipSync(leak.map((r) => JSON.stringify(r)).join('\n')));
    // Nothing written: status 1, naming the reason; the rejects stay for the user to read.
    await expect(runPrepare({ gold, nbest: [f], plan, pipeline: 'default', out: join(dir, 'shards-leak'), workers: 0, quiet: true }))
      .rejects.toThrow(/wrote no sentence: all 72 n-best lists read were rejected \(most often `leak` \(72\)/);
    const rejects = readFileSync(join(dir, 'shards-leak', 'rejects.jsonl'), 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(new Set(rejects.map((r) => r.code))).toEqual(new Set(['leak']));
  });

  it('re-makes only what changed, and says why', async () => {
    await jk();
    const models = () => readdirSync(join(dir, 'nbest', 'models')).length;
    const before = models();
    expect((await jk()).remade).toBe(0);
    // A new list depth re-parses every output, trains nothing.
    const deeper = await jk({ nbest: 7 });
    expect(deeper.remade).toBe(5);
    expect(deeper.outputs.every((o) => o.why === 'the list depth changed (5 → 7)')).toBe(true);
    expect(models()).toBe(before);
    // An output lost (an interrupted run) is re-made alone.
    rmSync(join(dir, 'nbest', 'fold-2.jsonl.gz'));
    const again = await jk({ nbest: 7 });
    expect(again.outputs.filter((o) => o.remade).map((o) => o.file)).toEqual(['fold-2.jsonl.gz']);
    // New parser settings redo everything.
    const other = await jk({ nbest: 7, pcfg: { vertical: '1' } });
    expect(other.remade).toBe(5);
    expect(other.outputs[0].why).toMatch(/the base model changed/);
    // One held-out tree edited: that fold's sentences changed, and every other output's training part.
    const h = join(plan, 'heldout-3.jsonl');
    const text = readFileSync(h, 'utf8');
    writeFileSync(h, text.replace('(NN ', '(NNS '));
    try {
      const edited = await jk({ nbest: 7, pcfg: { vertical: '1' } });
      expect(edited.remade).toBe(5);
      expect(edited.outputs.find((o) => o.file === 'fold-3.jsonl.gz')!.why).toBe('its sentences changed');
      expect(edited.outputs.find((o) => o.file === 'fold-0.jsonl.gz')!.why).toMatch(/the base model changed/);
      const state = JSON.parse(readFileSync(join(dir, 'nbest', 'jackknife.json'), 'utf8'));
      expect(state.outputs['fold-3.jsonl.gz'].why).toBe('its sentences changed');
    } finally {
      writeFileSync(h, text);
    }
  });

  it('refuses --parse files whose dump names collide', async () => {
    const other = join(dir, 'sub');
    rmSync(other, { recursive: true, force: true });
    const { mkdirSync } = await import('node:fs');
    mkdirSync(other);
    writeFileSync(join(other, 'dev.jsonl'), readFileSync(dev));
    await expect(jk({ parse: [dev, join(other, 'dev.jsonl')] })).rejects.toThrow(/would write `dev\.jsonl\.gz`, which `.*dev\.trees` also writes/);
    writeFileSync(join(other, 'fold-1.trees'), readFileSync(dev));
    await expect(jk({ parse: [join(other, 'fold-1.trees')] })).rejects.toThrow(/would write `fold-1\.jsonl\.gz`, which fold 1 also writes/);
  });

  describe('an external parser', () => {
    // A fake parser: "training" counts the trees; "parsing" writes two flat trees per sentence in score<TAB>tree blocks.
    const fake = join(dir, 'fake parser.mjs');
    beforeAll(() => {
      writeFileSync(fake, `
import { readFileSync, writeFileSync } from 'node:fs';
const [mode, a, b, c] = process.argv.slice(2);
if (mode === 'train') { writeFileSync(b + '/model.txt', String(readFileSync(a, 'utf8').trim().split('\\n').length)); process.exit(0); }
if (mode === 'fail') { console.error('the fake parser refuses'); process.exit(3); }
const n = Number(readFileSync(a + '/model.txt', 'utf8'));
const out = readFileSync(b, 'utf8').trim().split('\\n').map((s) => {
  const w = s.split(' ');
  const flat = '(S ' + w.map((x) => '(NN ' + x + ')').join(' ') + ')';
  const vp = '(S (NP ' + '(NN ' + w[0] + ')) (VP ' + w.slice(1).map((x) => '(NN ' + x + ')').join(' ') + '))';
  return (-n) + '\\t' + vp + '\\n' + (-n - 1) + '\\t' + flat + '\\n';
});
writeFileSync(c, out.join('\\n'));
`);
    });

    it('runs the commands as argument arrays and stamps lists with its fingerprint', async () => {
      const out = join(dir, 'ext $(touch PWNED) ;');
      const s = await jk({ out, trainCmd: `${process.execPath} "${fake}" train {train} {model}`, parseCmd: `${process.execPath} "${fake}" parse {model} {input} {output}`, parse: [] });
      expect(s.remade).toBe(4);
      expect(s.parser).toBe('external:fake parser.mjs');
      const lists = dump(join(out, 'fold-0.jsonl.gz'));
      expect(lists[0].candidates).toHaveLength(2);
      expect(lists[0].source.parser).toBe('external:fake parser.mjs');
      expect(folds().folds[0].model!.parser).toBe('external:fake parser.mjs');
      // Shell metacharacters in file names ran nothing.
      expect(existsSync('PWNED')).toBe(false);
      expect(existsSync(join(out, 'PWNED'))).toBe(false);
      // And the lists go through prepare.
      const shards = await runPrepare({ gold, nbest: folds().folds.map((f) => join(out, `fold-${f.fold}.jsonl.gz`)), plan, pipeline: 'default', out: join(dir, 'ext-shards'), workers: 0, quiet: true });
      expect(shards).toMatchObject({ written: 240, rejected: 0 });
      await jk({ parse: [] }); // put the embedded models back into the plan for other tests
    });

    it('fails clearly when a command fails, naming the status and the stderr log', async () => {
      const out = join(dir, 'ext-fail');
      await expect(jk({ out, trainCmd: `${process.execPath} "${fake}" fail {train} {model}`, parseCmd: `${process.execPath} "${fake}" parse {model} {input} {output}`, parse: [] }))
        .rejects.toThrow(/4 output\(s\) failed.*\n.*fold 0: training: .* exited with status 3; its stderr is in .*fold-0\.train\.stderr/);
      expect(readFileSync(join(out, 'logs', 'fold-0.train.stderr'), 'utf8')).toContain('the fake parser refuses');
    });

    it('refuses templates without their placeholders, or with unknown ones', async () => {
      await expect(jk({ trainCmd: 'x {train}', parseCmd: 'y {model} {input} {output}' })).rejects.toThrow(/`--train-cmd` must use the placeholder \{model\}/);
      await expect(jk({ trainCmd: 'x {train} {model}', parseCmd: 'y {model} {input} {outptu}' })).rejects.toThrow(/unknown placeholder \{outptu\}/);
      await expect(jk({ trainCmd: 'x {train} {model}' })).rejects.toThrow(/expected both `--train-cmd` and `--parse-cmd`/);
    });
  });
});
