#!/usr/bin/env node
// Writes the demo corpus: invented supply and maintenance logs of a chain of
// mountain huts, as gold treebanks in the field's bracket notation, plus the
// word-class lexicon the `lexicon.v1` template reads. Seeded: the same bytes
// on every run. No dependencies beyond Node.
//
//   node scripts/make-demo-corpus.mjs   # writes demo-corpus/huts-{train,dev,test}.trees and lexicon.tsv
//
// THE GRAMMAR (hand-written for this demo; not tuned to any re-ranking result)
//
// Sizes: train 4,000, dev 400, test 400 sentences, drawn in that order from
// one seeded stream. A draw outside 8-30 words (punctuation included), or
// identical to an earlier sentence of any split, is drawn again, so the
// splits share no sentence. Words of a class are picked Zipf-like (weight
// 1/rank); each class also has a tail of rare words (RARE_WORDS of the picks,
// spread evenly over the tail), and a quarter of the numbers are digits, so
// the test files hold words training saw rarely or never. Every verb and
// noun is in the lexicon, rare or not.
//
// Classes (the lexicon gives every verb form and noun exactly one class):
//   verbs  motion, repair, record, storage, clearing
//   nouns  container, appliance, gear, part, tool, supply, waste, document,
//          place, person, time
// Verbs select the classes of their objects (OBJECTS below).
//
// PP attachment: the classes decide, which a PCFG cannot see. Every `V NP PP`
// in the corpus comes from one sampler. AFFINITY gives, per preposition and
// class of the PP's object, an affinity to each site class (verb classes and
// noun classes; unlisted = 0). For a verb of class v, an object noun of class
// n and a PP object of class o, the PP attaches to the VP when aff(v) > aff(n),
// else to the object, as `(NP (NP ...) (PP ...))` (ties go to the noun);
// triples where both are 0 are never drawn. The sampler picks a preposition
// uniformly, then a side (VP or NP) with odds leaning to the side this file
// has drawn less for that preposition (so each preposition is near 50/50 in
// every file), then a class triple uniformly among those whose rule gives that
// side, then words. With probability NOISE_ATTACH (7 %) the PP then goes to
// the other side.
//
// Coordination: NPs, VPs and sentences are coordinated, mostly in parallel.
// Structural choices are drawn into a "shape" record; the second conjunct
// replays the first's shape (same template: same label, child labels and
// similar length, fresh words) with probability 1 - NOISE_COORD (85 %), and
// otherwise draws a shape of its own. Ambiguities a PCFG cannot settle: `the
// crates of flour and sacks of salt` (the second conjunct may lack its
// determiner; the bracketing is always the parallel one), `V NP and NP` vs
// coordinated sentences, and a PP after two coordinated subject NPs, which
// scopes over both when the conjuncts' heads share a class and over the last
// conjunct only when they do not.
//
// Elsewhere PPs stand sentence-initially, after intransitive verbs, inside
// subjects, in passives and in relative clauses; none follows a direct
// object, so none is a `V NP PP`. Also: subordinate clauses (SBAR-TMP, -PRP,
// -ADV), relative clauses with co-indexed `*T*` traces, passives with `*`
// traces, purpose clauses with empty subjects, modals with base verbs,
// adverbs, pronouns, numbers, adjectives, capitalised first words.
import { mkdirSync, writeFileSync } from 'node:fs';

const SEED = 20240611;
const SPLITS = [['train', 4000], ['dev', 400], ['test', 400]];
const MIN_WORDS = 8;
const MAX_WORDS = 30;
const NOISE_ATTACH = 0.07;
const NOISE_COORD = 0.15;
const RARE_WORDS = 0.01;
const DIGIT_NUMBERS = 0.25;

let state = SEED;
function rand() {
  // mulberry32
  state = (state + 0x6d2b79f5) | 0;
  let t = Math.imul(state ^ (state >>> 15), 1 | state);
  t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
}
const chance = (p) => rand() < p;
const pick = (xs) => xs[Math.floor(rand() * xs.length)];
const zipfCache = new Map();
/** Zipf-like pick (weight 1/rank): early entries are common, late ones less so. */
function pickZ(xs) {
  let cum = zipfCache.get(xs);
  if (!cum) {
    cum = [];
    let s = 0;
    for (let i = 0; i < xs.length; i++) cum.push((s += 1 / (i + 1)));
    zipfCache.set(xs, cum);
  }
  const r = rand() * cum[cum.length - 1];
  let i = 0;
  while (cum[i] <= r) i++;
  return xs[i];
}
/** Picks a key of `weights` ({key: weight}) by weight. */
function choose(weights) {
  const keys = Object.keys(weights);
  let r = rand() * keys.reduce((s, k) => s + weights[k], 0);
  for (const k of keys) if ((r -= weights[k]) < 0) return k;
  return keys[keys.length - 1];
}
/** A structural choice, drawn once per shape record and replayed by a parallel conjunct. */
function shaped(sh, key, draw) {
  if (!(key in sh)) sh[key] = draw();
  return sh[key];
}

