/**
 * Round trips and contracts of the embedded parser: de-binarisation inverts
 * binarisation; model bytes decode to the same grammar and re-encode to the
 * same bytes; output trees read back with the input words; settings are
 * checked and keyed canonically. References: the demo corpus
 * (demo-corpus/huts-train.trees, invented) and the trees themselves; signature
 * examples are worked by hand from the rule written in unknown-words.ts.
 */
import { describe, expect, it } from 'vitest';
import { DataError, UsageError } from '../src/core/errors.js';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree } from '../src/core/normalise.js';
import { parseTree } from '../src/core/read-brackets.js';
import { yieldOf, type Tree } from '../src/core/tree.js';
import { writeTree } from '../src/core/write-brackets.js';
import { readTreebank } from '../src/io/read-treebank.js';
import {
  checkPcfgSettings, decodeGrammar, DEFAULT_PCFG_SETTINGS, encodeGrammar, KBestParser, parseSettingsKey, PcfgTrainer,
  settingsKey, signatureOf, type Grammar, type PcfgSettings,
} from '../src/parser/index.js';
import { Chart } from '../src/parser/cky.js';
import { readFixture } from './helpers/fixtures.js';

const vocab = createVocabulary();
async function demoTrees(): Promise<Tree[]> {
  const out: Tree[] = [];
  for await (const r of readTreebank(new URL('../demo-corpus/huts-train.trees', import.meta.url).pathname, { vocab })) out.push(normaliseTree(r.tree)!);
  return out;
}
const fixtureTrees = readFixture<{ trees: string[] }>('nltk-pcfg.json').trees.map((s) => parseTree(s, vocab));

function train(trees: Tree[], settings: PcfgSettings = DEFAULT_PCFG_SETTINGS): Grammar {
  const t = new PcfgTrainer(settings);
  for (const tree of trees) t.add(tree);
  return t.finish();
}

describe('binarisation round trip', () => {
  it('de-binarises every training tree back to itself, for several orders h and v', async () => {
    const trees = [...(await demoTrees()), ...fixtureTrees];
    for (const partial of [{}, { horizontal: 0, vertical: 1 }, { horizontal: 1, vertical: 3 }, { horizontal: Infinity, vertical: 2 }]) {
      const g = train(trees, checkPcfgSettings(partial));
      for (const t of trees) {
        const bt = g.binarise(t);
        expect(bt).not.toBeNull();
        expect(g.debinarise(bt!, yieldOf(t))).toBe(writeTree(t));
        // Binarised: no node has more than two children.
        expect(Math.max(...bt!.kids)).toBeLessThanOrEqual(2);
      }
    }
  });

  it('skips, and counts, trees the PCFG cannot hold (mixed children, several words under a tag)', () => {
    const t = new PcfgTrainer(DEFAULT_PCFG_SETTINGS);
    expect(t.add(parseTree('(S (NP (NN rope) coil) (VP (VBD froze)))', vocab))).toBe(false);
    expect(t.add(parseTree('(S (NP (NN rope coil)) (VP (VBD froze)))', vocab))).toBe(false);
    expect(t.add(parseTree('(S (NP (NN rope)) (VP (VBD froze)))', vocab))).toBe(true);
    const g = t.finish();
    expect(g.data.skippedTrees).toBe(2);
    expect(g.data.trainedTrees).toBe(1);
    // Nothing of the skipped trees is left in the grammar.
    expect(g.isKnownWord('coil')).toBe(false);
  });
});

describe('model bytes', () => {
  it('decode to the same grammar, re-encode to the same bytes, and parse the same', async () => {
    const trees = await demoTrees();
    const g = train(trees.slice(0, 1000));
    const bytes = encodeGrammar(g);
    const back = decodeGrammar(bytes);
    expect(encodeGrammar(back)).toEqual(bytes);
    expect(back.data).toEqual(g.data);
    const a = new KBestParser(g);
    const b = new KBestParser(back);
    for (const t of trees.slice(1000, 1060)) expect(b.parse(yieldOf(t), 10)).toEqual(a.parse(yieldOf(t), 10));
  });

  it('are the same for the same trees and settings, whatever their order', async () => {
    const trees = await demoTrees();
    const one = encodeGrammar(train(trees.slice(0, 400)));
    const two = encodeGrammar(train(trees.slice(0, 400)));
    const reversed = encodeGrammar(train(trees.slice(0, 400).reverse()));
    expect(two).toEqual(one);
    expect(reversed).toEqual(one);
    const other = encodeGrammar(train(trees.slice(0, 400), checkPcfgSettings({ vertical: 1 })));
    expect(other).not.toEqual(one);
  });

  it('refuses bytes that are not a whole grammar', () => {
    const bytes = encodeGrammar(train(fixtureTrees));
    expect(() => decodeGrammar(new TextEncoder().encode('not a model'))).toThrow(UsageError);
    expect(() => decodeGrammar(bytes.subarray(0, bytes.length - 3))).toThrow(/end early/);
    const longer = new Uint8Array(bytes.length + 1);
    longer.set(bytes);
    expect(() => decodeGrammar(longer)).toThrow(/after the end/);
  });
});

