/**
 * Fuzzing what sheaf reads back from disk or from the user as documents:
 * pipeline files, fold plans, shard manifests, journals, names files, model
 * files, shard records and count files. Well-formed documents are mutated at
 * random places (a key deleted, a value of the wrong type, a huge or
 * non-finite number, deep nesting, a lone surrogate, a prototype-named key)
 * and binary records have bytes flipped, cut, inserted, or MessagePack
 * extension types spliced in. Each case ends as a checked value or a typed
 * error (UsageError, DataError, MsgpackError); accepted documents keep the
 * invariants their readers promise.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { decodeCounts, encodeCounts } from '../../src/formats/counts-file.js';
import { parseFoldPlan } from '../../src/formats/fold-plan.js';
import { emptyState, headerLine, lastState, shardLine } from '../../src/formats/journal.js';
import { parseManifest } from '../../src/formats/manifest.js';
import { decodeWeights, encodeWeights, parseModelInfo } from '../../src/formats/model.js';
import { MsgpackReader, MsgpackWriter } from '../../src/formats/msgpack.js';
import { parseNames } from '../../src/formats/names-file.js';
import { encodeSentence, RankingListDecoder, toShardSentence } from '../../src/formats/shard-record.js';
import { buildPipeline } from '../../src/pipeline/pipeline.js';
import { damage, damageArb, nastyNumber, nastyString } from './arbitraries.js';
import { expectTyped, PROTO_KEYS, prototypeSnapshot, runs, timed } from './settings.js';

const before = prototypeSnapshot();
const root = new URL('../../', import.meta.url);
const read = (p: string) => readFileSync(fileURLToPath(new URL(p, root)), 'utf8');

/** A value that does not belong where it lands. */
const wrongValue: fc.Arbitrary<unknown> = fc.oneof(
  nastyString,
  nastyNumber,
  fc.constantFrom(null, true, false, [], {}, [1, 2], { parser: '', fingerprint: '' }, 'sha256:' + '0'.repeat(64), '../../etc/passwd', '/etc/passwd', 'shard-00000.msgpack.gz'),
  fc.jsonValue({ maxDepth: 2 }),
  fc.integer({ min: 1, max: 3000 }).map((d) => { let v: unknown = 1; for (let k = 0; k < d; k++) v = [v]; return v; }),
);

type Op = [kind: 'delete' | 'set' | 'add', at: number, key: string, value: unknown];
const opsArb = fc.array(fc.tuple(fc.constantFrom<'delete' | 'set' | 'add'>('delete', 'set', 'set', 'add'), fc.nat(), fc.oneof(fc.constantFrom(...PROTO_KEYS), nastyString), wrongValue), { minLength: 1, maxLength: 3 });

/** Applies ops at places chosen among every object and array of `doc` (own `__proto__` keys included). */
function mutate(doc: unknown, ops: Op[]): unknown {
  const copy = JSON.parse(JSON.stringify(doc));
  const holders: (Record<string, unknown> | unknown[])[] = [];
  const walk = (v: unknown) => {
    if (v !== null && typeof v === 'object') {
      holders.push(v as Record<string, unknown>);
      for (const x of Object.values(v as object)) walk(x);
    }
  };
  walk(copy);
  for (const [kind, at, key, value] of ops) {
    const h = holders[at % holders.length] as Record<string, unknown>;
    const keys = Object.keys(h);
    const k = kind === 'add' || keys.length === 0 ? key : keys[at % keys.length];
    if (Array.isArray(h) && !/^\d+$/.test(k)) continue; // an array's own keys are its indices (and `length`)
    if (kind === 'delete') delete h[k];
    else Object.defineProperty(h, k, { value, enumerable: true, writable: true, configurable: true });
  }
  return copy;
}
const text = (v: unknown) => JSON.stringify(v);

/** Runs `f`: a value, or a typed error; never anything else. */
function outcome<T>(f: () => T): T | null {
  try {
    return timed(f);
  } catch (e) {
    expectTyped(e);
    return null;
  }
}

describe('fuzz: pipeline files', () => {
  const lexicon = read('demo-corpus/lexicon.tsv');
  const pipelines = [JSON.parse(read('pipelines/default.json')), JSON.parse(read('pipelines/demo.json'))];
  it('mutated shipped pipelines: a validated pipeline or a UsageError naming the block', () => {
    fc.assert(fc.property(fc.constantFrom(0, 1), opsArb, (which, ops) => {
      const raw = JSON.parse(text(mutate(pipelines[which], ops)));
      const p = outcome(() => buildPipeline(raw, 'p.json', { readText: () => lexicon }));
      if (p) {
        expect(Number.isInteger(p.hashing.bits)).toBe(true);
        expect(p.templates.length).toBeGreaterThan(0);
      }
      expect(prototypeSnapshot()).toBe(before);
    }), runs(7000));
  });
});

