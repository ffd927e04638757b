/**
 * The demo corpus (scripts/make-demo-corpus.mjs), checked from the trees with
 * sheaf's own reader, normaliser and head finder, not from the generator's
 * counters: sizes, lengths, lexicon coverage of `V NP PP` heads, a per-
 * preposition attachment split no rule probability can decide, and class
 * triples that do decide it. Set SHEAF_CORPUS_REPORT=1 to print the figures.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { headChildren, headWords } from '../src/core/find-heads.js';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree } from '../src/core/normalise.js';
import type { Tree } from '../src/core/tree.js';
import { parseLexicon } from '../src/features/templates/lexicon.js';
import { readTreebank } from '../src/io/read-treebank.js';

const root = fileURLToPath(new URL('..', import.meta.url));
const SIZES = { train: 4000, dev: 400, test: 400 } as const;
type Split = keyof typeof SIZES;
const report = process.env.SHEAF_CORPUS_REPORT ? (s: string) => console.log(s) : () => {};

/** One `V NP PP` case: heads, and where the PP hangs. */
interface Case {
  verb: string;
  noun: string;
  prep: string;
  pobj: string;
  site: 'VP' | 'NP';
}
interface Coord {
  label: string;
  parallel: boolean;
}
interface SplitData {
  words: string[][];
  bad: number;
  cases: Case[];
  coords: Coord[];
}

const label = (t: Tree, i: number) => t.vocab.labels.name(t.sym[i]);
const word = (t: Tree, i: number) => t.vocab.words.name(t.sym[i]).toLowerCase();
const kids = (t: Tree, i: number) => {
  const out: number[] = [];
  for (let c = i + 1; c < t.end[i]; c = t.end[c]) if (!t.isWord[c]) out.push(c);
  return out;
};
const childLabels = (t: Tree, i: number) => kids(t, i).map((c) => label(t, c)).join(' ');

/** `V NP PP` cases of a normalised tree: a PP after a verb's object, or an object `(NP (NP ...) (PP ...))`. */
function casesOf(t: Tree): Case[] {
  const hc = headChildren(t);
  const hw = headWords(t, hc);
  const ppParts = (pp: number) => {
    const [prep, obj] = kids(t, pp);
    return { prep: word(t, hw[prep]), pobj: obj === undefined ? '' : word(t, hw[obj]) };
  };
  const out: Case[] = [];
  for (let i = 0; i < t.size; i++) {
    if (t.isWord[i] || label(t, i) !== 'VP') continue;
    const ks = kids(t, i);
    const v = hc[i];
    const at = ks.indexOf(v);
    if (!label(t, v).startsWith('VB') || label(t, ks[at + 1] ?? v) !== 'NP') continue;
    const obj = ks[at + 1];
    const verb = word(t, hw[v]);
    const noun = word(t, hw[obj]);
    for (const k of ks.slice(at + 2)) if (label(t, k) === 'PP') out.push({ verb, noun, ...ppParts(k), site: 'VP' });
    const ok = kids(t, obj);
    if (ok.length === 2 && label(t, ok[0]) === 'NP' && label(t, ok[1]) === 'PP') out.push({ verb, noun, ...ppParts(ok[1]), site: 'NP' });
  }
  return out;
}

/** Coordinations: adjacent conjuncts with the same label and the same child labels count as parallel. */
function coordsOf(t: Tree): Coord[] {
  const out: Coord[] = [];
  for (let i = 0; i < t.size; i++) {
    if (t.isWord[i]) continue;
    const ks = kids(t, i);
    if (!ks.some((k) => label(t, k) === 'CC')) continue;
    const conj = ks.filter((k) => !['CC', ',', '.'].includes(label(t, k)));
    for (let k = 0; k + 1 < conj.length; k++) {
      const [a, b] = [conj[k], conj[k + 1]];
      if (t.end[a] === a + 2 && t.end[b] === b + 2) continue; // bare words (`NNS CC NNS`)
      out.push({ label: label(t, i), parallel: label(t, a) === label(t, b) && childLabels(t, a) === childLabels(t, b) });
    }
  }
  return out;
}