// ---------------------------------------------------------------- words
// "common ... | rare ...": forms joined by `/` (verbs past/base, nouns
// singular/plural; a mass noun has one form).
function wordList(text) {
  const [common, rare = ''] = text.split('|');
  const forms = (s) => s.trim().split(/\s+/).filter(Boolean).map((w) => w.split('/'));
  return { common: forms(common), rare: forms(rare) };
}
const VERBS = {
  motion: 'carried/carry hauled/haul moved/move dragged/drag lowered/lower hoisted/hoist shifted/shift lifted/lift ferried/ferry wheeled/wheel | sledged/sledge winched/winch lugged/lug trundled/trundle toted/tote carted/cart',
  repair: 'mended/mend fixed/fix patched/patch repaired/repair tightened/tighten greased/grease welded/weld rewired/rewire | riveted/rivet caulked/caulk darned/darn splinted/splint sealed/seal shimmed/shim',
  record: 'logged/log counted/count checked/check weighed/weigh inspected/inspect tallied/tally recorded/record measured/measure | labelled/label numbered/number audited/audit itemised/itemise catalogued/catalogue ticked/tick',
  storage: 'stored/store stacked/stack packed/pack stowed/stow piled/pile loaded/load locked/lock wrapped/wrap | shelved/shelve bundled/bundle hoarded/hoard racked/rack stockpiled/stockpile cached/cache',
  clearing: 'cleared/clear emptied/empty drained/drain scraped/scrape swept/sweep rinsed/rinse scrubbed/scrub stripped/strip | flushed/flush mopped/mop hosed/hose descaled/descale dredged/dredge sluiced/sluice',
};
const NOUNS = {
  container: 'crate/crates sack/sacks barrel/barrels tin/tins bucket/buckets basket/baskets drum/drums box/boxes jar/jars chest/chests | hamper/hampers canister/canisters jerrycan/jerrycans pannier/panniers keg/kegs tub/tubs firkin/firkins pail/pails crock/crocks',
  appliance: 'stove/stoves lamp/lamps kettle/kettles radio/radios pump/pumps boiler/boilers heater/heaters lantern/lanterns generator/generators oven/ovens | cooker/cookers dynamo/dynamos brazier/braziers griddle/griddles urn/urns percolator/percolators hotplate/hotplates grill/grills',
  gear: 'rope/ropes ladder/ladders tarp/tarps sled/sleds stretcher/stretchers harness/harnesses tent/tents blanket/blankets mattress/mattresses peg/pegs | snowshoe/snowshoes karabiner/karabiners crampon/crampons toboggan/toboggans hammock/hammocks gaiter/gaiters rucksack/rucksacks groundsheet/groundsheets',
  part: 'valve/valves wick/wicks hinge/hinges lid/lids handle/handles strap/straps buckle/buckles gasket/gaskets nozzle/nozzles | spring/springs flue/flues grommet/grommets sprocket/sprockets ferrule/ferrules damper/dampers bracket/brackets pulley/pulleys',
  tool: 'hammer/hammers wire wrench/wrenches tape saw/saws brush/brushes glue chisel/chisels drill/drills twine | rasp/rasps awl/awls mallet/mallets trowel/trowels crowbar/crowbars spanner/spanners gimlet/gimlets solder',
  supply: 'flour salt kerosene rice tea coal firewood oil sugar oats soap cheese coffee | barley paraffin tallow lard semolina treacle suet cornmeal molasses pemmican',
  waste: 'snow ice soot ash mud rust grit dust | slush mould sludge lichen grime frost silt',
  document: 'ledger/ledgers logbook/logbooks list/lists inventory/inventories docket/dockets chart/charts register/registers map/maps letter/letters notebook/notebooks receipt/receipts | roster/rosters manifest/manifests waybill/waybills chit/chits almanac/almanacs invoice/invoices memo/memos timetable/timetables',
  place: 'hut/huts ridge/ridges pass/passes shed/sheds cellar/cellars loft/lofts kitchen/kitchens saddle/saddles camp/camps storeroom/storerooms depot/depots landing/landings gully/gullies porch/porches yard/yards | col/cols moraine/moraines cairn/cairns larder/larders annexe/annexes bivouac/bivouacs hollow/hollows washhouse/washhouses',
  person: 'warden/wardens porter/porters cook/cooks guide/guides helper/helpers carrier/carriers mechanic/mechanics apprentice/apprentices keeper/keepers runner/runners medic/medics | stoker/stokers muleteer/muleteers farrier/farriers cobbler/cobblers steward/stewards quartermaster/quartermasters watchman/watchmen tinker/tinkers',
  time: 'morning/mornings evening/evenings storm/storms thaw/thaws winter/winters week/weeks night/nights season/seasons | blizzard/blizzards gale/gales fortnight/fortnights equinox/equinoxes solstice/solstices downpour/downpours squall/squalls',
};
for (const t of [VERBS, NOUNS]) for (const c of Object.keys(t)) t[c] = wordList(t[c]);
const BARE_TIMES = wordList('dawn dusk noon night midnight | daybreak nightfall');
const ADJ = {
  thing: wordList('old new spare heavy broken full wet dry small large rusty clean | dented frayed battered'),
  place: wordList('upper lower north south old new east west high main back cold | windy misty'),
  person: wordList('new head night young old | senior weary'),
  mass: wordList('dry fresh spare | coarse damp'),
};
const NUMS = wordList('two three four five six ten twelve eight seven twenty forty | eleven thirty');
const DET_SG = ['the', 'the', 'the', 'a', 'each', 'every', 'this'];
const DET_PL = ['the', 'the', 'the', 'these', 'some', 'all'];
const INTRANS_THING = wordList('failed leaked froze cracked rattled smoked broke burst jammed rusted | sagged buckled');
// Person intransitives: verbs of going take a PP-DIR, verbs of staying a PP-LOC.
const GOING = wordList('walked returned climbed descended trudged hiked | scrambled plodded');
const STAYING = wordList('waited slept rested stayed worked sheltered | dozed lingered');
const ADV_TMP = wordList('again early late twice already finally later | yesterday');
const ADV_MNR = wordList('carefully quickly slowly properly quietly | gingerly');
const MODALS = wordList('could would should must might');
const THINGS = ['appliance', 'gear', 'container', 'part'];

