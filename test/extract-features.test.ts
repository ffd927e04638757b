/**
 * The extract + hash stages over a sentence's candidates: pseudo-constant
 * pruning (common practice), counts of varying buckets, sorted unique
 * indices, names and the collision rate. Indices are checked against the
 * canonical keys' MurmurHash3 (itself checked against scikit-learn).
 */
import { describe, expect, it } from 'vitest';
import { bucketOf, murmur3String, signOf } from '../src/core/murmur3.js';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree } from '../src/core/normalise.js';
import { parseTree } from '../src/core/read-brackets.js';
import { FeatureExtractor } from '../src/features/extract-features.js';
import { pruneConstant } from '../src/features/prune-features.js';
import { candidateView } from '../src/features/candidate-view.js';
import { TEMPLATES } from '../src/features/registry.js';
import { checkOptions } from '../src/features/options.js';

const conf = (id: string) => TEMPLATES.get(id)!.configure(checkOptions({}, TEMPLATES.get(id)!.options, id), { readText: () => '' });

function candidates(texts: string[]) {
  const vocab = createVocabulary();
  return texts.map((t, rank) => ({ tree: normaliseTree(parseTree(t, vocab))!, score: -10 - rank, rank }));
}

const A = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))))';
const B = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NP (NNS crates)) (PP (TO to) (NP (DT the) (NN hut))))))';

describe('FeatureExtractor', () => {
  it('gives sorted unique indices whose values are the summed signed counts of the canonical keys', () => {
    const ex = new FeatureExtractor({ templates: [conf('rules.v1')], bits: 20, seed: 0, pseudoConstant: false });
    const [v] = ex.sentence(candidates(['(S (NP (NN rope)) (NP (NN rope)))']));
    const h1 = murmur3String('rules.v1 S NP NP');
    const h2 = murmur3String('rules.v1 NP NN');
    const want = new Map([[bucketOf(h1, 20), signOf(h1)], [bucketOf(h2, 20), 2 * signOf(h2)]]);
    expect(Array.from(v.idx)).toEqual([...want.keys()].sort((a, b) => a - b));
    expect(Array.from(v.val)).toEqual(Array.from(v.idx, (i) => want.get(i)));
  });

  it('prunes features with the same value in every candidate, keeps those that vary or are absent somewhere', () => {
    const ex = new FeatureExtractor({ templates: [conf('rules.v1')], bits: 20, seed: 0 });
    const [a, b] = ex.sentence(candidates([A, B]));
    const idx = (k: string) => bucketOf(murmur3String(k), 20);
    // Shared rules (S → NP VP, NP → DT NN, PP → TO NP) are gone; differing ones stay.
    for (const shared of ['rules.v1 S NP VP', 'rules.v1 NP DT NN', 'rules.v1 PP TO NP']) {
      expect(a.idx).not.toContain(idx(shared));
      expect(b.idx).not.toContain(idx(shared));
    }
    expect(Array.from(a.idx)).toContain(idx('rules.v1 VP VBD NP PP'));
    expect(Array.from(b.idx)).toContain(idx('rules.v1 NP NP PP'));
    // NP → NNS occurs once in each: constant, pruned.
    expect(a.idx).not.toContain(idx('rules.v1 NP NNS'));
  });

  it('keeps a feature present in all candidates with different values', () => {
    const vectors = pruneConstant([
      { idx: Uint32Array.of(1, 5), val: Float32Array.of(1, 2) },
      { idx: Uint32Array.of(1, 5), val: Float32Array.of(1, 3) },
    ]);
    expect(vectors.map((v) => Array.from(v.idx))).toEqual([[5], [5]]);
  });

  it('counts, per bucket, the sentences in which it varies', () => {
    const ex = new FeatureExtractor({ templates: [conf('rules.v1')], bits: 20, seed: 0 });
    ex.sentence(candidates([A, B]));
    ex.sentence(candidates([A, B]));
    ex.sentence(candidates([A]));
    const i = bucketOf(murmur3String('rules.v1 NP NP PP'), 20);
    expect(ex.varying[i]).toBe(2);
    expect(ex.varying.reduce((s, x) => s + x, 0)).toBeGreaterThan(0);
  });

  it('keeps canonical names per bucket and reports distinct keys against occupied buckets', () => {
    const ex = new FeatureExtractor({ templates: [...TEMPLATES.keys()].filter((t) => t !== 'lexicon.v1').map(conf), bits: 8, seed: 0, names: 2 });
    ex.sentence(candidates([A, B]));
    const c = ex.names!.collisions();
    expect(c.keys).toBeGreaterThan(c.buckets);
    expect(c.rate).toBeGreaterThan(0);
    const [bucket, names] = [...ex.names!.byBucket][0];
    for (const n of names) expect(bucketOf(murmur3String(n), 8)).toBe(bucket);
  });

  it('gives exactly the uncached result when subtrees are shared between candidates', () => {
    const all = [...TEMPLATES.keys()].filter((t) => t !== 'lexicon.v1').map(conf);
    const C = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates) (PP (TO to) (NP (DT the) (NN hut))))))';
    const D = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (NNS crates)) (ADVP (TO to) (NP (DT the) (NN hut)))))';
    const cands = candidates([A, B, C, D, A.replace('(NP (DT the) (NN porter))', '(NP (DT the) (JJ porter))')]);
    const ex = new FeatureExtractor({ templates: all, bits: 18, seed: 0 });
    const cached = ex.sentence(cands);
    const plain = pruneConstant(cands.map((c) => ex.candidate(candidateView(c.tree, c.score, c.rank))));
    expect(cached.map((v) => [Array.from(v.idx), Array.from(v.val)])).toEqual(plain.map((v) => [Array.from(v.idx), Array.from(v.val)]));
  });

  it('is deterministic across vocabularies (ids are never hashed, only strings)', () => {
    const all = [...TEMPLATES.keys()].filter((t) => t !== 'lexicon.v1').map(conf);
    const one = new FeatureExtractor({ templates: all, bits: 18, seed: 3 }).sentence(candidates([A, B]));
    const vocab = createVocabulary();
    parseTree('(X (Y zebra) (Z yak))', vocab); // different id assignment
    const other = [A, B].map((t, rank) => ({ tree: normaliseTree(parseTree(t, vocab))!, score: -10 - rank, rank }));
    const two = new FeatureExtractor({ templates: all, bits: 18, seed: 3 }).sentence(other);
    expect(two.map((v) => [Array.from(v.idx), Array.from(v.val)])).toEqual(one.map((v) => [Array.from(v.idx), Array.from(v.val)]));
  });
});
