/**
 * The streaming treebank reader: layouts, formats, gzip, and bad input. Each
 * bad-input case checks the error's code, file, line and column.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { DataError } from '../src/core/errors.js';
import { createVocabulary } from '../src/core/interner.js';
import { writeTree } from '../src/core/write-brackets.js';
import { readTreebank, type ReadTreebankOptions } from '../src/io/read-treebank.js';

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

  it('unexpected `)` between trees', async () => {
    const p = file('(S (NN lamp)))\n(S (NN rope))');
    const { trees, bad } = await readAll(p);
    expect(trees).toHaveLength(2);
    expect(bad[0]).toMatchObject({ code: 'unexpected-close', line: 1, column: 14 });
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
    expect(bad[0].message).toContain('--max-tree-chars');
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
