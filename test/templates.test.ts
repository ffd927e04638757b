/**
 * Feature templates. The rules template is checked against an outside
 * reference (nltk's productions, python3-nltk, test/fixtures/nltk-trees.json);
 * the others are checked on small trees worked by hand from each template's
 * documented definition (src/features/templates/*).
 */
import { describe, expect, it } from 'vitest';
import { createVocabulary } from '../src/core/interner.js';
import { normaliseTree } from '../src/core/normalise.js';
import { parseTree } from '../src/core/read-brackets.js';
import { candidateView } from '../src/features/candidate-view.js';
import { checkOptions } from '../src/features/options.js';
import { TEMPLATES } from '../src/features/registry.js';
import type { ConfiguredTemplate } from '../src/features/template.js';
import { readFixture } from './helpers/fixtures.js';
import { RecordingSink } from './helpers/recording-sink.js';

function configure(id: string, options: Record<string, unknown> = {}, files: Record<string, string> = {}): ConfiguredTemplate {
  const t = TEMPLATES.get(id)!;
  return t.configure(checkOptions(options, t.options, id, []), { readText: (p) => files[p] });
}

function run(tpl: ConfiguredTemplate, text: string, opts: { normalise?: boolean; score?: number; rank?: number } = {}): RecordingSink {
  const vocab = createVocabulary();
  let tree = parseTree(text, vocab);
  if (opts.normalise ?? true) tree = normaliseTree(tree)!;
  const view = candidateView(tree, opts.score ?? 0, opts.rank ?? 0);
  const sink = new RecordingSink(20, 0);
  for (let i = 0; i < tree.size; i++) if (!tree.isWord[i]) tpl.node?.(view, i, sink);
  tpl.tree?.(view, sink);
  return sink;
}

const sorted = (xs: string[]) => [...xs].sort();

describe('rules.v1 against nltk productions (python3-nltk, Tree.productions)', () => {
  const fx = readFixture<{ trees: { text: string; productions: [string, (string | [string])[]][] }[] }>('nltk-trees.json');
  it('gives exactly nltk\'s non-lexical productions, with their counts, for every fixture tree', () => {
    const tpl = configure('rules.v1');
    for (const ref of fx.trees) {
      const want = ref.productions
        .filter(([, rhs]) => rhs.every((s) => typeof s === 'string'))
        .map(([lhs, rhs]) => `rules.v1 ${lhs} ${(rhs as string[]).join(' ')}`);
      expect(sorted(run(tpl, ref.text, { normalise: false }).emitted()), ref.text).toEqual(sorted(want));
    }
  });
});

