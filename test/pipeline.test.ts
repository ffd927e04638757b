/**
 * Pipeline files: the shipped ones load; a bad one fails before any data is
 * read, naming the block and listing the valid choices.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { UsageError } from '../src/core/errors.js';
import { loadPipeline } from '../src/io/load-pipeline.js';
import { TEMPLATES } from '../src/features/registry.js';
import { rebuildPipeline } from '../src/pipeline/pipeline.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'sheaf-pipe-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const base = JSON.parse(JSON.stringify((await import('../pipelines/default.json', { with: { type: 'json' } })).default));

function withChange(change: (p: any) => void): string {
  const p = JSON.parse(JSON.stringify(base));
  change(p);
  const file = join(dir, `p${Math.random().toString(36).slice(2)}.json`);
  writeFileSync(file, JSON.stringify(p));
  return file;
}

const extract = (p: any) => p.stages.find((s: any) => s.stage === 'extract-features.v1');

describe('pipeline files', () => {
  it('loads pipelines/default.json with every template but the lexicon one', () => {
    const p = loadPipeline(join(root, 'pipelines/default.json'));
    expect(p.config.templates.map((t) => t.template)).toEqual([...TEMPLATES.keys()].filter((t) => t !== 'lexicon.v1'));
    expect(p.hashing).toEqual({ bits: 20, seed: 0, dropUniform: true, names: 0 });
    expect(p.encode).toEqual({ compression: 'gzip', level: 1 });
    expect(p.digest).toMatch(/^sha256:[0-9a-f]{64}$/);
  });

  it('resolves the shipped pipelines by name', () => {
    expect(loadPipeline('default').digest).toBe(loadPipeline(join(root, 'pipelines/default.json')).digest);
    expect(loadPipeline('demo').config.templates.map((t) => t.template)).toContain('lexicon.v1');
    expect(() => loadPipeline('defualt')).toThrow(/expected a pipeline file or one of the shipped pipelines: `default`, `demo`/);
  });

  it('rebuilds the same pipeline from its resolved config and file bytes (what workers get)', () => {
    const p = loadPipeline(join(root, 'pipelines/demo.json'));
    const q = rebuildPipeline(p.config, p.files);
    expect(q.config).toEqual(p.config);
    expect(() => rebuildPipeline(p.config, {})).toThrow(/reads `\.\.\/demo-corpus\/lexicon\.tsv`, which was not handed over/);
  });

  it('loads pipelines/demo.json and reads its lexicon relative to the pipeline file', () => {
    const p = loadPipeline(join(root, 'pipelines/demo.json'));
    expect(p.config.templates.map((t) => t.template)).toContain('lexicon.v1');
    expect(p.templates).toHaveLength(11);
  });

  it('gives the same digest for the same config, a different one for a changed option', () => {
    const a = loadPipeline(withChange(() => {}));
    const b = loadPipeline(withChange(() => {}));
    const c = loadPipeline(withChange((p) => { p.stages.find((s: any) => s.stage === 'hash-features.v2').bits = 18; }));
    expect(a.digest).toBe(b.digest);
    expect(c.digest).not.toBe(a.digest);
  });

  it.each([
    ['an unknown template, listing the valid ones', (p: any) => extract(p).templates.push({ template: 'rules.v9' }), /unknown template `rules\.v9`; valid templates: `rules\.v1`, `ancestors\.v1`/],
    ['an unknown template option, listing the valid ones', (p: any) => { extract(p).templates[0].lexicl = true; }, /templates\[0\] \(rules\.v1\): unknown option `lexicl`; expected one of: `lexical`/],
    ['a wrongly typed option', (p: any) => { extract(p).templates[4].n = 7; }, /expected `n` to be an integer from 2 to 3, got `7`/],
    ['an unknown stage', (p: any) => p.stages.splice(1, 0, { stage: 'tokenise.v1' }), /unknown stage `tokenise\.v1`; valid stages: `read-nbest\.v1`/],
    ['stages out of order', (p: any) => { [p.stages[1], p.stages[2]] = [p.stages[2], p.stages[1]]; }, /`parse-candidates\.v1` is out of order/],
    ['a stage whose needs no earlier stage adds', (p: any) => p.stages.splice(1, 1), /needs the record field `candidateTexts`|needs the record field `candidates`/],
    ['a missing lexicon path', (p: any) => extract(p).templates.push({ template: 'lexicon.v1' }), /expected `path` to name a lexicon TSV file/],
    ['an unreadable lexicon', (p: any) => extract(p).templates.push({ template: 'lexicon.v1', path: 'nope.tsv' }), /cannot read `nope\.tsv`/],
    ['a wrong format tag', (p: any) => { p.format = 'sheaf-pipeline/0'; }, /expected `format` to be `sheaf-pipeline\/1`/],
    ['a template listed twice', (p: any) => extract(p).templates.push({ template: 'rules.v1' }), /listed twice/],
    ['an option named like an object built-in', (p: any) => { extract(p).templates[0].constructor = true; }, /unknown option `constructor`; expected one of: `lexical`/],
    ['an option named __proto__', (p: any) => { Object.defineProperty(extract(p).templates[0], '__proto__', { value: { x: 1 }, enumerable: true }); }, /unknown option `__proto__`/],
    ['a stage of an older version, naming what replaced it', (p: any) => { p.stages[5].stage = 'hash-features.v1'; }, /stage `hash-features\.v1` was replaced by `hash-features\.v2` \(its option `pseudoConstant` is now `dropUniform`\)/],
    ['the shard encoder of format 2, saying what must be made again', (p: any) => { p.stages[6].stage = 'encode-shard.v2'; }, /stages\[6\]: stage `encode-shard\.v2` was replaced by `encode-shard\.v3` \(shard format 3.*shards and models made with `encode-shard\.v2` must be made again/],
  ])('refuses %s', (_, change, message) => {
    const file = withChange(change);
    expect(() => loadPipeline(file)).toThrow(UsageError);
    expect(() => loadPipeline(file)).toThrow(message);
  });
});