/** A word (or form list) of a class: mostly common words, Zipf-like; sometimes a rare one. */
function word(list) {
  return list.rare.length > 0 && chance(RARE_WORDS) ? pick(list.rare) : pickZ(list.common);
}
const w1 = (list) => word(list)[0];
function number() {
  return chance(DIGIT_NUMBERS) ? String(2 + Math.floor(rand() * 300)) : w1(NUMS);
}

// Object classes each verb class takes.
const OBJECTS = {
  motion: ['container', 'appliance', 'gear', 'part', 'tool', 'supply', 'document'],
  repair: ['appliance', 'gear', 'container', 'part'],
  record: ['container', 'appliance', 'gear', 'part', 'tool', 'supply', 'document', 'person'],
  storage: ['container', 'appliance', 'gear', 'part', 'tool', 'supply', 'document'],
  clearing: ['container', 'appliance', 'place', 'part'],
};

// Attachment affinities: preposition -> PP-object class -> "verb sites | noun sites".
const AFFINITY = {
  to: {
    place: 'motion 3, storage 1 | gear 2, document 2, place 2, part 1',
    person: 'motion 3 | document 2, supply 1, container 1',
  },
  from: {
    place: 'motion 3, clearing 1, record 1 | container 2, supply 2, document 2, person 2, appliance 1',
    person: 'motion 2, record 2 | document 3, supply 2',
  },
  in: {
    place: 'storage 3, clearing 2, repair 1 | appliance 2, container 2, gear 2, supply 2, tool 2, document 1, person 2',
    container: 'storage 3, motion 2 | supply 2, part 2, tool 2, gear 1',
    document: 'record 3 | document 2',
  },
  on: {
    place: 'storage 3, motion 1 | appliance 2, gear 2, container 1, person 2',
    appliance: 'storage 2, repair 1 | part 3, container 1',
    gear: 'storage 2 | part 3, tool 1',
  },
  with: {
    part: 'repair 3 | appliance 2, gear 2, container 1',
    tool: 'repair 3, clearing 3, motion 1 | container 1, gear 1',
    supply: 'motion 2, clearing 2 | container 3',
  },
  for: {
    person: 'motion 2 | supply 3, document 2, container 2, appliance 1',
    time: 'storage 3, repair 1 | supply 2, document 1',
    appliance: 'motion 2, storage 2 | part 3, supply 3, tool 2',
  },
  of: {
    supply: '| container 3',
    waste: 'clearing 3 | container 2',
  },
  near: {
    place: 'storage 2 | person 2, appliance 1',
    appliance: 'storage 3 | supply 2, container 2, gear 2',
  },
  under: {
    gear: 'storage 3 | container 2, supply 2, appliance 2, tool 1',
    place: 'storage 2, clearing 2 | gear 1, container 1',
  },
};
// Function tag of a VP-attached PP (an NP-attached one carries none).
const VP_PP_TAG = { to: 'PP-DIR', from: 'PP-DIR', in: 'PP-LOC', on: 'PP-LOC', near: 'PP-LOC', under: 'PP-LOC', with: 'PP', for: 'PP-PRP', of: 'PP-CLR' };