async function load(dir: string, split: Split): Promise<SplitData> {
  const vocab = createVocabulary();
  const data: SplitData = { words: [], bad: 0, cases: [], coords: [] };
  for await (const rec of readTreebank(join(dir, `huts-${split}.trees`), { vocab, onBad: () => data.bad++ })) {
    const t = normaliseTree(rec.tree)!;
    data.words.push(Array.from(t.wordNodes, (w) => t.vocab.words.name(t.sym[w])));
    data.cases.push(...casesOf(t));
    data.coords.push(...coordsOf(t));
  }
  return data;
}

const share = (xs: Case[]) => xs.filter((c) => c.site === 'VP').length / xs.length;
const pct = (x: number) => `${(100 * x).toFixed(1)} %`;

const dir = join(root, 'demo-corpus');
let lexicon: Map<string, string[]>;
const data = {} as Record<Split, SplitData>;
const cls = (w: string) => lexicon.get(w)?.[0] ?? '?';
const triple = (c: Case) => `${c.prep} ${cls(c.verb)} ${cls(c.noun)} ${cls(c.pobj)}`;

beforeAll(async () => {
  lexicon = parseLexicon(readFileSync(join(dir, 'lexicon.tsv'), 'utf8'), 'lexicon.tsv');
  for (const s of Object.keys(SIZES) as Split[]) data[s] = await load(dir, s);
});

