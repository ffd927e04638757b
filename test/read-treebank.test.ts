/**
 * The streaming treebank reader: layouts, formats, gzip, and bad input. Each
 * bad-input case checks the error's code, file, line and column.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { DataError } from '../src/core/errors.js';
import { createVocabulary } from '../src/core/interner.js';
import { parseTree } from '../src/core/read-brackets.js';
import { writeTree } from '../src/core/write-brackets.js';
import { readTreebank, type ReadTreebankOptions } from '../src/io/read-treebank.js';
import { seededRandom } from './helpers/synthetic-nbest.js';

const dir = mkdtempSync(join(tmpdir(), 'sheaf-read-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
let n = 0;
function file(content: string | Buffer): string {
  const p = join(dir, `t${n++}`);
  writeFileSync(p, content);
  return p;
}

async function readAll(path: string, opts: Partial<ReadTreebankOptions> = {}) {
  const bad: DataError[] = [];
  const trees: { id: string; line: number; column: number; text: string }[] = [];
  for await (const r of readTreebank(path, { vocab: createVocabulary(), onBad: (e) => bad.push(e), ...opts })) {
    trees.push({ id: r.id, line: r.line, column: r.column, text: writeTree(r.tree) });
  }
  return { trees, bad };
}

describe('readTreebank: layouts and formats', () => {
  it('reads indented multi-line trees with outer wrappers, with lines and ids', async () => {
    const p = file('( (S (NP (NN warden))\n     (VP (VBD slept))) )\n( (S (NP (NNS ropes))\n     (VP (VBD froze))) )\n');
    const { trees, bad } = await readAll(p);
    expect(bad).toEqual([]);
    expect(trees).toEqual([
      { id: '1', line: 1, column: 1, text: '(S (NP (NN warden)) (VP (VBD slept)))' },
      { id: '2', line: 3, column: 1, text: '(S (NP (NNS ropes)) (VP (VBD froze)))' },
    ]);
  });

  it('reads several trees on one line and non-ASCII words', async () => {
    const { trees } = await readAll(file('(S (NN Hütte)) (S (NN 山小屋))  (S (NN ледник))'));
    expect(trees.map((t) => [t.text, t.column])).toEqual([['(S (NN Hütte))', 1], ['(S (NN 山小屋))', 16], ['(S (NN ледник))', 30]]);
  });

  it('reads JSON Lines {"id","tree"}', async () => {
    const p = file('{"id": "a7", "tree": "(S (NN stove))"}\n\n{"tree": "(S (NN lamp))"}\n');
    const { trees } = await readAll(p);
    expect(trees.map((t) => [t.id, t.line, t.text])).toEqual([['a7', 1, '(S (NN stove))'], ['2', 3, '(S (NN lamp))']]);
  });

  it('reads gzip by its magic bytes, whatever the name', async () => {
    const { trees } = await readAll(file(gzipSync('(S (NN crate))\n(S (NN sack))\n')));
    expect(trees.map((t) => t.text)).toEqual(['(S (NN crate))', '(S (NN sack))']);
  });

  it('gives the same trees for any read chunking (1 MiB chunks vs one long line)', async () => {
    const one = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates))))';
    const many = Array.from({ length: 40000 }, () => one).join(' ');
    const { trees, bad } = await readAll(file(many));
    expect(bad).toEqual([]);
    expect(trees.length).toBe(40000);
    expect(trees[39999]).toEqual({ id: '40000', line: 1, column: 1 + 39999 * (one.length + 1), text: one });
  });
});

describe('readTreebank: bad input names file, line, column', () => {
  it('unbalanced: a missing `)` is found when the next tree starts in column 1', async () => {
    const p = file('(S (NP (NN warden)) (VP (VBD slept))\n(S (NN lamp))\n');
    const { trees, bad } = await readAll(p);
    expect(trees.map((t) => [t.id, t.text])).toEqual([['2', '(S (NN lamp))']]);
    expect(bad).toHaveLength(1);
    expect(bad[0]).toMatchObject({ code: 'unbalanced', file: p, line: 1, column: 1 });
  });

  it('unbalanced at the end of the input', async () => {
    const p = file('(S (NN lamp))\n(S (NP (NN warden)\n');
    const { bad } = await readAll(p);
    expect(bad[0]).toMatchObject({ code: 'unbalanced', file: p, line: 2, column: 1 });
    expect(bad[0].message).toContain('expected `)`');
  });

  it('a `)` too many: the tree is refused (it may sit inside and close it early), the next keeps its id', async () => {
    const p = file('(S (NN lamp)))\n(S (NN rope))');
    const { trees, bad } = await readAll(p);
    expect(trees.map((t) => t.id)).toEqual(['2']);
    expect(bad).toHaveLength(1);
    expect(bad[0]).toMatchObject({ code: 'unbalanced', line: 1, column: 1, id: '1' });
    expect(bad[0].message).toContain('1 `)` too many');
  });

  it('unexpected `)` between trees (trees not in column 1)', async () => {
    const p = file(' (S (NN lamp)))\n (S (NN rope))');
    const { trees, bad } = await readAll(p);
    expect(trees).toHaveLength(2);
    expect(bad[0]).toMatchObject({ code: 'unexpected-close', line: 1, column: 15 });
  });

  it('a label-less constituent inside a tree', async () => {
    const p = file('(S (NN lamp))\n(S ((NN rope)))\n');
    const { trees, bad } = await readAll(p);
    expect(trees).toHaveLength(1);
    expect(bad[0]).toMatchObject({ code: 'missing-label', file: p, line: 2, column: 4, id: '2' });
  });

  it('an empty tree `()`', async () => {
    const { bad } = await readAll(file('  ()\n'));
    expect(bad[0]).toMatchObject({ code: 'empty-tree', line: 1, column: 3 });
  });

  it('an empty constituent `(NP )`', async () => {
    const { bad } = await readAll(file('(S (NP ) (VP (VBD slept)))'));
    expect(bad[0]).toMatchObject({ code: 'empty-constituent', line: 1, column: 8 });
    expect(bad[0].message).toContain('inside `(NP`');
  });

  it('stray text between trees', async () => {
    const p = file('(S (NN lamp))\nsee ledger\n(S (NN rope))\n');
    const { trees, bad } = await readAll(p);
    expect(trees.map((t) => t.id)).toEqual(['1', '2']);
    expect(bad).toHaveLength(1);
    expect(bad[0]).toMatchObject({ code: 'stray-text', line: 2, column: 1 });
    expect(bad[0].message).toContain('`see`');
  });

  it('invalid UTF-8 costs only the tree on that line', async () => {
    const bytes = Buffer.concat([
      Buffer.from('(S (NN lamp))\n(S (NN r'),
      Buffer.from([0xc3, 0x28]),
      Buffer.from('pe))\n(S (NN rope))\n'),
    ]);
    const p = file(bytes);
    const { trees, bad } = await readAll(p);
    expect(trees.map((t) => t.id)).toEqual(['1', '3']);
    expect(bad[0]).toMatchObject({ code: 'invalid-utf8', file: p, line: 2, column: 9, id: '2' });
    expect(bad[0].message).toContain('0xc3');
  });

  it('a 10 MB single-line tree is refused with a clear limit, and reading goes on', async () => {
    const big = '(S ' + '(NN rope) '.repeat(1_000_000) + ')';
    const p = file(big + '\n(S (NN lamp))\n');
    const { trees, bad } = await readAll(p);
    expect(trees.map((t) => [t.id, t.text])).toEqual([['2', '(S (NN lamp))']]);
    expect(bad).toHaveLength(1);
    expect(bad[0]).toMatchObject({ code: 'tree-too-long', line: 1, column: 1 });
    // It once suggested a `--max-tree-chars` option that no command has.
    expect(bad[0].message).not.toMatch(/--[a-z]/);
    expect(bad[0].message).toContain('at most 4194304 characters');
  });

  it('a 10 MB single-line tree is read when the limit allows it (no recursion limit)', async () => {
    const deep = '(S '.repeat(200_000) + '(NN rope)' + ')'.repeat(200_000);
    const { trees, bad } = await readAll(file(deep), { maxTreeChars: 20_000_000 });
    expect(bad).toEqual([]);
    expect(trees).toHaveLength(1);
  });

  it('a truncated gzip stream is a typed error', async () => {
    const gz = gzipSync('(S (NN crate))\n'.repeat(1000));
    const p = file(gz.subarray(0, gz.length - 20));
    await expect(readAll(p)).rejects.toMatchObject({ code: 'truncated', file: p });
  });

  it('bad JSON Lines: broken JSON, wrong field types, a bad tree string', async () => {
    const p = file('{"id": "1", "tree": "(S (NN a))"}\n{"id": 2, "tree": \n{"id": "3", "tree": 5}\n{"id": "4", "tree": "(S (NN a)"}\n');
    const { trees, bad } = await readAll(p);
    expect(trees.map((t) => t.id)).toEqual(['1']);
    expect(bad.map((e) => [e.code, e.line])).toEqual([['bad-json', 2], ['bad-field', 3], ['unbalanced', 4]]);
  });

  it('without onBad the first bad tree is thrown', async () => {
    const p = file('(S (NN a))\n(S (NN b)\n');
    const run = async () => {
      for await (const _ of readTreebank(p, { vocab: createVocabulary() })) void _;
    };
    await expect(run()).rejects.toBeInstanceOf(DataError);
  });

  it('a missing file is a usage error that names it', async () => {
    await expect(readAll(join(dir, 'nope.trees'))).rejects.toThrow(/no such file/);
  });
});

/**
 * Ids by position must not drift: one damaged tree costs that tree only,
 * whatever the damage (the campaign behind issue 11 saw one extra `)` cost
 * 1,199 of 1,200 sentences). Trees come from the demo corpus (indented
 * continuation lines, trees in column 1).
 */