describe('fuzz: fold plans', () => {
  const plan = { format: 'sheaf-folds/1', k: 3, seed: 1, method: 'hash', folds: [0, 1, 2].map((f) => ({ fold: f, digest: null, model: f === 1 ? null : { parser: 'sheaf-pcfg', fingerprint: `sha256:${f}` }, ids: [`${f}`, `${f + 3}`, `hut-${f}`] })) };
  it('mutated plans: a plan whose ids are in one fold each and whose models are named, or a UsageError', () => {
    fc.assert(fc.property(opsArb, (ops) => {
      const p = outcome(() => parseFoldPlan(text(mutate(plan, ops)), 'folds.json'));
      if (p) {
        const ids = p.folds.flatMap((f) => f.ids);
        expect(new Set(ids).size).toBe(ids.length);
        for (const f of p.folds) expect(f.model === null || (f.model.parser.length > 0 && f.model.fingerprint.length > 0)).toBe(true);
      }
    }), runs(7000));
  });
});

describe('fuzz: manifests and journals', () => {
  const d = `sha256:${'ab'.repeat(32)}`;
  const manifest = {
    format: 'sheaf-shards/3', tool: { name: 'sheaf', version: '0.1.0' },
    pipeline: { digest: d, config: { format: 'sheaf-pipeline/1', stages: [], templates: [] }, files: 'pipeline-files.msgpack' },
    hashing: { bits: 20, seed: 0, rule: 'r', dropUniform: true }, compression: { method: 'gzip', level: 6, unit: 'sentence' }, record: {},
    inputs: { gold: { path: 'g', bytes: 1, sha256: d }, nbest: [{ path: 'n', bytes: 1, sha256: d, records: 3 }], plan: null },
    folds: [], names: null, rejects: { file: 'rejects.jsonl', count: 1 },
    shards: [0, 1].map((k) => ({ file: `shard-0000${k}.msgpack.gz`, counts: `shard-0000${k}.counts.msgpack`, sentences: 1, candidates: 2, bytes: 10, rawBytes: 20, sha256: d, countsSha256: d, templates: {} })),
    totals: { read: 3, written: 2, rejected: 1, candidatesRead: 4, candidates: 4, candidatesDropped: 0, noCandidates: 0, goldTrees: 3, goldRejected: 0, goldWithoutNbest: 0 },
  };
  it('mutated manifests: plain file names inside the folder and reconciled totals, or a UsageError', () => {
    fc.assert(fc.property(opsArb, (ops) => {
      const m = outcome(() => parseManifest(text(mutate(manifest, ops)), 'shards'));
      if (m) {
        for (const s of m.shards) {
          expect(s.file).toMatch(/^shard-\d{5}\.msgpack(\.gz)?$/);
          expect(s.counts).toMatch(/^shard-\d{5}\.counts\.msgpack$/);
        }
        expect(m.totals.read).toBe(m.totals.written + m.totals.rejected);
        expect(m.pipeline.files === undefined || m.pipeline.files === 'pipeline-files.msgpack').toBe(true);
        expect(m.names === null || m.names === undefined || m.names.file === 'names.json').toBe(true);
      }
    }), runs(7000));
  });

  it('damaged journals: the last good state (shard names plain) or none, never an exception', () => {
    const header = { format: 'sheaf-shards/3', pipeline: d, inputs: {} };
    const state = emptyState();
    const good = headerLine(header, state) + shardLine(0, { ...state, shards: [manifest.shards[0]], consumed: 1, written: 1 }) + shardLine(1, { ...state, shards: manifest.shards, consumed: 3, written: 2, rejected: 1 });
    fc.assert(fc.property(fc.oneof(damageArb.map((e) => ({ bytes: e, ops: null })), opsArb.map((o) => ({ bytes: null, ops: o }))), ({ bytes, ops }) => {
      const t = bytes ? damage(Buffer.from(good), bytes).toString('utf8') : good.split('\n').filter(Boolean).map((l) => text(mutate(JSON.parse(l), ops!))).join('\n');
      const s = timed(() => lastState(t, header));
      if (s) for (const sh of s.shards) expect(sh.file).toMatch(/^shard-\d{5}\.msgpack(\.gz)?$/);
    }), runs(4000));
  });
});

