/**
 * manifest.json is checked before it is trusted: the format version, plain
 * file names inside the directory (no `../`, no absolute paths), totals that
 * reconcile; the fold plan likewise (ids in one fold each, model identities
 * of the right shape).
 */
import { describe, expect, it } from 'vitest';
import { parseFoldPlan } from '../src/formats/fold-plan.js';
import { parseManifest, SHARD_FORMAT } from '../src/formats/manifest.js';

const digest = `sha256:${'ab'.repeat(32)}`;
const good = {
  format: SHARD_FORMAT,
  pipeline: { digest, config: { format: 'sheaf-pipeline/1', stages: [], templates: [] }, files: 'pipeline-files.msgpack' },
  hashing: { bits: 20, seed: 0 },
  compression: { method: 'gzip', level: 6, unit: 'sentence' },
  inputs: { gold: { path: 'g.trees', bytes: 10, sha256: digest }, nbest: [{ path: 'd.jsonl', bytes: 10, sha256: digest, records: 3 }], plan: null },
  folds: [],
  shards: [{ file: 'shard-00000.msgpack.gz', counts: 'shard-00000.counts.msgpack', sentences: 2, candidates: 5, bytes: 100, sha256: digest, countsSha256: digest }],
  totals: { read: 3, written: 2, rejected: 1, candidatesRead: 6, candidates: 5, candidatesDropped: 1 },
  names: null,
};
const withChange = (f: (m: any) => void) => {
  const m = JSON.parse(JSON.stringify(good));
  f(m);
  return JSON.stringify(m);
};

describe('manifest', () => {
  it('accepts a well-formed manifest', () => {
    expect(parseManifest(JSON.stringify(good), 'shards').shards).toHaveLength(1);
  });

  it.each([
    ['a shard file outside the directory', (m: any) => { m.shards[0].file = '../elsewhere/shard-00000.msgpack.gz'; }, /expected a plain name like `shard-00000\.msgpack\.gz` inside the directory/],
    ['an absolute shard path', (m: any) => { m.shards[0].file = '/etc/passwd'; }, /expected a plain name/],
    ['a count file outside the directory', (m: any) => { m.shards[0].counts = '../counts.msgpack'; }, /count file/],
    ['an older format', (m: any) => { m.format = 'sheaf-shards/2'; }, /this sheaf reads `sheaf-shards\/3`.*run `sheaf prepare` again/],
    ['totals that do not reconcile', (m: any) => { m.totals.rejected = 0; }, /totals do not reconcile/],
    ['shards that do not hold the written sentences', (m: any) => { m.shards[0].sentences = 3; }, /holding 3 sentences but says 2/],
    ['the same shard twice', (m: any) => { m.shards.push({ ...m.shards[0] }); m.totals.written = 4; m.totals.read = 5; }, /twice/],
    ['candidate totals that do not reconcile', (m: any) => { m.totals.candidatesDropped = 0; }, /candidate totals do not reconcile \(read 6 ≠ kept 5 \+ dropped 0\)/],
    ['pipeline files outside the directory', (m: any) => { m.pipeline.files = '../../secret'; }, /expected `pipeline-files\.msgpack` inside the directory/],
    ['a names file outside the directory', (m: any) => { m.names = { file: '/etc/passwd' }; }, /expected `names\.json` inside the directory/],
    ['no pipeline digest', (m: any) => { delete m.pipeline.digest; }, /no valid `pipeline`/],
    ['inputs without digests', (m: any) => { m.inputs.nbest[0].sha256 = 7; }, /no valid `inputs`/],
    ['a shard without its sha256', (m: any) => { delete m.shards[0].sha256; }, /`sha256`/],
  ])('refuses %s', (_, change, message) => {
    expect(() => parseManifest(withChange(change), 'shards')).toThrow(message);
  });

  it('refuses text that is not JSON, saying what to do', () => {
    expect(() => parseManifest('{"format": ', 'shards')).toThrow(/is not valid JSON.*run `sheaf prepare` again/);
  });
});

describe('fold plan', () => {
  const plan = { format: 'sheaf-folds/1', k: 2, folds: [{ fold: 0, ids: ['1', '3'], model: null }, { fold: 1, ids: ['2'], model: { parser: 'pcfg', fingerprint: 'sha256:ab' } }] };
  it('reads a plan, with or without models', () => {
    const p = parseFoldPlan(JSON.stringify(plan), 'folds.json');
    expect(p.folds.map((f) => [f.fold, f.ids, f.model])).toEqual([[0, ['1', '3'], null], [1, ['2'], { parser: 'pcfg', fingerprint: 'sha256:ab' }]]);
  });

  it.each([
    ['a malformed model', (p: any) => { p.folds[1].model = { parser: 'pcfg' }; }, /expected `model` to be null or \{"parser": string, "fingerprint": string\}/],
    ['a sentence in two folds', (p: any) => { p.folds[1].ids.push('1'); }, /sentence `1` is also in fold 0/],
    ['a fold beyond the safe integers', (p: any) => { p.folds[1].fold = 9007199254740993; }, /expected `fold` to be an integer/],
    ['k that disagrees with the folds', (p: any) => { p.k = 3; }, /`k` is 3 but the plan lists 2 folds/],
  ])('refuses %s', (_, change, message) => {
    const p = JSON.parse(JSON.stringify(plan));
    change(p);
    expect(() => parseFoldPlan(JSON.stringify(p), 'folds.json')).toThrow(message);
  });
});
