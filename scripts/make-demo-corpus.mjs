#!/usr/bin/env node
// Writes the shipped demo corpus: invented supply and maintenance logs of a
// chain of mountain huts, as a gold treebank in the field's bracket notation
// (function tags, co-indices, empty elements, outer wrappers, indented lines)
// and a small word-class lexicon. Seeded: the same bytes every run.
//
//   node scripts/make-demo-corpus.mjs            # writes demo-corpus/
import { mkdirSync, writeFileSync } from 'node:fs';

const SEED = 7;
const SENTENCES = 1200;
let state = SEED;
function rand() {
  // mulberry32
  state = (state + 0x6d2b79f5) | 0;
  let t = Math.imul(state ^ (state >>> 15), 1 | state);
  t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
}
const pick = (xs) => xs[Math.floor(rand() * xs.length)];
const chance = (p) => rand() < p;

const leaf = (tag, word) => `(${tag} ${word})`;
const node = (label, ...kids) => `(${label} ${kids.join(' ')})`;

const SING = ['warden', 'porter', 'cook', 'guide', 'helper', 'carrier', 'crew'];
const NOUNS_SG = ['stove', 'rope', 'crate', 'ledger', 'kettle', 'lamp', 'sack', 'ladder', 'radio', 'bucket', 'tarp', 'shovel', 'axe', 'pump', 'boiler', 'bench'];
const NOUNS_PL = ['stoves', 'ropes', 'crates', 'ledgers', 'kettles', 'lamps', 'sacks', 'blankets', 'candles', 'batteries', 'boots', 'mattresses', 'pegs', 'tins'];
const MASS = ['oil', 'flour', 'salt', 'firewood', 'coal', 'water', 'kerosene', 'rice', 'tea', 'wire', 'soap'];
const PLACES = ['hut', 'ridge', 'pass', 'shed', 'store', 'cellar', 'loft', 'kitchen', 'saddle', 'camp'];
const ADJ = ['old', 'new', 'upper', 'lower', 'broken', 'spare', 'heavy', 'wet', 'empty', 'north', 'south'];
const VERBS = [
  ['carried', 'carry'], ['mended', 'mend'], ['checked', 'check'], ['logged', 'log'], ['stacked', 'stack'],
  ['cleaned', 'clean'], ['counted', 'count'], ['replaced', 'replace'], ['moved', 'move'], ['dried', 'dry'],
  ['sealed', 'seal'], ['hauled', 'haul'], ['stored', 'store'], ['tested', 'test'],
];
const INTRANS = ['froze', 'leaked', 'smoked', 'failed', 'rattled', 'cracked'];
const PREPS = ['to', 'from', 'in', 'on', 'near', 'behind', 'under', 'with', 'for'];
const NUMS = ['two', 'three', 'four', 'five', 'six', 'ten', 'twelve', '20', '35'];