describe('fuzz: names and model files', () => {
  it('mutated names files and model.json: a value or a UsageError', () => {
    const names = { bits: 20, seed: 0, perBucket: 2, names: { '17': ['rules.v1 NP DT NN'], '5': ['a', 'b'] } };
    const model = JSON.parse(text({ format: 'sheaf-model/1', pipeline: { digest: 'sha256:x', config: { stages: [] } }, hashing: { bits: 4, seed: 0 }, method: 'perceptron' }));
    fc.assert(fc.property(opsArb, fc.boolean(), (ops, which) => {
      if (which) outcome(() => parseNames(text(mutate(names, ops)), 'names.json'));
      else outcome(() => parseModelInfo(text(mutate(model, ops)), 'model'));
    }), runs(3000));
  });

  it('damaged weights files: 2^bits float32 weights, or a DataError', () => {
    const good = Buffer.from(encodeWeights(4, Float32Array.from({ length: 16 }, (_, k) => k - 8)));
    fc.assert(fc.property(damageArb, (edits) => {
      const w = outcome(() => decodeWeights(damage(good, edits), 'weights.msgpack'));
      if (w) expect(w.weights.length).toBe(2 ** w.bits);
    }), runs(3000));
  });
});

describe('fuzz: shard records and count files', () => {
  const vector = fc.uniqueArray(fc.nat({ max: 2 ** 20 - 1 }), { maxLength: 12 }).chain((idx) => fc.array(fc.oneof(fc.integer({ min: -300, max: 300 }), fc.float({ noNaN: true, noDefaultInfinity: true })), { minLength: idx.length, maxLength: idx.length }).map((val) => ({ idx: Uint32Array.from(idx.sort((a, b) => a - b)), val })));
  const sentence = fc.record({
    id: fc.string({ maxLength: 10 }),
    pos: fc.nat(),
    fold: fc.oneof(fc.constant(null), fc.nat({ max: 9 })),
    gold: fc.nat({ max: 40 }),
    len: fc.nat({ max: 60 }),
    cands: fc.array(fc.record({ score: fc.double({ noNaN: true, noDefaultInfinity: true }), rank: fc.nat({ max: 50 }), matched: fc.nat({ max: 40 }), test: fc.nat({ max: 40 }), v: vector }), { maxLength: 5 }),
    ref: vector,
  }).map((s) => ({ ...s, flag: s.cands.length === 0 ? ('no-candidates' as const) : null, ref: s.cands.length ? s.ref : null, cands: s.cands.map((c) => ({ ...c, idx: c.v.idx, val: c.v.val })) }));
  /** MessagePack extension types (fixext 1/2/4/8/16, ext 8/16/32), which shards never hold. */
  const extension = fc.constantFrom([0xd4, 1, 0], [0xd5, 2, 0, 0], [0xd6, 3, 0, 0, 0, 0], [0xd7, 0xff, 0, 0, 0, 0, 0, 0, 0, 0], [0xd8, 4, ...Array(16).fill(0)], [0xc7, 1, 5, 9], [0xc8, 0, 1, 5, 9], [0xc9, 0, 0, 0, 1, 5, 9]);

  it('encoded sentences with bytes damaged or an extension type spliced in: the sentence, or a typed error with its offset', () => {
    fc.assert(fc.property(sentence, fc.oneof(damageArb.map((d) => ({ d, ext: null as number[] | null, at: 0 })), fc.tuple(extension, fc.nat()).map(([ext, at]) => ({ d: [] as never[], ext, at }))), (s, how) => {
      const w = new MsgpackWriter();
      encodeSentence(w, s);
      const good = Buffer.from(w.bytes());
      let bytes = damage(good, how.d);
      if (how.ext) {
        const at = how.at % (bytes.length + 1);
        bytes = Buffer.concat([bytes.subarray(0, at), Buffer.from(how.ext), bytes.subarray(at)]);
      }
      const general = outcome(() => toShardSentence(new MsgpackReader(new Uint8Array(bytes)).decode()));
      const fast = outcome(() => new RankingListDecoder().decode(new Uint8Array(bytes), 0));
      if (general) {
        for (const c of general.cands) expect(c.diff.idx.length).toBe(c.diff.val.length);
        if (fast) expect(Array.from(fast.rank)).toEqual(general.cands.map((c) => c.rank));
      }
    }), runs(12000));
  });

  it('an extension type is refused by the strict reader, wherever it stands as a value', () => {
    fc.assert(fc.property(extension, (ext) => {
      const bytes = new Uint8Array([0x81, 0xa1, 0x61, ...ext]); // {"a": <ext>}
      expect(() => new MsgpackReader(bytes).decode()).toThrow(/extension/i);
    }), runs(200));
  });

  it('damaged count files: the counts, or a typed error', () => {
    const good = Buffer.from(encodeCounts({ bits: 20, idx: Uint32Array.from([3, 9, 400]), count: Uint32Array.from([1, 2, 3]), offsets: Float64Array.from([0, 100]) }));
    fc.assert(fc.property(damageArb, (edits) => {
      const c = outcome(() => decodeCounts(damage(good, edits), 'shard-00000.counts.msgpack'));
      if (c) expect(c.idx.length).toBe(c.count.length);
    }), runs(3000));
  });
});
