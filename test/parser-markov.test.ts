/**
 * k-best on markovised, parent-annotated grammars with unknown-word classes
 * and smoothing on, where nltk has no counterpart. Reference: a brute force
 * written here from the definitions, sharing no code with CKY, the k-best
 * search or the de-binariser: every derivation of the binarised grammar is
 * enumerated recursively (unary chains: paths that repeat no symbol, of at
 * most maxUnaryChain rules below TOP), printed with intermediate symbols
 * spliced into their parent and annotations dropped, merged by text keeping
 * the best score, and sorted. The parser's list must equal it.
 * The trees are the seeded hut-log trees of the nltk fixtures (read only for
 * their trees).
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { parseTree } from '../src/core/read-brackets.js';
import { KIND_REAL, KIND_TOP } from '../src/parser/binarise.js';
import { checkPcfgSettings, KBestParser, PcfgTrainer, type Grammar, type ParseResult, type PcfgSettings } from '../src/parser/index.js';
import { readFixture } from './helpers/fixtures.js';

interface Case {
  name: string;
  trees: string[];
  sentences: { words: string[] }[];
}
const fixture = readFixture<{ cases: Case[] }>('nltk-pcfg-parse.json');

interface Deriv {
  text: string;
  score: number;
}

/** All derivations of `words` (null if some list passes `limit`). */
function bruteForce(g: Grammar, words: string[], limit: number): Map<string, number> | null {
  const d = g.data;
  const S = g.nSym;
  const n = words.length;
  const unaryKids: [number, number][][] = Array.from({ length: S }, () => []);
  for (let r = 0; r < d.unParent.length; r++) unaryKids[d.unParent[r]].push([d.unChild[r], d.unScore[r]]);
  const binary: [number, number, number][][] = Array.from({ length: S }, () => []);
  for (let r = 0; r < d.binParent.length; r++) binary[d.binParent[r]].push([d.binLeft[r], d.binRight[r], d.binScore[r]]);
  // Chains from x: [path x..y, score], simple paths of 1..max rules.
  const chains = (x: number, max: number): [number[], number][] => {
    const out: [number[], number][] = [];
    const walk = (path: number[], score: number) => {
      if (path.length - 1 === max) return;
      for (const [y, s] of unaryKids[path[path.length - 1]]) {
        if (path.includes(y)) continue;
        out.push([[...path, y], score + s]);
        walk([...path, y], score + s);
      }
    };
    walk([x], 0);
    return out;
  };
  const wrap = (sym: number, inner: string) => (g.kind(sym) === KIND_REAL ? `(${g.label(sym)} ${inner})` : inner);
  const memo = new Map<string, Deriv[]>();
  let tooMany = false;
  const check = (list: Deriv[]) => {
    if (list.length > limit) tooMany = true;
    return list;
  };
  const bottom = (a: number, i: number, j: number): Deriv[] => {
    const key = `b${a},${i},${j}`;
    if (memo.has(key)) return memo.get(key)!;
    const out: Deriv[] = [];
    if (j - i === 1) {
      const s = g.lexicalScore(a, words[i], i);
      if (s > -Infinity) out.push({ text: wrap(a, words[i]), score: s });
    } else {
      for (const [b, c, w] of binary[a]) {
        for (let m = i + 1; m < j && !tooMany; m++) {
          const left = top(b, i, m);
          if (left.length === 0) continue;
          const right = top(c, m, j);
          for (const l of left) for (const r of right) out.push({ text: wrap(a, `${l.text} ${r.text}`), score: l.score + r.score + w });
        }
      }
    }
    memo.set(key, check(out));
    return out;
  };
  const top = (x: number, i: number, j: number): Deriv[] => {
    const key = `t${x},${i},${j}`;
    if (memo.has(key)) return memo.get(key)!;
    const out = [...bottom(x, i, j)];
    for (const [path, cs] of chains(x, g.settings.maxUnaryChain)) {
      const y = path[path.length - 1];
      for (const b of bottom(y, i, j)) {
        let text = b.text;
        for (let p = path.length - 2; p >= 0; p--) text = wrap(path[p], text);
        out.push({ text, score: b.score + cs });
      }
    }
    memo.set(key, check(out));
    return out;
  };
  const all = new Map<string, number>();
  for (const [path, cs] of chains(g.top, g.settings.maxUnaryChain + 1)) {
    const y = path[path.length - 1];
    for (const b of bottom(y, 0, n)) {
      let text = b.text;
      for (let p = path.length - 2; p >= 0; p--) text = g.kind(path[p]) === KIND_TOP ? text : wrap(path[p], text);
      const s = b.score + cs;
      if (!all.has(text) || all.get(text)! < s) all.set(text, s);
    }
    if (tooMany) return null;
  }
  return tooMany ? null : all;
}