const VERB_CLASSES = Object.keys(VERBS);
function parseSites(spec) {
  const out = {};
  for (const item of spec.split(/[|,]/)) {
    const [c, a] = item.trim().split(/\s+/);
    if (c) out[c] = Number(a);
  }
  return out;
}
/** prep -> { VP: [triples], NP: [triples] }, a triple being [verbClass, nounClass, objClass]. */
const FRAMES = {};
for (const [prep, byObj] of Object.entries(AFFINITY)) {
  const f = (FRAMES[prep] = { VP: [], NP: [] });
  for (const [oc, spec] of Object.entries(byObj)) {
    const aff = parseSites(spec);
    for (const vc of VERB_CLASSES) {
      for (const nc of OBJECTS[vc]) {
        const av = aff[vc] ?? 0;
        const an = aff[nc] ?? 0;
        if (av > 0 || an > 0) f[av > an ? 'VP' : 'NP'].push([vc, nc, oc]);
      }
    }
  }
  if (f.VP.length === 0 || f.NP.length === 0) throw new Error(`grammar: \`${prep}\` needs class triples for both sites`);
}
const PREPS = Object.keys(FRAMES);

// ---------------------------------------------------------------- trees
const leaf = (tag, w) => `(${tag} ${w})`;
const node = (label, ...kids) => `(${label} ${kids.filter(Boolean).join(' ')})`;
const relabel = (np, label) => `(${label}${np.slice(np.indexOf(' '))}`;
const prepLeaf = (p) => leaf(p === 'to' ? 'TO' : 'IN', p);

/** Per sentence: the next co-index. Per file: attachment sides drawn, per preposition. */
let coindex = 1;
let tally = {};

const onlyMass = new Map();
/** The class's nouns, kept to mass (or count) nouns when the class has some. */
function nounsOf(cls, mass) {
  const key = `${cls} ${mass}`;
  if (!onlyMass.has(key)) {
    const keep = (xs) => xs.filter((f) => (f.length === 1) === mass);
    const l = { common: keep(NOUNS[cls].common), rare: keep(NOUNS[cls].rare) };
    onlyMass.set(key, l.common.length > 0 ? l : NOUNS[cls]);
  }
  return onlyMass.get(key);
}
const COUNT_SHAPES = ['det', 'det', 'det-adj', 'det-adj-pl', 'num', 'pl', 'adj'];
const adjsOf = (cls) => (cls === 'place' ? ADJ.place : cls === 'person' ? ADJ.person : ADJ.thing);

/** A noun phrase headed by a noun of `cls`, in the record's shape (DT NN, DT JJ NNS, CD NNS ...). */
function nounNp(cls, sh = {}, label = 'NP') {
  const mass = shaped(sh, 'mass', () => chance(0.5));
  const [sg, pl] = word(nounsOf(cls, mass));
  const shape = shaped(sh, 'shape', () => pick(COUNT_SHAPES));
  if (!pl) {
    if (shape === 'adj') return node(label, leaf('JJ', w1(ADJ.mass)), leaf('NN', sg));
    if (shape.startsWith('det-adj')) return node(label, leaf('DT', 'the'), leaf('JJ', w1(ADJ.mass)), leaf('NN', sg));
    if (shape === 'bare' || shape === 'num') return node(label, leaf('NN', sg));
    return node(label, leaf('DT', pick(['the', 'the', 'some'])), leaf('NN', sg));
  }
  switch (shape) {
    case 'num': return node(label, leaf('CD', number()), leaf('NNS', pl));
    case 'det-adj': return node(label, leaf('DT', 'the'), leaf('JJ', w1(adjsOf(cls))), leaf('NN', sg));
    case 'det-adj-pl': return node(label, leaf('DT', 'the'), leaf('JJ', w1(adjsOf(cls))), leaf('NNS', pl));
    case 'adj': return node(label, leaf('JJ', w1(adjsOf(cls))), leaf('NNS', pl));
    case 'bare': return node(label, leaf('NNS', pl));
    case 'pl': return node(label, leaf('DT', pick(DET_PL)), leaf('NNS', pl));
    default: return node(label, leaf('DT', pick(DET_SG)), leaf('NN', sg));
  }
}
/** Places, persons and times: `the` (and an adjective, a third of the time). */
function theNp(cls, sh = {}, label = 'NP') {
  const [sg] = word(NOUNS[cls]);
  if (cls !== 'time' && shaped(sh, 'adj', () => chance(0.35))) return node(label, leaf('DT', 'the'), leaf('JJ', w1(adjsOf(cls))), leaf('NN', sg));
  return node(label, leaf('DT', 'the'), leaf('NN', sg));
}
/** The object of a PP whose object has class `cls`. */
function ppObjectNp(cls) {
  if (cls === 'place' || cls === 'time') return theNp(cls);
  if (cls === 'person') return chance(0.25) ? nounNp('person', { shape: 'pl' }) : theNp('person');
  if (cls === 'supply' || cls === 'waste') return nounNp(cls, { shape: chance(0.2) ? 'adj' : 'bare' });
  if (cls === 'tool') return nounNp('tool', { shape: pick(['det', 'det', 'det-adj', 'bare']) });
  return nounNp(cls, { shape: pick(['det', 'det', 'det-adj', 'pl']), mass: false });
}
/** A direct object of class `cls`. */
const objectNp = (cls, sh) => (cls === 'place' || cls === 'person' ? theNp(cls, sh) : nounNp(cls, sh));
function adverb(sh = {}, manner = true) {
  return manner && shaped(sh, 'manner', () => chance(0.4))
    ? node('ADVP-MNR', leaf('RB', w1(ADV_MNR)))
    : node('ADVP-TMP', leaf('RB', w1(ADV_TMP)));
}

