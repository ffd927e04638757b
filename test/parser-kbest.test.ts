/**
 * Outside check: Viterbi and k-best parsing against nltk.
 * Reference: python3-nltk 3.8 (Debian) via test/fixtures/nltk-pcfg-parse.json
 * (scripts/fixtures/nltk-pcfg-parse.py): induce_pcfg over hut-log trees
 * under a TOP node; nltk.parse.ViterbiParser for the best parse; every parse
 * of nltk.parse.ChartParser scored by the product of its productions'
 * probabilities, sorted best first (the brute-force k-best list).
 *
 * Settings make sheaf's grammar the same PCFG (horizontal = Infinity,
 * vertical = 1, no unknown-word classes, no smoothing) and the search exact
 * (no beam; chains long enough for the fixtures' grammars, which have no
 * unary cycles).
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { parseTree } from '../src/core/read-brackets.js';
import { yieldOf } from '../src/core/tree.js';
import { writeTree } from '../src/core/write-brackets.js';
import { checkPcfgSettings, KBestParser, PcfgTrainer, type Grammar, type ParseResult } from '../src/parser/index.js';
import { readFixture } from './helpers/fixtures.js';

interface Sentence {
  words: string[];
  viterbi: [string, number] | null;
  parses: [string, number][] | null;
  uncovered?: boolean;
  tooMany?: boolean;
}
interface Case {
  name: string;
  trees: string[];
  sentences: Sentence[];
}
const fixture = readFixture<{ library: string; cases: Case[] }>('nltk-pcfg-parse.json');

const EXACT = checkPcfgSettings({ horizontal: Infinity, vertical: 1, unknownThreshold: 0, lexicalSmoothing: 0, maxUnaryChain: 8, beam: 0 });
/** Log-probabilities summed in different orders differ by rounding only. */
const TOL = 1e-9;

function train(c: Case): Grammar {
  const vocab = createVocabulary();
  const t = new PcfgTrainer(EXACT);
  for (const s of c.trees) t.add(parseTree(s, vocab));
  return t.finish();
}

/** Groups of a best-first list whose scores are tied within TOL. */
function tieGroups(list: [string, number][]): { score: number; trees: string[] }[] {
  const out: { score: number; trees: string[] }[] = [];
  for (const [tree, score] of list) {
    const last = out[out.length - 1];
    if (last && Math.abs(last.score - score) <= TOL) last.trees.push(tree);
    else out.push({ score, trees: [tree] });
  }
  return out;
}

/**
 * `ours` must be nltk's list cut at `ours.length`: the same scores in order,
 * the same tree sets within each tied group, a subset of the group where
 * the cut falls inside one.
 */
function expectPrefixOf(ours: ParseResult[], ref: [string, number][], what: string): void {
  for (let r = 0; r < ours.length; r++) expect(ours[r].score, `${what} rank ${r + 1}`).toBeCloseTo(ref[r][1], 9);
  const mine = tieGroups(ours.map((p) => [p.tree, p.score]));
  const theirs = tieGroups(ref);
  for (let gi = 0; gi < mine.length; gi++) {
    const a = [...mine[gi].trees].sort();
    const b = [...theirs[gi].trees].sort();
    if (gi < mine.length - 1 || a.length === b.length) expect(a, `${what} tie group ${gi + 1}`).toEqual(b);
    else for (const t of a) expect(b, `${what} last tie group`).toContain(t);
  }
}

describe(`k-best parsing against ${fixture.library} (ViterbiParser, ChartParser)`, () => {
  const small = fixture.cases.filter((c) => c.name.startsWith('small'));
  const large = fixture.cases.find((c) => c.name === 'large')!;

  it('has ambiguous sentences to check (dozens to hundreds of parses)', () => {
    const counts = small.flatMap((c) => c.sentences.map((s) => s.parses?.length ?? 0));
    expect(counts.filter((n) => n >= 50).length).toBeGreaterThanOrEqual(10);
    expect(Math.max(...counts)).toBeGreaterThanOrEqual(200);
    expect(counts.filter((n) => n === 0).length).toBeGreaterThanOrEqual(10);
  });

  it('finds every parse, in nltk\'s order and with its log-probability (k larger than the forest)', () => {
    let compared = 0;
    for (const c of small) {
      const parser = new KBestParser(train(c));
      for (const s of c.sentences) {
        if (s.parses === null) continue;
        const what = `${c.name}: ${s.words.join(' ')}`;
        const ours = parser.parse(s.words, s.parses.length + 10);
        expect(ours.length, what).toBe(s.parses.length);
        expectPrefixOf(ours, s.parses, what);
        compared += ours.length;
      }
    }
    expect(compared).toBeGreaterThan(1500);
  });

  it('gives nltk\'s top of the list for k = 1, 5, 10 and 50', () => {
    for (const c of small) {
      const parser = new KBestParser(train(c));
      for (const s of c.sentences) {
        if (s.parses === null || s.parses.length === 0) continue;
        for (const k of [1, 5, 10, 50]) {
          const ours = parser.parse(s.words, k);
          expect(ours.length).toBe(Math.min(k, s.parses.length));
          expectPrefixOf(ours, s.parses, `${c.name} k=${k}: ${s.words.join(' ')}`);
        }
      }
    }
  });

  it('agrees with ViterbiParser on the best log-probability, and on the tree where the best is unique', () => {
    let unique = 0;
    for (const c of [...small, large]) {
      const parser = new KBestParser(train(c));
      for (const s of c.sentences) {
        const what = `${c.name}: ${s.words.join(' ')}`;
        const ours = parser.parse(s.words, 2);
        if (s.viterbi === null) {
          expect(ours, what).toEqual([]);
          expect(parser.bestScore(s.words)).toBe(-Infinity);
          continue;
        }
        expect(ours[0].score, what).toBeCloseTo(s.viterbi[1], 9);
        expect(parser.bestScore(s.words), what).toBeCloseTo(s.viterbi[1], 9);
        // Unique best: nltk's own list says so, or (large case, not enumerated) our second is clearly worse.
        const isUnique = s.parses ? s.parses.length === 1 || s.parses[0][1] - s.parses[1][1] > TOL : ours.length === 1 || ours[0].score - ours[1].score > TOL;
        if (isUnique) {
          expect(ours[0].tree, what).toBe(s.viterbi[0]);
          unique++;
        }
      }
    }
    expect(unique).toBeGreaterThan(100);
  });

  it('returns an empty list where nltk finds no parse (word not covered, or no derivation)', () => {
    let empty = 0;
    for (const c of small) {
      const parser = new KBestParser(train(c));
      for (const s of c.sentences) {
        if (s.parses && s.parses.length === 0) {
          expect(parser.parse(s.words, 10), s.words.join(' ')).toEqual([]);
          empty++;
        }
      }
    }
    expect(empty).toBeGreaterThan(10);
  });

  it('writes trees that read back with the input words as their yield', () => {
    const vocab = createVocabulary();
    for (const c of small) {
      const parser = new KBestParser(train(c));
      for (const s of c.sentences) {
        for (const p of parser.parse(s.words, 20)) {
          const t = parseTree(p.tree, vocab);
          expect(yieldOf(t)).toEqual(s.words);
          expect(writeTree(t)).toBe(p.tree);
        }
      }
    }
  });
});
