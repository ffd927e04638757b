/**
 * Fuzzing the readers in-process (fast-check, seeded): random and damaged
 * bracketed treebanks, gold JSON Lines, n-best dumps as JSON Lines and as
 * JSON arrays, plain, gzipped, gzip cut short or corrupted, in any chunking.
 * Every case must end with each input unit either read or reported as a
 * typed, located error (one outcome per tree position or record), with no
 * other exception, within the time limit and the 512 MB heap, and with
 * Object.prototype untouched. Clean input must read back exactly
 * (round trip through our writer), so rejecting everything cannot pass.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DataError } from '../../src/core/errors.js';
import { createVocabulary } from '../../src/core/interner.js';
import { parseTree } from '../../src/core/read-brackets.js';
import { loneSurrogateAt } from '../../src/core/well-formed.js';
import { writeTree } from '../../src/core/write-brackets.js';
import { readNbest, type NbestItem } from '../../src/io/read-nbest.js';
import { readTreebank } from '../../src/io/read-treebank.js';
import { chunked, chunkingArb, damage, damageArb, layoutTree, nbestRecordText, objectText, treeArb, treebankArb, wrap, wrappingArb, writeNode } from './arbitraries.js';
import { CASE_MS, expectTyped, heapLimitMb, prototypeSnapshot, runs } from './settings.js';

const FILE = 'fuzz.input';
const before = prototypeSnapshot();

async function readTrees(bytes: Buffer, sizes: number[]) {
  const trees: { id: string; ordinal: number; text: string }[] = [];
  const bad: DataError[] = [];
  let thrown: unknown = null;
  try {
    for await (const r of readTreebank(FILE, { vocab: createVocabulary(), source: chunked(bytes, sizes), onBad: (e) => bad.push(e) })) {
      trees.push({ id: r.id, ordinal: r.ordinal, text: writeTree(r.tree) });
    }
  } catch (e) {
    thrown = e;
  }
  return { trees, bad, thrown };
}

async function readDump(bytes: Buffer, sizes: number[]) {
  const items: NbestItem[] = [];
  let thrown: unknown = null;
  try {
    for await (const item of readNbest(FILE, { source: chunked(bytes, sizes) })) items.push(item);
  } catch (e) {
    thrown = e;
  }
  return { items, thrown };
}

describe('fuzz: the limits are in force', () => {
  it('runs with a heap limit of at most 512 MB (plus the young generation)', () => {
    expect(heapLimitMb()).toBeLessThan(600);
  });
});

describe('fuzz: bracketed treebanks', () => {
  it('clean treebanks in any layout and chunking read back tree for tree, ids by position', async () => {
    await fc.assert(fc.asyncProperty(treebankArb, chunkingArb, async ({ trees, text }, sizes) => {
      const r = await readTrees(Buffer.from(text), sizes);
      expect(r.thrown).toBeNull();
      expect(r.bad).toEqual([]);
      const vocab = createVocabulary();
      expect(r.trees.map((t) => t.text)).toEqual(trees.map((t) => writeTree(parseTree(writeNode(t), vocab))));
      expect(r.trees.map((t) => t.id)).toEqual(trees.map((_, k) => String(k + 1)));
    }), runs(2000, { timeout: CASE_MS }));
  });

  it('damaged treebanks (bytes inserted, deleted, replaced, cut; gzip cut or corrupted): one outcome per tree position, typed errors only', async () => {
    await fc.assert(fc.asyncProperty(treebankArb, damageArb, wrappingArb, chunkingArb, async ({ text }, edits, w, sizes) => {
      const bytes = wrap(damage(Buffer.from(text), edits), w);
      const r = await readTrees(bytes, sizes);
      if (r.thrown) expectTyped(r.thrown, FILE);
      for (const e of r.bad) {
        expect(e).toBeInstanceOf(DataError);
        expect(e.file).toBe(FILE);
        expect(e.line === undefined || e.line >= 1).toBe(true);
      }
      // Every position 1 … N is a tree read or a tree refused, exactly once.
      const ids = [...r.trees.map((t) => t.id), ...r.bad.filter((e) => e.id !== undefined).map((e) => e.id!)].map(Number).sort((a, b) => a - b);
      expect(ids).toEqual(ids.map((_, k) => k + 1));
    }), runs(3000, { timeout: CASE_MS }));
  });

  it('one damaged tree among clean ones never shifts the ids of the others (trees in column 1)', async () => {
    // Any tree but the first: the first line decides the layout (several trees on it make it free), so a first
    // tree damaged into what looks like two trees on one line is beyond this promise (README: Gold treebank).
    await fc.assert(fc.asyncProperty(fc.array(treeArb, { minLength: 2, maxLength: 10 }), fc.nat(), damageArb, async (trees, which, edits) => {
      const k = 1 + (which % (trees.length - 1));
      const texts = trees.map((t) => Buffer.from(layoutTree(t, true, true)));
      // The damage stays inside tree k: its first `(` stays (trees start in column 1), and no damaged line
      // may start with `(` in column 1 (that would be a new tree).
      const hurt = damage(texts[k].subarray(1), edits);
      const bytes: number[] = [0x28];
      for (let i = 0; i < hurt.length; i++) {
        bytes.push(hurt[i]);
        if (hurt[i] === 0x0a && hurt[i + 1] === 0x28) bytes.push(0x20);
      }
      const nl = Buffer.from('\n');
      const all = Buffer.concat([...texts.slice(0, k).flatMap((t) => [t, nl]), Buffer.from(bytes), nl, ...texts.slice(k + 1).flatMap((t) => [t, nl])]);
      const r = await readTrees(all, [4096]);
      expect(r.thrown).toBeNull();
      const vocab = createVocabulary();
      const byId = new Map(r.trees.map((t) => [t.id, t.text]));
      trees.forEach((t, j) => {
        if (j !== k) expect(byId.get(String(j + 1))).toBe(writeTree(parseTree(writeNode(t), vocab)));
      });
    }), runs(4000, { timeout: CASE_MS }));
  });
});

describe('fuzz: gold JSON Lines', () => {
  it('random lines: each non-blank line is a tree or one typed reject', async () => {
    const line = fc.oneof(
      fc.record({ id: fc.oneof(fc.string(), fc.integer()), tree: treeArb.map(writeNode) }, { requiredKeys: ['tree'] }).map((o) => JSON.stringify(o)),
      fc.record({ id: fc.constantFrom('\ud800', '\udbff', '__proto__'), tree: fc.constantFrom('(S (NN a))', '(S (NN \udc00))', '(S', '') }).map(objectText),
      fc.jsonValue({ maxDepth: 2 }).map((v) => JSON.stringify(v)),
      fc.constantFrom('{', '{"tree": 5}', '{"id": [], "tree": "(S (NN a))"}', '{"__proto__": {"polluted": 1}, "tree": "(S (NN a))"}'),
    );
    await fc.assert(fc.asyncProperty(fc.array(line, { minLength: 1, maxLength: 20 }), chunkingArb, async (lines, sizes) => {
      // The first line must start with `{` for the file to be JSON Lines.
      const text = ['{"id": "first", "tree": "(S (NN lamp))"}', ...lines.map((l) => l.replace(/\n/g, ' '))].join('\n') + '\n';
      const r = await readTrees(Buffer.from(text), sizes);
      expect(r.thrown).toBeNull();
      const nonBlank = text.split('\n').filter((l) => l.trim() !== '').length;
      expect(r.trees.length + r.bad.length).toBe(nonBlank);
      for (const e of r.bad) expect(e.line).toBeGreaterThanOrEqual(1);
    }), runs(6000, { timeout: CASE_MS }));
  });
});

describe('fuzz: n-best dumps', () => {
  const treeTexts = ['(S (NP (DT the) (NN warden)) (VP (VBD logged)))', '(S (NP (DT the) (NN warden)) (VBD logged))', '(S (NN rope)', '()', '(S (NN \ud800))'];

  function checkItems(items: NbestItem[]) {
    for (const item of items) {
      if ('reject' in item) {
        const r = item.reject;
        expect(r.file).toBe(FILE);
        expect(['bad-json', 'bad-field', 'invalid-utf8', 'truncated']).toContain(r.code);
        expect(r.reason.length).toBeGreaterThan(5);
        expect(r.line === null || r.line >= 1).toBe(true);
        continue;
      }
      const rec = item.record;
      // What passes the reader is what the rest of prepare may assume.
      expect(typeof rec.id).toBe('string');
      expect(loneSurrogateAt(rec.id)).toBe(-1);
      expect(rec.fold === null || (Number.isSafeInteger(rec.fold) && rec.fold >= 0)).toBe(true);
      expect(rec.source === null || (typeof rec.source.parser === 'string' && typeof rec.source.fingerprint === 'string')).toBe(true);
      for (const c of rec.candidates) {
        expect(typeof c.tree).toBe('string');
        expect(Number.isFinite(Math.fround(c.score))).toBe(true);
      }
      expect(Object.getPrototypeOf(rec)).toBe(Object.prototype);
    }
  }

  it('JSON Lines of random records: one item per non-blank line, each a checked record or a typed reject', async () => {
    await fc.assert(fc.asyncProperty(fc.array(nbestRecordText(treeTexts), { minLength: 1, maxLength: 12 }), chunkingArb, async (recs, sizes) => {
      const text = recs.map((r) => r.replace(/\n/g, ' ')).join('\n') + '\n';
      const r = await readDump(Buffer.from(text), sizes);
      expect(r.thrown).toBeNull();
      checkItems(r.items);
      // A dump whose first line starts with `[` may be read as an array; otherwise every line counts once.
      if (!text.trimStart().startsWith('[')) expect(r.items.length).toBe(recs.length);
      expect(prototypeSnapshot()).toBe(before);
    }), runs(4000, { timeout: CASE_MS }));
  });

  it('JSON arrays of random records: one item per element, or a typed reject where the array breaks', async () => {
    await fc.assert(fc.asyncProperty(fc.array(nbestRecordText(treeTexts), { maxLength: 12 }), fc.boolean(), chunkingArb, async (recs, pretty, sizes) => {
      const text = `[${recs.join(pretty ? ',\n  ' : ',')}]\n`;
      const r = await readDump(Buffer.from(text), sizes);
      expect(r.thrown).toBeNull();
      checkItems(r.items);
      // Elements up to the first one that is not JSON (NaN, Infinity …) each give one item; then one reject says where the array breaks.
      const firstBroken = recs.findIndex((x) => { try { JSON.parse(x); return false; } catch { return true; } });
      if (firstBroken < 0) expect(r.items.length).toBe(recs.length);
      else {
        expect(r.items.length).toBeLessThanOrEqual(firstBroken + 1);
        const last = r.items[r.items.length - 1];
        expect('reject' in last && last.reject.reason).toMatch(/breaks after element \d+/);
      }
      expect(prototypeSnapshot()).toBe(before);
    }), runs(1500, { timeout: CASE_MS }));
  });

  it('damaged dumps (bytes, gzip cut or corrupted, any chunking): typed items only, lines in order', async () => {
    await fc.assert(fc.asyncProperty(fc.array(nbestRecordText(treeTexts), { minLength: 1, maxLength: 10 }), fc.boolean(), damageArb, wrappingArb, chunkingArb, async (recs, array, edits, w, sizes) => {
      const text = array ? `[${recs.join(',\n')}]` : recs.map((x) => x.replace(/\n/g, ' ')).join('\n') + '\n';
      const bytes = wrap(damage(Buffer.from(text), edits), w);
      const r = await readDump(bytes, sizes);
      if (r.thrown) expectTyped(r.thrown, FILE);
      checkItems(r.items);
      const lines = r.items.map((i) => ('reject' in i ? i.reject.line : i.record.line || null)).filter((l): l is number => l !== null);
      for (let k = 1; k < lines.length; k++) expect(lines[k]).toBeGreaterThan(lines[k - 1]);
      expect(prototypeSnapshot()).toBe(before);
    }), runs(3000, { timeout: CASE_MS }));
  });
});