/** The one source of `V NP PP`: a verb, its object and a PP on the side the classes choose. */
function attachmentVp(form, sh = {}) {
  const prep = pick(PREPS);
  const t = (tally[prep] ??= { VP: 0, NP: 0 });
  // A parallel conjunct keeps the first one's side; the odds lean to the side drawn less.
  const side = shaped(sh, 'side', () => (chance(Math.min(0.9, Math.max(0.1, 0.5 - 0.1 * (t.VP - t.NP)))) ? 'VP' : 'NP'));
  t[side]++;
  const [vc, nc, oc] = pick(FRAMES[prep][side]);
  const attach = chance(NOISE_ATTACH) ? (side === 'VP' ? 'NP' : 'VP') : side;
  const [past, base] = word(VERBS[vc]);
  const verb = form === 'base' ? leaf('VB', base) : leaf('VBD', past);
  const obj = objectNp(nc, (sh.obj ??= {}));
  const pp = (label) => node(label, prepLeaf(prep), ppObjectNp(oc));
  const adv = shaped(sh, 'adv', () => chance(0.08)) ? adverb((sh.advp ??= {})) : '';
  const tag = prep === 'for' && oc === 'time' ? 'PP-TMP' : VP_PP_TAG[prep];
  if (attach === 'VP') return node('VP', verb, obj, pp(tag), adv);
  return node('VP', verb, node('NP', obj, pp('PP')), adv);
}

/** A verb class and an object class (not a place or person) it takes. */
function transitive() {
  const vc = pick(VERB_CLASSES);
  return [vc, pick(OBJECTS[vc].filter((c) => c !== 'place' && c !== 'person'))];
}

/** `the crates of flour`, or `sacks of salt` without a determiner. */
function quantityOf(bare) {
  const [, pl] = word(NOUNS.container);
  const head = bare ? node('NP', leaf('NNS', pl)) : chance(0.5) ? node('NP', leaf('CD', number()), leaf('NNS', pl)) : node('NP', leaf('DT', 'the'), leaf('NNS', pl));
  return node('NP', head, node('PP', leaf('IN', 'of'), node('NP', leaf('NN', w1(NOUNS.supply)))));
}

/** A coordinated object: conjuncts in one shape (85 %), sometimes three with commas. */
function coordinatedNp(cls, sh) {
  if (shaped(sh, 'of', () => cls === 'supply' || chance(0.25))) {
    // the crates of flour and (the) sacks of salt
    const second = chance(NOISE_COORD) ? nounNp(pick(THINGS)) : quantityOf(chance(0.5));
    return node('NP', quantityOf(false), leaf('CC', 'and'), second);
  }
  const first = sh.conj ?? {};
  sh.conj = first;
  const other = () => (chance(NOISE_COORD) ? {} : first);
  const cc = leaf('CC', pick(['and', 'and', 'and', 'or']));
  const a = nounNp(cls, first);
  if (shaped(sh, 'three', () => chance(0.2))) return node('NP', a, leaf(',', ','), nounNp(cls, other()), leaf(',', ','), cc, nounNp(cls, other()));
  return node('NP', a, cc, nounNp(cls, other()));
}

