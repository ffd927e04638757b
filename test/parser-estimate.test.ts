/**
 * Outside check: PCFG estimation against nltk.
 * Reference: nltk.grammar.induce_pcfg (python3-nltk 3.8, Debian) over the
 * productions of 400 seeded hut-log trees under a TOP node, via
 * test/fixtures/nltk-pcfg.json (scripts/fixtures/nltk-pcfg.py).
 *
 * With horizontal = Infinity, vertical = 1, no unknown-word classes and no
 * smoothing, each original production's probability is the product of its
 * binarised pieces (the intermediate symbols remember every sibling, so the
 * pieces' relative frequencies telescope), and must equal nltk's.
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { parseTree } from '../src/core/read-brackets.js';
import { isPreterminal, type Tree } from '../src/core/tree.js';
import { checkPcfgSettings, PcfgTrainer, type Grammar } from '../src/parser/index.js';
import { readFixture } from './helpers/fixtures.js';

type Rhs = (string | [string])[];
const fixture = readFixture<{ library: string; trees: string[]; productions: [string, Rhs, number][] }>('nltk-pcfg.json');

const EXACT = checkPcfgSettings({ horizontal: Infinity, vertical: 1, unknownThreshold: 0, lexicalSmoothing: 0, maxUnaryChain: 8 });

function productionKey(tree: Tree, i: number): string {
  const { labels, words } = tree.vocab;
  const rhs: Rhs = [];
  for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) rhs.push(tree.isWord[c] ? [words.name(tree.sym[c])] : labels.name(tree.sym[c]));
  return JSON.stringify([labels.name(tree.sym[i]), rhs]);
}

function train(trees: Tree[], settings = EXACT): Grammar {
  const t = new PcfgTrainer(settings);
  for (const tree of trees) expect(t.add(tree)).toBe(true);
  return t.finish();
}

describe(`PCFG estimation against ${fixture.library} (induce_pcfg)`, () => {
  const vocab = createVocabulary();
  const trees = fixture.trees.map((s) => parseTree(s, vocab));
  const nltk = new Map(fixture.productions.map(([lhs, rhs, p]) => [JSON.stringify([lhs, rhs]), p]));
  const g = train(trees);

  it('has a few hundred trees and more than 100 productions', () => {
    expect(trees.length).toBeGreaterThanOrEqual(300);
    expect(fixture.productions.length).toBeGreaterThan(100);
  });

  it('gives every production of every tree nltk\'s probability (lexical, unary, binary and n-ary)', () => {
    const seen = new Set<string>();
    let checked = 0;
    for (const tree of trees) {
      const ours = g.productionScores(tree)!;
      expect(ours).not.toBeNull();
      for (let i = 0; i < tree.size; i++) {
        if (tree.isWord[i]) continue;
        const key = productionKey(tree, i);
        const p = nltk.get(key);
        expect(p, key).toBeDefined();
        expect(ours.nodes[i], key).toBeCloseTo(Math.log(p!), 12);
        seen.add(key);
        checked++;
      }
      // TOP → root, nltk's `TOP -> S` etc.
      const rootKey = JSON.stringify(['TOP', [vocab.labels.name(tree.sym[0])]]);
      expect(ours.root, rootKey).toBeCloseTo(Math.log(nltk.get(rootKey)!), 12);
      seen.add(rootKey);
    }
    // Every nltk production was met (the grammars have the same rules).
    expect(seen.size).toBe(fixture.productions.length);
    expect(checked).toBeGreaterThan(5000);
  });

  it('covers the rule kinds the check is about', () => {
    let nary = 0;
    let unaryPhrase = 0;
    for (const tree of trees) {
      for (let i = 0; i < tree.size; i++) {
        if (tree.isWord[i] || isPreterminal(tree, i)) continue;
        let kids = 0;
        for (let c = i + 1; c < tree.end[i]; c = tree.end[c]) kids++;
        if (kids >= 3) nary++;
        if (kids === 1) unaryPhrase++;
      }
    }
    expect(nary).toBeGreaterThan(100);
    expect(unaryPhrase).toBeGreaterThan(50);
  });

  it('makes each symbol\'s rules sum to one (definition of a PCFG), binarised or markovised', () => {
    for (const settings of [EXACT, checkPcfgSettings({ horizontal: 1, vertical: 2, unknownThreshold: 0, lexicalSmoothing: 0 })]) {
      const gr = train(trees, settings);
      const d = gr.data;
      const mass = new Float64Array(gr.nSym);
      for (let r = 0; r < d.binParent.length; r++) mass[d.binParent[r]] += Math.exp(d.binScore[r]);
      for (let r = 0; r < d.unParent.length; r++) mass[d.unParent[r]] += Math.exp(d.unScore[r]);
      for (let r = 0; r < d.wordTag.length; r++) mass[d.wordTag[r]] += Math.exp(d.wordScore[r]);
      for (let s = 0; s < gr.nSym; s++) expect(mass[s], gr.symbolName(s)).toBeCloseTo(1, 12);
    }
  });

  it('gives the same grammar whatever the order of the trees (counts only)', () => {
    const shuffled = [...trees].reverse();
    const a = g.data;
    const b = train(shuffled).data;
    expect(Array.from(b.binScore)).toEqual(Array.from(a.binScore));
    expect(Array.from(b.wordScore)).toEqual(Array.from(a.wordScore));
    expect(b.labels).toEqual(a.labels);
  });
});