describe('demo corpus', () => {
  it('the generator writes the committed files, byte for byte', () => {
    const work = mkdtempSync(join(tmpdir(), 'sheaf-corpus-'));
    try {
      execFileSync(process.execPath, [join(root, 'scripts/make-demo-corpus.mjs')], { cwd: work, stdio: 'pipe' });
      for (const f of ['huts-train.trees', 'huts-dev.trees', 'huts-test.trees', 'lexicon.tsv']) {
        expect(readFileSync(join(work, 'demo-corpus', f)).equals(readFileSync(join(dir, f))), f).toBe(true);
      }
    } finally {
      rmSync(work, { recursive: true, force: true });
    }
  });

  it('reads without errors: the expected counts, 8–30 words each, no sentence in two splits', () => {
    const seen = new Set<string>();
    const hist = new Map<number, number>();
    for (const s of Object.keys(SIZES) as Split[]) {
      expect(data[s].bad, s).toBe(0);
      expect(data[s].words.length, s).toBe(SIZES[s]);
      for (const w of data[s].words) {
        expect(w.length).toBeGreaterThanOrEqual(8);
        expect(w.length).toBeLessThanOrEqual(30);
        const key = w.join(' ');
        expect(seen.has(key), key).toBe(false);
        seen.add(key);
        hist.set(w.length, (hist.get(w.length) ?? 0) + 1);
      }
    }
    report('length histogram (words incl. punctuation: sentences, all splits)');
    for (let n = 8; n <= 30; n++) report(`  ${String(n).padStart(2)} ${String(hist.get(n) ?? 0).padStart(5)}`);
  });

  it('lists every verb, object noun and PP object of a `V NP PP` in the lexicon', () => {
    for (const s of Object.keys(SIZES) as Split[]) {
      expect(data[s].cases.length).toBeGreaterThan(SIZES[s] / 4);
      for (const c of data[s].cases) for (const w of [c.verb, c.noun, c.pobj]) expect(lexicon.has(w), `${w} (${s})`).toBe(true);
    }
  });

  it('attaches each preposition to the verb 35–65 % of the time, in every split', () => {
    for (const s of Object.keys(SIZES) as Split[]) {
      const preps = [...new Set(data[s].cases.map((c) => c.prep))].sort();
      report(`${s}: VP attachment per preposition (cases)`);
      for (const p of preps) {
        const xs = data[s].cases.filter((c) => c.prep === p);
        report(`  ${p.padEnd(6)} ${pct(share(xs)).padStart(7)} of ${xs.length}`);
        expect(share(xs), `${p} in ${s}`).toBeGreaterThanOrEqual(0.35);
        expect(share(xs), `${p} in ${s}`).toBeLessThanOrEqual(0.65);
      }
    }
  });

  it('the classes decide: cases follow the majority of their (prep, verb, noun, object) class tuple', () => {
    const train = data.train.cases;
    const held = [...data.dev.cases, ...data.test.cases];
    /** Share of `test` predicted by the majority side per key, learned on `learn` (unseen keys: wrong). */
    const accuracy = (key: (c: Case) => string, learn: Case[], test: Case[]) => {
      const votes = new Map<string, number>();
      for (const c of learn) votes.set(key(c), (votes.get(key(c)) ?? 0) + (c.site === 'VP' ? 1 : -1));
      return test.filter((c) => {
        const v = votes.get(key(c)) ?? 0;
        return v !== 0 && (v > 0) === (c.site === 'VP');
      }).length / test.length;
    };
    const keys: [string, (c: Case) => string][] = [
      ['preposition only', (c) => c.prep],
      ['prep + verb class', (c) => `${c.prep} ${cls(c.verb)}`],
      ['prep + noun class', (c) => `${c.prep} ${cls(c.noun)}`],
      ['prep + object class', (c) => `${c.prep} ${cls(c.pobj)}`],
      ['prep + verb + noun class', (c) => `${c.prep} ${cls(c.verb)} ${cls(c.noun)}`],
      ['prep + all three classes', triple],
    ];
    report(`majority-side accuracy over ${train.length} train cases (in-sample) and ${held.length} dev+test cases (learned on train)`);
    for (const [name, key] of keys) report(`  ${name.padEnd(26)} train ${pct(accuracy(key, train, train)).padStart(7)}   held-out ${pct(accuracy(key, train, held)).padStart(7)}`);
    const tuples = new Set(train.map(triple));
    report(`  distinct class tuples in train: ${tuples.size}`);
    expect(accuracy(triple, train, train)).toBeGreaterThanOrEqual(0.85);
    expect(accuracy(triple, train, held)).toBeGreaterThanOrEqual(0.85);
    expect(accuracy((c) => c.prep, train, held)).toBeLessThan(0.65);
  });

  it('coordinations are mostly parallel', () => {
    const cs = Object.values(data).flatMap((d) => d.coords);
    const byLabel = new Map<string, Coord[]>();
    for (const c of cs) byLabel.set(c.label, [...(byLabel.get(c.label) ?? []), c]);
    report('parallel adjacent conjuncts (same label, same child labels)');
    for (const [l, xs] of [...byLabel].sort()) report(`  ${l.padEnd(4)} ${pct(xs.filter((c) => c.parallel).length / xs.length).padStart(7)} of ${xs.length}`);
    const parallel = cs.filter((c) => c.parallel).length / cs.length;
    expect(parallel).toBeGreaterThan(0.7);
    expect(parallel).toBeLessThan(0.97);
  });

  it('the test split has words training never saw, but mostly familiar ones', () => {
    const known = new Set(data.train.words.flat().map((w) => w.toLowerCase()));
    const tokens = data.test.words.flat();
    const unseen = tokens.filter((w) => !known.has(w.toLowerCase()));
    const freq = new Map<string, number>();
    for (const w of data.train.words.flat()) freq.set(w.toLowerCase(), (freq.get(w.toLowerCase()) ?? 0) + 1);
    const rare = tokens.filter((w) => (freq.get(w.toLowerCase()) ?? 0) <= 3);
    report(`test tokens unseen in train: ${unseen.length} of ${tokens.length} (${pct(unseen.length / tokens.length)}), ${new Set(unseen).size} types: ${[...new Set(unseen)].sort().join(' ')}`);
    report(`test tokens seen at most 3 times in train: ${rare.length} (${pct(rare.length / tokens.length)}); train types ${freq.size}, of them seen once ${[...freq.values()].filter((n) => n === 1).length}`);
    expect(unseen.length).toBeGreaterThan(0);
    expect(unseen.length / tokens.length).toBeLessThan(0.03);
  });
});