/** A relative clause on `np`: an object gap (`that the cook mended *T*`) or a subject gap. */
function relative(np, cls, sh = {}) {
  const k = coindex++;
  if (cls !== 'person') {
    const vc = pick(VERB_CLASSES.filter((v) => OBJECTS[v].includes(cls)));
    const where = shaped(sh, 'where', () => chance(0.3)) ? node('PP-LOC', leaf('IN', pick(['in', 'near', 'behind'])), theNp('place')) : '';
    return node('NP', np, node('SBAR', node(`WHNP-${k}`, leaf('WDT', pick(['that', 'which']))),
      node('S', personSubject(false), node('VP', leaf('VBD', w1(VERBS[vc])), node('NP', leaf('-NONE-', `*T*-${k}`)), where))));
  }
  const [vc, oc] = transitive();
  return node('NP', np, node('SBAR', node(`WHNP-${k}`, leaf('WP', 'who')),
    node('S', node('NP-SBJ', leaf('-NONE-', `*T*-${k}`)), node('VP', leaf('VBD', w1(VERBS[vc])), nounNp(oc)))));
}

/** `V NP` and no PP: a plain, coordinated or relativised object, perhaps an adverb or purpose clause. */
function transitiveVp(form, sh = {}) {
  const [vc, oc] = transitive();
  const [past, base] = word(VERBS[vc]);
  const verb = form === 'base' ? leaf('VB', base) : leaf('VBD', past);
  const kind = shaped(sh, 'objKind', () => choose({ plain: 0.68, coord: 0.2, rel: 0.12 }));
  const o = (sh.obj ??= {});
  const obj = kind === 'coord' ? coordinatedNp(oc, o) : kind === 'rel' ? relative(nounNp(oc, o), oc, (sh.rel ??= {})) : nounNp(oc, o);
  const tail = shaped(sh, 'tail', () => choose({ none: 0.7, adv: 0.18, purpose: 0.12 }));
  return node('VP', verb, obj, tail === 'purpose' ? purpose() : tail === 'adv' ? adverb((sh.advp ??= {})) : '');
}

/** `to dry the ropes`: a purpose clause with an empty subject. */
function purpose() {
  const [vc, oc] = transitive();
  return node('S-PRP', node('NP-SBJ', leaf('-NONE-', '*')),
    node('VP', leaf('TO', 'to'), node('VP', leaf('VB', word(VERBS[vc])[1]), nounNp(oc, { shape: pick(['det', 'pl', 'det-adj']) }))));
}

const locPp = (sh = {}) => node('PP-LOC', leaf('IN', pick(['in', 'near', 'behind', 'on', 'at'])), theNp('place', sh));
function timePp(sh = {}) {
  if (shaped(sh, 'bare', () => chance(0.4))) return node('PP-TMP', leaf('IN', 'at'), node('NP', leaf('NN', w1(BARE_TIMES))));
  return node('PP-TMP', leaf('IN', pick(['during', 'before', 'after', 'in'])), theNp('time'));
}

/** An intransitive verb with a PP or an adverb (the PPs follow no object). */
function intransitiveVp(person, sh = {}) {
  const kids = [];
  const going = person && shaped(sh, 'going', () => chance(0.5));
  const first = shaped(sh, 'first', () => (person ? choose({ pp: 0.7, none: 0.3 }) : choose({ tmp: 0.3, loc: 0.3, none: 0.4 })));
  if (first === 'pp' && going) {
    const [tag, p] = pick([['TO', 'to'], ['TO', 'to'], ['IN', 'from']]);
    kids.push(node('PP-DIR', leaf(tag, p), theNp('place', (sh.np ??= {}))));
  } else if (first === 'pp' || first === 'loc') kids.push(locPp((sh.np ??= {})));
  else if (first === 'tmp') kids.push(timePp((sh.tmp ??= {})));
  const extra = shaped(sh, 'extra', () => choose({ none: 0.6, tmp: 0.2, adv: 0.2 }));
  if (extra === 'tmp') kids.push(timePp((sh.tmp2 ??= {})));
  if (extra === 'adv') kids.push(adverb((sh.advp ??= {}), person));
  return node('VP', leaf('VBD', w1(person ? (going ? GOING : STAYING) : INTRANS_THING)), ...kids);
}