describe('templates on hand-worked trees', () => {
  const porter = '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates))))';

  it('head-deps.v1 ww: one dependency per non-head child, heads by Collins (1999)', () => {
    expect(sorted(run(configure('head-deps.v1', { kinds: ['ww'] }), porter).emitted())).toEqual(sorted([
      'head-deps.v1 ww S VP NP L carried porter',
      'head-deps.v1 ww VP VBD NP R carried crates',
      'head-deps.v1 ww NP NN DT L porter the',
      'head-deps.v1 ww NP NNS CD L crates two',
    ]));
  });

  it('head-deps.v1 back-offs replace words by tags', () => {
    const keys = run(configure('head-deps.v1', { kinds: ['tt', 'wt', 'tw'] }), porter).emitted('head-deps.v1 ');
    expect(keys).toContain('head-deps.v1 tt VP VBD NP R VBD NNS');
    expect(keys).toContain('head-deps.v1 wt VP VBD NP R carried NNS');
    expect(keys).toContain('head-deps.v1 tw VP VBD NP R VBD crates');
    expect(keys).toHaveLength(12);
  });

  it('ancestors.v1: parent and grandparent annotations, fired at the ancestor', () => {
    const keys = run(configure('ancestors.v1'), porter).emitted();
    expect(sorted(keys)).toEqual(sorted([
      'ancestors.v1 p S NP DT NN',
      'ancestors.v1 p S VP VBD NP',
      'ancestors.v1 gp S VP NP CD NNS',
      'ancestors.v1 p VP NP CD NNS',
    ]));
  });

  it('head-rules.v1 marks the head child and lexicalises with head word and tag', () => {
    const keys = run(configure('head-rules.v1'), porter).emitted();
    expect(keys).toContain('head-rules.v1 w carried VP * VBD NP');
    expect(keys).toContain('head-rules.v1 t VBD VP * VBD NP');
    expect(keys).toContain('head-rules.v1 w carried S NP * VP');
    expect(keys).toHaveLength(8);
  });

  it('siblings.v1 n=2: padded bigrams by side of the head', () => {
    expect(run(configure('siblings.v1'), '(NP (DT the) (JJ old) (NN kettle))').emitted()).toEqual([
      'siblings.v1 NP L <s> DT', 'siblings.v1 NP L DT JJ', 'siblings.v1 NP H JJ * NN', 'siblings.v1 NP H * NN </s>',
    ]);
  });

  it('span-shape.v1: length buckets and position', () => {
    const keys = run(configure('span-shape.v1'), porter).emitted();
    expect(keys).toEqual([
      'span-shape.v1 len S 5-6', 'span-shape.v1 pos S 5-6 all',
      'span-shape.v1 len NP 2', 'span-shape.v1 pos NP 2 initial',
      'span-shape.v1 len VP 3', 'span-shape.v1 pos VP 3 final',
      'span-shape.v1 len NP 2', 'span-shape.v1 pos NP 2 final',
    ]);
  });

  it('boundary-words.v1: boundary words and tags, words outside the span', () => {
    const keys = run(configure('boundary-words.v1'), porter).emitted('boundary-words.v1 ');
    expect(sorted(keys.filter((k) => k.includes(' VP ')))).toEqual(sorted([
      'boundary-words.v1 first-word VP carried', 'boundary-words.v1 last-word VP crates',
      'boundary-words.v1 first-tag VP VBD', 'boundary-words.v1 last-tag VP NNS',
      'boundary-words.v1 word-before VP porter', 'boundary-words.v1 word-after VP </s>',
    ]));
    expect(keys).toContain('boundary-words.v1 word-before S <s>');
    expect(keys).toHaveLength(4 * 6);
    const tags = run(configure('boundary-words.v1', { parts: ['tag-before', 'tag-after'] }), porter).emitted();
    expect(sorted(tags.filter((k) => k.includes(' NP ')))).toEqual(sorted([
      'boundary-words.v1 tag-before NP <s>', 'boundary-words.v1 tag-after NP VBD',
      'boundary-words.v1 tag-before NP VBD', 'boundary-words.v1 tag-after NP </s>',
    ]));
  });

  it('branching.v1: right spine, depths and constituents per word as real values', () => {
    const log = run(configure('branching.v1'), '(S (NP (NN rope)) (VP (VBD froze) (ADVP (RB early))) (. .))').log;
    expect(log).toEqual([
      ['branching.v1 right-spine', 3],
      ['branching.v1 depth-max', 4],
      ['branching.v1 depth-mean', 3],
      ['branching.v1 nodes-per-word', 1],
    ]);
  });

  it('coordination.v1: parallel conjuncts', () => {
    const keys = run(configure('coordination.v1'), '(NP (NP (DT the) (NNS stoves)) (CC and) (NP (DT the) (NNS lamps)))').emitted();
    expect(keys).toEqual([
      'coordination.v1 label NP same', 'coordination.v1 kids NP same', 'coordination.v1 len NP 0',
      'coordination.v1 depth NP 0', 'coordination.v1 pair NP NP NP',
    ]);
    const uneven = run(configure('coordination.v1'), '(VP (VP (VBD mended) (NP (DT the) (JJ old) (NN stove))) (, ,) (CC and) (VP (VBD slept)))').emitted();
    expect(uneven).toEqual([
      'coordination.v1 label VP same', 'coordination.v1 kids VP diff', 'coordination.v1 len VP 3-4',
      'coordination.v1 depth VP 1', 'coordination.v1 pair VP VP VP',
    ]);
  });

  it('lexicon.v1: verb–object, preposition–object, attachment site classes', () => {
    const tpl = configure('lexicon.v1', { path: 'lex.tsv' }, { 'lex.tsv': '# demo\nstove\tappliance\nwire\tsupply\twire-ish\nwarden\tperson\n' });
    const keys = run(tpl, '(S (NP (DT the) (NN warden)) (VP (VBD mended) (NP (DT the) (NN stove)) (PP (IN with) (NP (NN wire)))))').emitted();
    expect(sorted(keys)).toEqual(sorted([
      'lexicon.v1 verb-obj mended appliance',
      'lexicon.v1 prep-obj with supply', 'lexicon.v1 prep-obj with wire-ish',
      'lexicon.v1 prep-site with ?',
      'lexicon.v1 attach ? with supply', 'lexicon.v1 attach ? with wire-ish',
    ]));
  });

  it('lexicon.v1 refuses a malformed lexicon line, naming it', () => {
    expect(() => configure('lexicon.v1', { path: 'lex.tsv' }, { 'lex.tsv': 'stove\tappliance\nrope\n' })).toThrow(/lex\.tsv:2: expected a word, a tab and at least one class tag/);
  });

  it('base-score.v1: log score as a real value and the rank bucket', () => {
    expect(run(configure('base-score.v1'), porter, { score: -41.25, rank: 3 }).log).toEqual([
      ['base-score.v1 score', -41.25],
      ['base-score.v1 rank 3-4', 1],
    ]);
  });

  it.each([...TEMPLATES.keys()])('%s: its documented example key fires on its documented example tree', (id) => {
    const t = TEMPLATES.get(id)!;
    expect(t.summary.length).toBeGreaterThan(10);
    expect(t.example.startsWith(`${id} `)).toBe(true);
    const opts = id === 'lexicon.v1' ? { path: 'l' } : {};
    // The lexicon example needs the demo lexicon's class of its object.
    const keys = run(configure(id, opts, { l: 'stove\tappliance\n' }), t.exampleTree).emitted();
    expect(keys).toContain(t.example);
  });
});
