/**
 * The difference path (features/extract-vectors.ts) against the direct path
 * (features/direct-vectors.ts, the test oracle): for every candidate,
 * reference + difference must equal the direct path's vector after dropping
 * the features that are the same in every candidate — exactly for
 * integer-valued features, within 1e-6 relative for real-valued ones — on
 * hand-made lists, on the demo corpus with synthetic n-best lists, and on
 * seeded random trees. Indices are checked against the canonical keys'
 * MurmurHash3 (itself checked against scikit-learn in hashing.sklearn.test.ts).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { createVocabulary, type Vocabulary } from '../src/core/interner.js';
import { bucketOf, murmur3String, signOf } from '../src/core/murmur3.js';
import { normaliseTree } from '../src/core/normalise.js';
import { parseTree } from '../src/core/read-brackets.js';
import { addVectors, splitParts, type SparseVector } from '../src/core/sparse-vector.js';
import { writeTree } from '../src/core/write-brackets.js';
import { seededRandom, syntheticCandidates } from './helpers/synthetic-nbest.js';
import { bucketTable } from '../src/formats/shard-record.js';
import { directVectors } from '../src/features/direct-vectors.js';
import { VectorExtractor, type CandidateInput } from '../src/features/extract-vectors.js';
import { checkOptions } from '../src/features/options.js';
import { TEMPLATES } from '../src/features/registry.js';
import type { ConfiguredTemplate } from '../src/features/template.js';
import { readTreebank } from '../src/io/read-treebank.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const lexiconText = readFileSync(`${root}/demo-corpus/lexicon.tsv`, 'utf8');
const conf = (id: string, options: Record<string, unknown> = {}) => {
  const t = TEMPLATES.get(id)!;
  return t.configure(checkOptions(id === 'lexicon.v1' ? { path: 'lex', ...options } : options, t.options, id), { readText: () => lexiconText });
};
const ALL = () => [...TEMPLATES.keys()].map((id) => conf(id));
// Non-local node features too: tags outside a constituent.
const WITH_CONTEXT = () => [...ALL().filter((_, k) => [...TEMPLATES.keys()][k] !== 'boundary-words.v1'), conf('boundary-words.v1', { parts: ['first-word', 'tag-before', 'tag-after'] })];

function candidates(texts: string[], vocab: Vocabulary = createVocabulary(), scores?: number[]): CandidateInput[] {
  return texts.map((t, rank) => ({ tree: normaliseTree(parseTree(t, vocab))!, score: scores?.[rank] ?? -10.37 - 0.71 * rank, rank }));
}

function same(a: SparseVector, b: SparseVector, what: string): void {
  expect(Array.from(a.idx), what).toEqual(Array.from(b.idx));
  a.val.forEach((x, k) => {
    const y = b.val[k];
    if (Number.isInteger(y)) expect(x, `${what} bucket ${a.idx[k]}`).toBe(y);
    else expect(Math.abs(x - y), `${what} bucket ${a.idx[k]}: ${x} vs ${y}`).toBeLessThanOrEqual(1e-6 * Math.max(Math.abs(x), Math.abs(y)));
  });
}

function check(templates: ConfiguredTemplate[], cands: CandidateInput[], bits = 18, dropUniform = true): number {
  const ex = new VectorExtractor({ templates, bits, seed: 0, dropUniform });
  const v = ex.sentence(cands);
  const direct = directVectors({ templates, bits, seed: 0, dropUniform }, cands);
  let entries = 0;
  cands.forEach((_, c) => {
    const abs = addVectors(splitParts(v.ref!), splitParts(v.diffs[c]));
    same(abs, direct[c], `candidate ${c}`);
    entries += v.diffs[c].idx.length;
  });
  // The stored reference holds exactly the varying buckets (where the reference is non-zero).
  if (dropUniform) for (const b of v.ref!.idx) expect(v.varying).toContain(b);
  // The list's stored buckets and each vector's positions in them: what the shard encoder would make itself.
  const vectors = [v.ref!, ...v.diffs];
  const table = bucketTable(vectors);
  expect(Array.from(v.buckets)).toEqual(Array.from(table.buckets));
  vectors.forEach((x, k) => expect(Array.from(x.pos), `vector ${k}`).toEqual(Array.from(table.pos[k])));
  return entries;
}

const A = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))';
const B = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NP (NNS crates)) (PP (TO to) (NP (DT the) (NN hut))))) (. .))';
const C = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates) (PP (TO to) (NP (DT the) (NN hut))))) (. .))';
const D = '(S (NP (DT the) (JJ porter)) (VP (VBD carried) (NP (NNS crates)) (ADVP (TO to) (NP (DT the) (NN hut)))) (. .))';

describe('difference vectors (reference + difference = direct path)', () => {
  it('agree on a hand-made list, with every template, dropping uniform features or not', () => {
    for (const drop of [true, false]) {
      expect(check(ALL(), candidates([A, B, C, D, A.replace('(NN hut)', '(NNS hut)')]), 18, drop)).toBeGreaterThan(0);
      check(WITH_CONTEXT(), candidates([A, B, C, D]), 18, drop);
    }
  });

  it('take the reference from what most candidates share, and store nothing where the list agrees', () => {
    const ex = new VectorExtractor({ templates: [conf('rules.v1')], bits: 20, seed: 0 });
    const v = ex.sentence(candidates([B, A, A]));
    // A holds the majority: its candidates differ from the reference in nothing.
    expect([v.diffs[1].idx.length, v.diffs[2].idx.length]).toEqual([0, 0]);
    const idx = (k: string) => bucketOf(murmur3String(k), 20);
    // Shared rules (S → NP VP ., NP → DT NN, PP → TO NP) are not stored; differing ones are.
    for (const shared of ['rules.v1 S NP VP .', 'rules.v1 NP DT NN', 'rules.v1 PP TO NP']) expect(Array.from(v.varying)).not.toContain(idx(shared));
    // B has NP → NP PP and VP → VBD NP where A has VP → VBD NP PP: signed differences of the canonical keys' buckets.
    const diff = new Map(Array.from(v.diffs[0].idx, (b, k) => [b, v.diffs[0].val[k]]));
    const h = (k: string) => murmur3String(k);
    expect(diff.get(idx('rules.v1 NP NP PP'))).toBe(signOf(h('rules.v1 NP NP PP')));
    expect(diff.get(idx('rules.v1 VP VBD NP PP'))).toBe(-signOf(h('rules.v1 VP VBD NP PP')));
    expect(diff.get(idx('rules.v1 VP VBD NP'))).toBe(signOf(h('rules.v1 VP VBD NP')));
    expect(diff.size).toBe(3);
    // The reference holds A's values where the list varies.
    const ref = new Map(Array.from(v.ref!.idx, (b, k) => [b, v.ref!.val[k]]));
    expect(ref.get(idx('rules.v1 VP VBD NP PP'))).toBe(signOf(h('rules.v1 VP VBD NP PP')));
    expect(ref.has(idx('rules.v1 NP NP PP'))).toBe(false);
  });

  it('with no majority, keep the consensus value: each candidate stores what it alone has', () => {
    const ex = new VectorExtractor({ templates: [conf('rules.v1')], bits: 20, seed: 0 });
    const v = ex.sentence(candidates([A, B]));
    const idx = (k: string) => bucketOf(murmur3String(k), 20);
    expect(Array.from(v.diffs[0].idx).sort()).toEqual([idx('rules.v1 VP VBD NP PP')].sort());
    expect(Array.from(v.diffs[1].idx).sort((a, b) => a - b)).toEqual([idx('rules.v1 NP NP PP'), idx('rules.v1 VP VBD NP')].sort((a, b) => a - b));
    expect(v.ref!.idx.length).toBe(0);
  });

  it('give one empty reference and no differences for a list whose candidates are all alike', () => {
    const ex = new VectorExtractor({ templates: ALL().filter((_, k) => [...TEMPLATES.keys()][k] !== 'base-score.v1'), bits: 18, seed: 0 });
    const v = ex.sentence(candidates([A, A, A]));
    expect(v.ref!.idx.length).toBe(0);
    expect(v.varying.length).toBe(0);
    expect(v.diffs.every((d) => d.idx.length === 0)).toBe(true);
  });

  it('have no reference for a list without candidates', () => {
    const v = new VectorExtractor({ templates: ALL(), bits: 18, seed: 0 }).sentence([]);
    expect(v.ref).toBeNull();
    expect(v.diffs).toEqual([]);
  });

  it('agree on the demo corpus with synthetic 20-best lists (real-valued scores)', async () => {
    const vocab = createVocabulary();
    const rand = seededRandom(11);
    let sentences = 0;
    let entries = 0;
    const templates = ALL();
    const context = WITH_CONTEXT();
    for await (const rec of readTreebank(`${root}/demo-corpus/huts-train.trees`, { vocab })) {
      if (sentences++ >= 60) break;
      const gold = normaliseTree(rec.tree)!;
      const list = syntheticCandidates(gold, 20, rand, vocab);
      const cands = candidates(list.map((c) => c.tree), vocab, list.map((c) => c.score));
      entries += check(sentences % 2 ? templates : context, cands, sentences % 3 === 0 ? 12 : 20);
    }
    expect(entries).toBeGreaterThan(1000);
  });

  it('agree on seeded random trees, with collisions in a small hash space', () => {
    const rand = seededRandom(5);
    const labels = ['NP', 'VP', 'PP', 'S', 'SBAR', 'ADJP', 'NP', 'VP'];
    const tags = ['DT', 'NN', 'NNS', 'VBD', 'IN', 'JJ', 'CC', 'CD', 'TO', ',', '.'];
    const words = ['warden', 'rope', 'stove', 'crates', 'the', 'and', 'of', 'to', 'carried', 'mended', 'hut', 'flour'];
    const pick = <T>(xs: T[]) => xs[Math.floor(rand() * xs.length)];
    const leaves = Array.from({ length: 14 }, () => `(${pick(tags)} ${pick(words)})`);
    // Random bracketings over the same 14 leaves.
    const bracket = (items: string[]): string => {
      if (items.length === 1) return rand() < 0.5 ? items[0] : `(${pick(labels)} ${items[0]})`;
      const cut = 1 + Math.floor(rand() * (items.length - 1));
      const l = bracket(items.slice(0, cut));
      const r = bracket(items.slice(cut));
      return `(${pick(labels)} ${l} ${r})`;
    };
    for (let s = 0; s < 20; s++) {
      const vocab = createVocabulary();
      const texts = Array.from({ length: 12 }, () => `(S ${bracket(leaves)})`);
      const cands = candidates(texts, vocab, texts.map(() => -30 * rand()));
      check(s % 2 ? ALL() : WITH_CONTEXT(), cands, s % 4 === 0 ? 6 : 16, s % 5 !== 0);
      // The trees round-trip (the generator made what it meant to).
      expect(writeTree(cands[0].tree)).toBe(writeTree(normaliseTree(parseTree(texts[0], vocab))!));
    }
  });

  it('count, per template, the buckets it fires in a list and how many of them vary', () => {
    const templates = [conf('rules.v1'), conf('span-shape.v1')];
    const v = new VectorExtractor({ templates, bits: 20, seed: 0 }).sentence(candidates([A, B]));
    // rules.v1: A has S→NP VP ., NP→DT NN, VP→VBD NP PP, NP→NNS, PP→TO NP; B adds NP→NP PP and VP→VBD NP.
    expect([v.templateCounts[0], v.templateCounts[1]]).toEqual([7, 3]);
    expect(v.templateCounts[2]).toBeGreaterThan(v.templateCounts[3]);
  });
});