function det() {
  return pick(['the', 'the', 'the', 'a', 'each', 'every', 'this']);
}
function simpleNp(kind = 'thing', tag = 'NP') {
  if (kind === 'person') {
    if (chance(0.3)) return node(tag, leaf('DT', 'the'), leaf('NNS', pick(['porters', 'wardens', 'guides', 'cooks'])));
    return chance(0.3)
      ? node(tag, leaf('DT', 'the'), leaf('JJ', pick(['night', 'day', 'head', 'new'])), leaf('NN', pick(SING)))
      : node(tag, leaf('DT', 'the'), leaf('NN', pick(SING)));
  }
  if (kind === 'place') {
    return chance(0.4)
      ? node(tag, leaf('DT', 'the'), leaf('JJ', pick(ADJ)), leaf('NN', pick(PLACES)))
      : node(tag, leaf('DT', 'the'), leaf('NN', pick(PLACES)));
  }
  const r = rand();
  if (r < 0.3) return node(tag, leaf('CD', pick(NUMS)), leaf('NNS', pick(NOUNS_PL)));
  if (r < 0.5) return node(tag, leaf('DT', 'the'), leaf('JJ', pick(ADJ)), leaf('NN', pick(NOUNS_SG)));
  if (r < 0.6) return node(tag, leaf('NN', pick(MASS)));
  if (r < 0.7) return node(tag, leaf('DT', 'the'), leaf('NNS', pick(NOUNS_PL)));
  return node(tag, leaf('DT', det()), leaf('NN', pick(NOUNS_SG)));
}
function objectNp(depth) {
  const r = rand();
  if (depth < 2 && r < 0.18) {
    // a quantity of a mass noun: three sacks of flour
    return node('NP', node('NP', leaf('CD', pick(NUMS)), leaf('NNS', pick(['sacks', 'crates', 'tins', 'cans', 'bundles']))),
      node('PP', leaf('IN', 'of'), node('NP', leaf('NN', pick(MASS)))));
  }
  if (depth < 2 && r < 0.32) {
    // coordination of two noun phrases
    const a = simpleNp();
    const b = simpleNp();
    return chance(0.3)
      ? node('NP', a, leaf(',', ','), simpleNp(), leaf('CC', 'and'), b)
      : node('NP', a, leaf('CC', pick(['and', 'and', 'or'])), b);
  }
  if (depth < 2 && r < 0.45) {
    // a noun phrase with a PP modifier (attachment ambiguity for the parser)
    return node('NP', simpleNp(), pp(depth + 1, 'PP'));
  }
  return simpleNp();
}
function pp(depth, tag = 'PP') {
  const p = pick(PREPS);
  const obj = p === 'with' || p === 'for' ? simpleNp() : simpleNp('place');
  return node(tag, leaf(p === 'to' ? 'TO' : 'IN', p), depth < 2 && chance(0.15) ? node('NP', obj, pp(depth + 1)) : obj);
}
function vp(depth) {
  const [past] = pick(VERBS);
  const kids = [leaf('VBD', past), objectNp(depth)];
  if (chance(0.45)) kids.push(pp(depth, pick(['PP-DIR', 'PP-LOC', 'PP'])));
  if (chance(0.1)) kids.push(node('ADVP-TMP', leaf('RB', pick(['today', 'again', 'early', 'twice']))));
  return node('VP', ...kids);
}
function clause(depth, subject = simpleNp('person', 'NP-SBJ')) {
  const r = rand();
  if (r < 0.12) {
    // passive with a trace: the ledger was signed *-1 by the warden
    const k = 1 + Math.floor(rand() * 3);
    return node('S', simpleNp('thing', `NP-SBJ-${k}`),
      node('VP', leaf('VBD', 'was'), node('VP', leaf('VBN', pick(['signed', 'checked', 'mended', 'stored', 'sealed'])),
        node('NP', leaf('-NONE-', `*-${k}`)),
        node('PP', leaf('IN', 'by'), simpleNp('person')))));
  }
  if (r < 0.25 && depth < 1) {
    // coordinated verb phrases
    return node('S', subject, node('VP', vp(depth + 1), leaf('CC', 'and'), vp(depth + 1)));
  }
  if (r < 0.33) {
    return node('S', node('NP-SBJ', leaf('DT', 'the'), leaf('NN', pick(NOUNS_SG))), node('VP', leaf('VBD', pick(INTRANS))));
  }
  return node('S', subject, vp(depth));
}
function sentence() {
  const r = rand();
  let s;
  if (r < 0.15) {
    const sub = clause(1);
    s = node('S', clause(0).slice(3, -1), leaf(',', ','), node('SBAR-PRP', leaf('IN', pick(['because', 'after', 'before', 'while'])), sub));
    s = `(S ${s.slice(3)}`;
  } else {
    s = clause(0);
  }
  return s.slice(0, -1) + ' (. .))';
}

/** Indents a one-line tree over several lines, as treebank files do. */
function layout(tree) {
  let out = '';
  let depth = 0;
  for (let i = 0; i < tree.length; i++) {
    const c = tree[i];
    if (c === '(' && depth > 0 && depth <= 2 && tree[i - 1] === ' ') out = out.slice(0, -1) + '\n' + '  '.repeat(depth + 1);
    if (c === '(') depth++;
    if (c === ')') depth--;
    out += c;
  }
  return `( ${out})`;
}

const trees = [];
for (let i = 0; i < SENTENCES; i++) trees.push(layout(sentence()));
mkdirSync('demo-corpus', { recursive: true });
writeFileSync('demo-corpus/huts.trees', trees.join('\n') + '\n');

const classes = [];
for (const w of [...NOUNS_SG, ...NOUNS_PL]) {
  const tags = [];
  if (/stove|kettle|lamp|radio|pump|boiler|batter|candle/.test(w)) tags.push('appliance');
  if (/rope|ladder|axe|shovel|peg|tarp|boot/.test(w)) tags.push('gear');
  if (/crate|sack|bucket|tin/.test(w)) tags.push('container');
  if (/ledger/.test(w)) tags.push('record');
  if (/blanket|mattress|bench/.test(w)) tags.push('furniture');
  if (tags.length === 0) tags.push('thing');
  classes.push([w, ...tags]);
}
for (const w of MASS) classes.push([w, 'supply', ...(/oil|coal|firewood|kerosene/.test(w) ? ['fuel'] : [])]);
for (const w of PLACES) classes.push([w, 'place']);
for (const w of SING) classes.push([w, 'person']);
writeFileSync('demo-corpus/lexicon.tsv',
  '# word\tclass ...   (invented demo lexicon: hut supplies, gear, places, people)\n' +
  classes.map((r) => r.join('\t')).join('\n') + '\n');
console.error(`wrote demo-corpus/huts.trees (${trees.length} trees) and demo-corpus/lexicon.tsv (${classes.length} words)`);