/** The parser's list must be the brute force's, sorted; tied groups (within 1e-9) compared as sets. */
function expectSameList(ours: ParseResult[], ref: Map<string, number>, what: string): void {
  const sorted = [...ref].sort((a, b) => b[1] - a[1]);
  expect(ours.length, what).toBe(sorted.length);
  let r = 0;
  while (r < sorted.length) {
    let e = r + 1;
    while (e < sorted.length && Math.abs(sorted[e][1] - sorted[r][1]) <= 1e-9) e++;
    const want = sorted.slice(r, e).map((x) => x[0]).sort();
    const got = ours.slice(r, e).map((x) => x.tree).sort();
    expect(got, `${what}, ranks ${r + 1}..${e}`).toEqual(want);
    for (let q = r; q < e; q++) expect(ours[q].score, what).toBeCloseTo(ref.get(ours[q].tree)!, 9);
    r = e;
  }
}

function train(trees: string[], settings: PcfgSettings): Grammar {
  const vocab = createVocabulary();
  const t = new PcfgTrainer(settings);
  for (const s of trees) t.add(parseTree(s, vocab));
  return t.finish();
}

/** Settings, and the longest sentence the brute force is given under them (h = 0, v = 1 is very ambiguous). */
const SETTINGS: [string, Record<string, unknown>, number][] = [
  ['defaults', {}, 12],
  ['h=0 v=1', { horizontal: 0, vertical: 1 }, 9],
  ['h=1 v=3', { horizontal: 1, vertical: 3, unknownThreshold: 3, lexicalSmoothing: 2 }, 12],
  ['h=inf v=2, chains of 1', { horizontal: Infinity, vertical: 2, maxUnaryChain: 1 }, 12],
];

describe('k-best on markovised grammars against a brute-force enumeration', () => {
  const cases = fixture.cases.filter((c) => c.name.startsWith('small'));

  for (const [name, partial, maxWords] of SETTINGS) {
    it(`equals the brute force (${name})`, () => {
      const settings = checkPcfgSettings(partial);
      let compared = 0;
      let sentences = 0;
      let unknownParsed = 0;
      for (const c of cases) {
        const g = train(c.trees, settings);
        const parser = new KBestParser(g);
        const extra = [['the', 'warden', 'xyzzled', 'the', 'Rope', '.'], ['Porters', 'mended', '12', 'snow-covered', 'tarps']];
        for (const words of [...c.sentences.map((s) => s.words), ...extra]) {
          if (words.length > maxWords) continue;
          const ref = bruteForce(g, words, 20000);
          if (ref === null) continue;
          const ours = parser.parse(words, ref.size + 5);
          expectSameList(ours, ref, `${c.name} ${name}: ${words.join(' ')}`);
          if (words.some((w) => !g.isKnownWord(w)) && ours.length > 0) unknownParsed++;
          compared += ours.length;
          sentences++;
        }
      }
      expect(sentences).toBeGreaterThan(100);
      expect(unknownParsed).toBeGreaterThanOrEqual(cases.length);
      expect(compared).toBeGreaterThan(500);
    });
  }

  it('handles unary cycles: chains never repeat a symbol, and every chain up to the bound is found', () => {
    // NP → NX → NP and NX → NP → NX: a cycle in the unary rules.
    const trees = ['(S (NP (NX (NP (NN oil)))) (VP (VBD leaked)))', '(S (NX (NP (NX (NN oil)))) (VP (VBD leaked)))', '(S (NP (NN oil)) (VP (VBD leaked)))'];
    for (const maxUnaryChain of [1, 2, 3, 4]) {
      const g = train(trees, checkPcfgSettings({ vertical: 1, horizontal: Infinity, unknownThreshold: 0, lexicalSmoothing: 0, maxUnaryChain }));
      const ref = bruteForce(g, ['oil', 'leaked'], 20000)!;
      const ours = new KBestParser(g).parse(['oil', 'leaked'], 1000);
      expectSameList(ours, ref, `maxUnaryChain ${maxUnaryChain}`);
      for (const p of ours) expect(p.tree).not.toMatch(/\((NP|NX) \(\1 /);
    }
  });
});

describe('scores are the trees\' log-probabilities', () => {
  it('gives each output tree the score the grammar gives the tree (binarised as in training)', () => {
    const c = fixture.cases.find((x) => x.name === 'large')!;
    const g = train(c.trees, checkPcfgSettings({}));
    const parser = new KBestParser(g);
    const vocab = createVocabulary();
    let checked = 0;
    for (const s of c.sentences) {
      for (const p of parser.parse(s.words, 50)) {
        expect(g.treeLogProb(parseTree(p.tree, vocab)), p.tree).toBeCloseTo(p.score, 9);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(1000);
  });
});
