/**
 * `sheaf split`: every sentence in exactly one fold; blocks within one of
 * each other in size; hash folds depend on the id alone (appending sentences
 * moves none); held-out files keep ids; bad requests refused.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { hashFold } from '../src/folds/assign-folds.js';
import { runSplit } from '../src/folds/run-split.js';
import { parseFoldPlan } from '../src/formats/fold-plan.js';
import { murmur3String } from '../src/core/murmur3.js';

const dir = mkdtempSync(join(tmpdir(), 'sheaf-split-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const words = ['rope', 'stove', 'lamp', 'kettle', 'crate', 'sack', 'tarp', 'ladder'];
const tree = (k: number) => `(S (NP (NN ${words[k % 8]})) (VP (VBD froze)))`;
function treebank(name: string, n: number, jsonl = false): string {
  const f = join(dir, name);
  writeFileSync(f, Array.from({ length: n }, (_, k) => (jsonl ? JSON.stringify({ id: `hut-${k}`, tree: tree(k) }) : tree(k))).join('\n') + '\n');
  return f;
}
const plan = (out: string) => parseFoldPlan(readFileSync(join(out, 'folds.json'), 'utf8'), 'folds.json');
const lines = (f: string) => readFileSync(f, 'utf8').trim().split('\n').map((l) => JSON.parse(l));

describe('sheaf split', () => {
  it('puts every sentence in exactly one fold, in files that keep ids and trees', async () => {
    const gold = treebank('a.trees', 103);
    const out = join(dir, 'p1');
    const s = await runSplit({ gold, folds: 5, out, quiet: true });
    expect(s.sentences).toBe(103);
    const p = plan(out);
    const all = p.folds.flatMap((f) => f.ids);
    expect(all.length).toBe(103);
    expect(new Set(all).size).toBe(103);
    for (const f of p.folds) {
      const held = lines(join(out, `heldout-${f.fold}.jsonl`));
      expect(held.map((r) => r.id)).toEqual(f.ids);
      for (const r of held) expect(r.tree).toBe(tree(Number(r.id) - 1));
      expect(f.digest).toMatch(/^sha256:/);
      expect(f.model).toBeNull();
    }
  });

  it('cuts contiguous blocks whose sizes are within one of each other', async () => {
    for (const [n, k] of [[103, 5], [10, 3], [7, 7], [1000, 20]]) {
      const out = join(dir, `b${n}-${k}`);
      await runSplit({ gold: treebank(`b${n}.trees`, n), folds: k, method: 'blocks', out, quiet: true });
      const p = plan(out);
      const sizes = p.folds.map((f) => f.ids.length);
      expect(Math.max(...sizes) - Math.min(...sizes)).toBeLessThanOrEqual(1);
      expect(p.folds.flatMap((f) => f.ids)).toEqual(Array.from({ length: n }, (_, i) => String(i + 1)));
    }
  });

  it('keeps every sentence in its fold when sentences are appended (hash method)', async () => {
    const small = join(dir, 'h-small');
    const big = join(dir, 'h-big');
    await runSplit({ gold: treebank('h1.jsonl', 200, true), folds: 7, seed: 3, out: small, quiet: true });
    await runSplit({ gold: treebank('h2.jsonl', 500, true), folds: 7, seed: 3, out: big, quiet: true });
    const before = new Map(plan(small).folds.flatMap((f) => f.ids.map((id) => [id, f.fold] as const)));
    const after = new Map(plan(big).folds.flatMap((f) => f.ids.map((id) => [id, f.fold] as const)));
    for (const [id, f] of before) expect(after.get(id)).toBe(f);
    // The fold is MurmurHash3 of the id, unsigned, mod k (checked against the hash itself).
    expect(hashFold('hut-5', 7, 3)).toBe((murmur3String('hut-5', 3) >>> 0) % 7);
    // A different seed moves sentences.
    const other = join(dir, 'h-seed');
    await runSplit({ gold: treebank('h1.jsonl', 200, true), folds: 7, seed: 4, out: other, quiet: true });
    expect(plan(other).folds.map((f) => f.ids)).not.toEqual(plan(small).folds.map((f) => f.ids));
  });

  it('writes each fold\'s training part on request: all other folds', async () => {
    const out = join(dir, 'tr');
    await runSplit({ gold: treebank('t.trees', 30), folds: 3, writeTrain: true, out, quiet: true });
    const p = plan(out);
    for (const f of p.folds) {
      const train = lines(join(out, `train-${f.fold}.jsonl`)).map((r) => r.id).sort();
      expect(train).toEqual(p.folds.filter((g) => g.fold !== f.fold).flatMap((g) => g.ids).sort());
    }
  });

  it('keeps a fold\'s recorded base model when a re-split leaves its trees unchanged', async () => {
    const out = join(dir, 'keep');
    const gold = treebank('k.trees', 40);
    await runSplit({ gold, folds: 4, out, quiet: true });
    const p = plan(out);
    p.folds[0].model = { parser: 'sheaf-pcfg', fingerprint: 'sha256:aa' };
    writeFileSync(join(out, 'folds.json'), JSON.stringify(p));
    const s = await runSplit({ gold, folds: 4, out, quiet: true });
    expect(s.modelsKept).toBe(1);
    expect(plan(out).folds[0].model).toEqual({ parser: 'sheaf-pcfg', fingerprint: 'sha256:aa' });
  });

  it.each([
    ['fewer than 2 folds', { folds: 1 }, /expected `--folds` to be an integer ≥ 2, got `1`/],
    ['more folds than sentences', { folds: 11 }, /at most the number of sentences \(10\)/],
    ['blocks from stdin', { folds: 2, method: 'blocks', gold: '-' }, /reads the treebank twice/],
  ])('refuses %s', async (_, o, message) => {
    await expect(runSplit({ gold: treebank('r.trees', 10), out: join(dir, 'r'), quiet: true, ...(o as object), folds: (o as { folds: number }).folds })).rejects.toThrow(message);
  });

  it('refuses duplicate ids, naming the id and both lines', async () => {
    const f = join(dir, 'dup.jsonl');
    writeFileSync(f, [JSON.stringify({ id: 'a', tree: tree(0) }), JSON.stringify({ id: 'b', tree: tree(1) }), JSON.stringify({ id: 'a', tree: tree(2) })].join('\n') + '\n');
    await expect(runSplit({ gold: f, folds: 2, out: join(dir, 'dup'), quiet: true })).rejects.toThrow(/dup\.jsonl:3: the id `a` appears again \(first at line 1\)/);
  });
});