/** A person subject: a noun phrase, a pronoun, one with a PP inside, coordinated persons, a relative clause. */
function personSubject(rich = true, sh = {}) {
  const kind = shaped(sh, 'kind', () => choose(rich ? { the: 0.48, pl: 0.15, prp: 0.12, coord: 0.1, pp: 0.1, rel: 0.05 } : { the: 0.6, pl: 0.2, prp: 0.2 }));
  const np = (sh.np ??= {});
  switch (kind) {
    case 'prp': return node('NP-SBJ', leaf('PRP', pick(['we', 'they', 'she', 'he'])));
    case 'pl': return nounNp('person', Object.assign(np, { shape: np.shape ?? pick(['pl', 'num']) }), 'NP-SBJ');
    case 'pp': return node('NP-SBJ', theNp('person', np), node('PP', leaf('IN', pick(['from', 'from', 'at', 'in'])), theNp('place')));
    case 'rel': return relabel(relative(theNp('person', np), 'person'), 'NP-SBJ');
    case 'coord': {
      // Two persons share a class, so a PP after them scopes over both.
      const a = theNp('person', np);
      const pair = node('NP', a, leaf('CC', 'and'), theNp('person', chance(NOISE_COORD) ? { adj: !np.adj } : np));
      return shaped(sh, 'wide', () => chance(0.4)) ? node('NP-SBJ', pair, node('PP', leaf('IN', 'from'), theNp('place'))) : relabel(pair, 'NP-SBJ');
    }
    default: return theNp('person', np, 'NP-SBJ');
  }
}

/** A thing subject: plain, with a PP, or two coordinated whose PP scope the classes set. */
function thingSubject() {
  const cls = pick(THINGS);
  const kind = choose({ plain: 0.6, pp: 0.2, coord: 0.2 });
  const pp = () => node('PP', leaf('IN', pick(['in', 'near', 'behind', 'on'])), theNp('place'));
  const sh = { shape: pick(['det', 'pl', 'det-adj', 'det-adj-pl']), mass: false };
  if (kind === 'plain') return nounNp(cls, sh, 'NP-SBJ');
  if (kind === 'pp') return node('NP-SBJ', nounNp(cls, sh), pp());
  const other = chance(0.5) ? cls : pick(THINGS.filter((c) => c !== cls));
  const b = chance(NOISE_COORD) ? { mass: false } : sh;
  // Same class: the PP takes both conjuncts; different classes: only the last.
  if (other === cls) return node('NP-SBJ', node('NP', nounNp(cls, sh), leaf('CC', 'and'), nounNp(other, b)), pp());
  return node('NP-SBJ', nounNp(cls, sh), leaf('CC', 'and'), node('NP', nounNp(other, b), pp()));
}

/** `the crates were stacked *-1 in the shed by the porters`. */
function passive() {
  const k = coindex++;
  const vc = pick(VERB_CLASSES.filter((v) => v !== 'clearing'));
  const oc = pick(OBJECTS[vc].filter((c) => c !== 'person'));
  const subj = nounNp(oc, { shape: pick(['det', 'det-adj', 'pl', 'num']) }, `NP-SBJ-${k}`);
  const aux = leaf('VBD', subj.includes('(NNS ') ? 'were' : 'was');
  const tail = [];
  if (chance(0.5)) tail.push(locPp());
  if (chance(0.6)) tail.push(node('PP', leaf('IN', 'by'), theNp('person', {}, 'NP-LGS')));
  if (tail.length === 0) tail.push(adverb());
  return node('S', subj, node('VP', aux, node('VP', leaf('VBN', w1(VERBS[vc])), node('NP', leaf('-NONE-', `*-${k}`)), ...tail)));
}

const KINDS = { attach: 0.5, trans: 0.3, intrans: 0.2 };
/** A VP for a person subject: a `V NP PP`, a `V NP`, or an intransitive; a modal sometimes. */
function personVp(sh = {}) {
  const kind = shaped(sh, 'kind', () => choose(KINDS));
  if (kind === 'intrans') return intransitiveVp(true, sh);
  const make = kind === 'attach' ? attachmentVp : transitiveVp;
  if (shaped(sh, 'modal', () => chance(0.12))) return node('VP', leaf('MD', w1(MODALS)), make('base', sh));
  return make('past', sh);
}

/** A clause without its final period. */
function clause(top) {
  const r = rand();
  if (r < 0.08) return passive();
  if (r < 0.16) return node('S', thingSubject(), intransitiveVp(false));
  const subj = personSubject(top);
  if (top && r < 0.27) {
    // Coordinated VPs, mostly in one shape.
    const a = {};
    const b = chance(NOISE_COORD) ? {} : a;
    return node('S', subj, node('VP', personVp(a), leaf('CC', 'and'), personVp(b)));
  }
  const advp = chance(0.06) ? node('ADVP-MNR', leaf('RB', w1(ADV_MNR))) : '';
  return node('S', subj, advp, personVp());
}