describe('readTreebank: one damaged tree costs one tree, ids by position stay in step', () => {
  const corpus = readFileSync(new URL('../demo-corpus/huts-train.trees', import.meta.url), 'utf8').split(/\n(?=\( \()/).slice(0, 40).map((t) => t.trimEnd());
  const ref = corpus.map((t) => writeTree(parseTree(t, createVocabulary())));

  /** Reads `texts` joined by newlines; checks every tree but `damaged` keeps its id (position) and its tree. */
  async function expectOnlyDamaged(texts: string[], damaged: number) {
    const { trees, bad } = await readAll(file(texts.join('\n') + '\n'));
    const byId = new Map(trees.map((t) => [t.id, t.text]));
    for (let k = 0; k < ref.length; k++) if (k !== damaged) expect(byId.get(String(k + 1)), `tree ${k + 1}`).toBe(ref[k]);
    expect(trees.every((t) => Number(t.id) <= ref.length)).toBe(true);
    // The damaged tree is read whole or refused as one tree under its own id.
    const refused = bad.filter((e) => e.id !== undefined);
    expect(refused.every((e) => e.id === String(damaged + 1))).toBe(true);
    expect(refused.length + trees.length).toBe(ref.length);
    return { trees, bad };
  }

  it('an extra `)` inside a tree', async () => {
    const t = corpus.slice();
    t[5] = t[5].replace('(NN warden))', '(NN warden)))');
    expect(t[5]).not.toBe(corpus[5]);
    const { bad } = await expectOnlyDamaged(t, 5);
    expect(bad).toHaveLength(1);
    expect(bad[0]).toMatchObject({ code: 'unbalanced', line: corpus.slice(0, 5).join('\n').split('\n').length + 1, column: 1, id: '6' });
    expect(bad[0].message).toMatch(/count(s)? as one refused tree, so ids by position stay in step; reading resumes with the tree in column 1 at line \d+/);
  });

  it('an unindented continuation line that starts with `(`', async () => {
    const t = corpus.slice();
    t[7] = t[7].replace('\n    (. .)', '\n(. .)');
    expect(t[7]).not.toBe(corpus[7]);
    const { bad } = await expectOnlyDamaged(t, 7);
    expect(bad).toHaveLength(1);
    expect(bad[0].message).toContain('read as the rest of this tree');
  });

  it('two unindented continuation lines, the first one still open', async () => {
    const t = corpus.slice();
    t[2] = '( (S (NP-SBJ (DT the) (NN warden))\n(VP (VBD logged)\n(NP (CD two) (NNS crates)))\n    (. .)) )';
    const { bad } = await expectOnlyDamaged(t, 2);
    expect(bad).toHaveLength(1);
  });

  it('`()` after a tree is skipped and the tree kept', async () => {
    const t = corpus.slice();
    t[3] += ' ()';
    const { trees, bad } = await expectOnlyDamaged(t, -1);
    expect(trees.map((x) => x.id)).toEqual(ref.map((_, k) => String(k + 1)));
    expect(bad.map((e) => e.code)).toEqual(['empty-tree']);
  });

  it('a line of 100,000 stray `)` is one report, not 100,000', async () => {
    // Before the first tree: reported alone.
    const before = await readAll(file(')'.repeat(100_000) + '\n' + corpus.join('\n') + '\n'));
    expect(before.trees).toHaveLength(ref.length);
    expect(before.bad).toHaveLength(1);
    expect(before.bad[0]).toMatchObject({ code: 'unexpected-close', line: 1, column: 1 });
    expect(before.bad[0].message).toContain('100000 `)`');
    // After tree 5: that tree is refused, once.
    const t = corpus.slice();
    t[4] += '\n' + ')'.repeat(100_000);
    const { bad } = await expectOnlyDamaged(t, 4);
    expect(bad).toHaveLength(1);
    expect(bad[0].message).toContain('100000 `)` too many');
    // Between trees that do not start in column 1: one report.
    const free = await readAll(file(' (S (NN lamp))\n' + ')'.repeat(100_000) + ' \n)))\n (S (NN rope))\n'));
    expect(free.trees.map((x) => x.id)).toEqual(['1', '2']);
    expect(free.bad).toHaveLength(1);
    expect(free.bad[0].message).toContain('100003 `)` with no bracket open (through line 3, column 3)');
  });

  it('300 seeded single damages (a bracket added or removed, a line unindented, junk after a tree) never cost another tree', async () => {
    const rand = seededRandom(11);
    const pick = (n: number) => Math.floor(rand() * n);
    for (let round = 0; round < 300; round++) {
      const t = corpus.slice();
      const k = pick(t.length);
      const s = t[k];
      const kind = round % 5;
      let d: string;
      if (kind === 0 || kind === 1) {
        const at = pick(s.length + 1);
        d = s.slice(0, at) + (kind === 0 ? ')' : '(') + s.slice(at);
      } else if (kind === 2) {
        const brackets = [...s].flatMap((c, i) => (c === '(' || c === ')') && i > 0 ? [i] : []);
        const at = brackets[pick(brackets.length)];
        d = s.slice(0, at) + s.slice(at + 1);
      } else if (kind === 3) {
        const lines = s.split('\n');
        const j = 1 + pick(lines.length - 1);
        lines[j] = lines[j].trimStart();
        d = lines.join('\n');
      } else d = s + ' ()';
      t[k] = d;
      await expectOnlyDamaged(t, k);
    }
  });
});