describe('parser output', () => {
  it('writes distinct trees, best first, that read back with the input words; scores are log-probabilities', async () => {
    const trees = await demoTrees();
    const g = train(trees.slice(0, 1000));
    const parser = new KBestParser(g);
    let lists = 0;
    for (const t of trees.slice(1000, 1200)) {
      const words = yieldOf(t);
      const out = parser.parse(words, 50);
      expect(out.length).toBeGreaterThan(0);
      expect(new Set(out.map((p) => p.tree)).size).toBe(out.length);
      for (let r = 0; r < out.length; r++) {
        const back = parseTree(out[r].tree, vocab);
        expect(yieldOf(back)).toEqual(words);
        expect(writeTree(back)).toBe(out[r].tree);
        // The virtual top is never written: the root is a treebank root label.
        expect(vocab.labels.name(back.sym[0])).toBe('S');
        expect(out[r].score).toBeLessThan(0);
        if (r > 0) expect(out[r].score).toBeLessThanOrEqual(out[r - 1].score);
      }
      lists++;
    }
    expect(lists).toBe(200);
  });

  it('orders exactly tied trees by their text', () => {
    // A grammar where `check oil` is an S or a VP with the same probability.
    const g = train(['(S (VP (VB check) (NP (NN oil))))', '(VP (VB check) (NP (NN oil)))'].map((s) => parseTree(s, vocab)),
      checkPcfgSettings({ unknownThreshold: 0, lexicalSmoothing: 0 }));
    const out = new KBestParser(g).parse(['check', 'oil'], 5);
    expect(out.map((p) => p.tree)).toEqual(['(S (VP (VB check) (NP (NN oil))))', '(VP (VB check) (NP (NN oil)))']);
    expect(out[0].score).toBe(out[1].score);
    // With k = 1 the cut falls inside the tie: the text order decides, not the search order.
    expect(new KBestParser(g).parse(['check', 'oil'], 1).map((p) => p.tree)).toEqual(['(S (VP (VB check) (NP (NN oil))))']);
  });

  it('parses unseen words through their signature classes, and gives up on them without classes', () => {
    const trees = fixtureTrees;
    const words = ['the', 'warden', 'xyzzled', 'the', 'frobnicator', '.'];
    const withClasses = new KBestParser(train(trees)).parse(words, 5);
    expect(withClasses.length).toBe(5);
    expect(yieldOf(parseTree(withClasses[0].tree, vocab))).toEqual(words);
    const without = new KBestParser(train(trees, checkPcfgSettings({ unknownThreshold: 0 }))).parse(words, 5);
    expect(without).toEqual([]);
  });

  it('returns nothing for no words or k < 1, and refuses words that cannot be written in brackets', () => {
    const parser = new KBestParser(train(fixtureTrees));
    expect(parser.parse([], 5)).toEqual([]);
    expect(parser.parse(['the', 'rope'], 0)).toEqual([]);
    expect(() => parser.parse(['the', '(rope'], 5)).toThrow(DataError);
    expect(() => parser.parse(['the', 'two ropes'], 5)).toThrow(/whitespace/);
  });

  it('with a beam, keeps to trees of the exact search and never beats its best', async () => {
    const trees = await demoTrees();
    const g = train(trees.slice(0, 1000));
    const exact = new KBestParser(g);
    const beamed = new KBestParser(g, { beam: 3 });
    let pruned = 0;
    for (const t of trees.slice(1000, 1100)) {
      const words = yieldOf(t);
      const all = new Map(exact.parse(words, 500).map((p) => [p.tree, p.score]));
      const some = beamed.parse(words, 50);
      if (some.length > 0) expect(some[0].score).toBeLessThanOrEqual(exact.bestScore(words) + 1e-12);
      for (const p of some) expect(p.score).toBeCloseTo(all.get(p.tree) ?? NaN, 12);
      if (some.length < Math.min(50, all.size)) pruned++;
    }
    expect(pruned).toBeGreaterThan(0);
  });

  it('parses again without the beam when the beam leaves a sentence no parse', async () => {
    const trees = await demoTrees();
    const g = train(trees.slice(0, 1000));
    const exact = new KBestParser(g);
    const narrow = new KBestParser(g, { beam: 0.5 });
    const chart = new Chart(g);
    let lostByBeam = 0;
    for (const t of trees.slice(1000, 1200)) {
      const words = yieldOf(t);
      if (chart.fill(words, 0.5) === -Infinity) lostByBeam++;
      expect(narrow.parse(words, 5).length).toBeGreaterThan(0);
      expect(narrow.bestScore(words)).toBeLessThanOrEqual(exact.bestScore(words) + 1e-12);
    }
    // The beam alone does leave sentences without a parse, so the fallback was used.
    expect(lostByBeam).toBeGreaterThan(0);
  });
});