const inner = (s) => s.slice(3, -1); // the children of an `(S ...)` string

/** A whole sentence: the top S, ending in a period. */
function sentence() {
  coindex = 1;
  const r = rand();
  if (r < 0.12) {
    // Coordinated sentences, mostly in one shape.
    const a = { subj: {}, vp: {} };
    const b = chance(NOISE_COORD) ? { subj: {}, vp: {} } : a;
    const s = (sh) => node('S', personSubject(false, sh.subj), personVp(sh.vp));
    return node('S', s(a), leaf(',', ','), leaf('CC', pick(['and', 'and', 'but'])), s(b), leaf('.', '.'));
  }
  if (r < 0.22) {
    const fronted = chance(0.6) ? timePp() : chance(0.5) ? locPp() : node('ADVP-TMP', leaf('RB', pick(['later', 'afterwards', 'yesterday', 'meanwhile'])));
    return node('S', fronted, leaf(',', ','), inner(clause(false)), leaf('.', '.'));
  }
  if (r < 0.38) {
    const [label, sub] = pick([['SBAR-TMP', 'while'], ['SBAR-TMP', 'after'], ['SBAR-TMP', 'before'], ['SBAR-TMP', 'when'], ['SBAR-TMP', 'until'], ['SBAR-PRP', 'because'], ['SBAR-ADV', 'although']]);
    const sbar = node(label, leaf('IN', sub), clause(false));
    if (chance(0.35)) return node('S', sbar, leaf(',', ','), inner(clause(false)), leaf('.', '.'));
    return node('S', inner(clause(false)), chance(0.5) ? leaf(',', ',') : '', sbar, leaf('.', '.'));
  }
  return node('S', inner(clause(true)), leaf('.', '.'));
}

// ---------------------------------------------------------------- output
const LEAF = /\(([^\s()]+) ([^\s()]+)\)/g;
function wordsOf(tree) {
  const out = [];
  for (const m of tree.matchAll(LEAF)) if (m[1] !== '-NONE-') out.push(m[2]);
  return out;
}
/** Capitalises the first word, as running text would. */
function capitalise(tree) {
  for (const m of tree.matchAll(LEAF)) {
    if (m[1] === '-NONE-') continue;
    const at = m.index + m[1].length + 2;
    return tree.slice(0, at) + tree[at].toUpperCase() + tree.slice(at + 1);
  }
  return tree;
}
/** Each child of the top S on its own indented line (a `(` in column 1 starts a tree). */
function layout(tree) {
  const kids = [];
  let depth = 0;
  let from = -1;
  for (let i = 3; i < tree.length - 1; i++) {
    if (tree[i] === '(') {
      if (depth++ === 0) from = i;
    } else if (tree[i] === ')' && --depth === 0) kids.push(tree.slice(from, i + 1));
  }
  return `( (S\n${kids.map((k) => '    ' + k).join('\n')}) )`;
}

mkdirSync('demo-corpus', { recursive: true });
const seen = new Set();
for (const [name, size] of SPLITS) {
  tally = {};
  const trees = [];
  while (trees.length < size) {
    const kept = structuredClone(tally); // a redrawn sentence must not count towards the balance
    const t = capitalise(sentence());
    const w = wordsOf(t);
    const key = w.join(' ');
    if (w.length < MIN_WORDS || w.length > MAX_WORDS || seen.has(key)) {
      tally = kept;
      continue;
    }
    seen.add(key);
    trees.push(layout(t));
  }
  writeFileSync(`demo-corpus/huts-${name}.trees`, trees.join('\n') + '\n');
  console.error(`wrote demo-corpus/huts-${name}.trees (${trees.length} trees)`);
}

// The lexicon: every verb form and noun with its class; a word in two classes is a grammar bug.
const lexicon = new Map();
const add = (w, c) => {
  if (lexicon.has(w) && lexicon.get(w) !== c) throw new Error(`grammar: \`${w}\` is both ${lexicon.get(w)} and ${c}`);
  lexicon.set(w, c);
};
for (const t of [VERBS, NOUNS]) for (const [c, l] of Object.entries(t)) for (const forms of [...l.common, ...l.rare]) for (const w of forms) add(w, c);
for (const [w] of [...BARE_TIMES.common, ...BARE_TIMES.rare]) add(w, 'time');
writeFileSync('demo-corpus/lexicon.tsv',
  '# invented demo lexicon (mountain-hut supply logs): word, TAB, class; verbs, nouns and objects of prepositions\n' +
  [...lexicon].map(([w, c]) => `${w}\t${c}`).join('\n') + '\n');
console.error(`wrote demo-corpus/lexicon.tsv (${lexicon.size} words)`);