describe('settings', () => {
  it('fills defaults and accepts numbers as text and inf', () => {
    expect(checkPcfgSettings({})).toEqual(DEFAULT_PCFG_SETTINGS);
    const s = checkPcfgSettings({ horizontal: 'inf', vertical: '3', beam: 7.5 });
    expect(s.horizontal).toBe(Infinity);
    expect(s.vertical).toBe(3);
    expect(s.beam).toBe(7.5);
  });

  it('names the setting and its range when refusing', () => {
    expect(() => checkPcfgSettings({ vertical: 0 })).toThrow(/`vertical` must be an integer from 1 to 4; got 0/);
    expect(() => checkPcfgSettings({ horizontal: 1.5 })).toThrow(/`horizontal`/);
    expect(() => checkPcfgSettings({ unknownThreshold: -1 })).toThrow(/`unknownThreshold`/);
    expect(() => checkPcfgSettings({ beam: Infinity })).toThrow(/`beam`/);
    expect(() => checkPcfgSettings({ lexicalSmoothing: 'lots' })).toThrow(/`lexicalSmoothing`/);
    expect(() => checkPcfgSettings({ horizon: 2 })).toThrow(/unknown parser setting `horizon`/);
    expect(() => checkPcfgSettings({ vertical: 0 })).toThrow(UsageError);
  });

  it('keys settings canonically: same settings, same text; any change, another text; the text reads back', () => {
    const a = settingsKey(DEFAULT_PCFG_SETTINGS);
    const b = settingsKey(checkPcfgSettings({ vertical: '2', horizontal: 1 }));
    expect(b).toBe(a);
    const keys = new Set([a]);
    for (const change of [{ horizontal: 2 }, { horizontal: Infinity }, { vertical: 1 }, { unknownThreshold: 5 }, { lexicalSmoothing: 0 },
      { maxUnaryChain: 2 }, { beam: 10 }, { derivationFactor: 2 }]) {
      const s = checkPcfgSettings(change);
      keys.add(settingsKey(s));
      expect(parseSettingsKey(settingsKey(s))).toEqual(s);
    }
    expect(keys.size).toBe(9);
    expect(a).toMatch(/^sheaf-pcfg\/1;/);
  });
});

describe('unknown-word signatures (worked by hand from the rule in unknown-words.ts)', () => {
  const cases: [string, boolean, string, string][] = [
    ['hauling', false, '*UNK-a-ing', '*UNK-a'],
    ['hauling', true, '*UNK-a-ing', '*UNK-a'],
    ['Refilled', true, '*UNK-Aa1-ed', '*UNK-Aa1'],
    ['Refilled', false, '*UNK-Aa-ed', '*UNK-Aa'],
    ['GPS', false, '*UNK-AA', '*UNK-AA'],
    ['12', false, '*UNK-99', '*UNK-99'],
    ['3/4', false, '*UNK-99', '*UNK-99'],
    ['12.5', false, '*UNK-99', '*UNK-99'],
    ['v2.1', false, '*UNK-a9.', '*UNK-a9.'],
    ['K2', false, '*UNK-Aa9', '*UNK-Aa9'],
    ['snow-covered', false, '*UNK-a--ed', '*UNK-a-'],
    ['iPad', false, '*UNK-aA', '*UNK-aA'],
    ['Hütte', false, '*UNK-Aa', '*UNK-Aa'],
    ['山小屋', false, '*UNK-x', '*UNK-x'],
    ['&', false, '*UNK-.', '*UNK-.'],
    ['gas', false, '*UNK-a-s', '*UNK-a'],
    ['is', false, '*UNK-a', '*UNK-a'],
    ['lanterns', false, '*UNK-a-s', '*UNK-a'],
    ['carriers', false, '*UNK-a-ers', '*UNK-a'],
  ];
  for (const [word, first, full, shape] of cases) {
    it(`${word}${first ? ' (first word)' : ''} → ${full}`, () => {
      expect(signatureOf(word, first)).toEqual({ full, shape });
    });
  }
});
