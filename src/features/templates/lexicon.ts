/**
 * `lexicon.v1` — lexical-semantic classes of argument heads, from a user
 * lexicon (TSV: a word, then one or more class tags; `#` starts a comment).
 * - `verb-obj`: a verb head with the class of each object's head word,
 *   `lexicon.v1 verb-obj mended appliance` ("mended the stove");
 * - `prep-obj`: a preposition with the class of its object's head,
 *   `lexicon.v1 prep-obj to place` ("to the upper hut");
 * - `prep-site`: a preposition with the class of the head of the
 *   constituent it attaches to, `lexicon.v1 prep-site to container`
 *   (attached to "crates" rather than to "carried");
 * - `attach`: site class, preposition and object class together,
 *   `lexicon.v1 attach container of supply` ("sacks of flour").
 * Words missing from the lexicon get the class `?` (or nothing, with
 * `unknown: "skip"`).
 */
import { piece } from '../../core/feature-sink.js';
import { UsageError } from '../../core/errors.js';
import type { FeatureSink } from '../../core/feature-sink.js';
import type { CandidateView, FeatureTemplate } from '../template.js';
import { wordBytes } from '../pieces.js';

/** Parses lexicon TSV text: word → class names. Errors name the line. */
export function parseLexicon(text: string, file: string): Map<string, string[]> {
  const out = new Map<string, string[]>();
  const lines = text.split('\n');
  for (let k = 0; k < lines.length; k++) {
    const line = lines[k].replace(/\r$/, '');
    if (line.trim() === '' || line.startsWith('#')) continue;
    const cols = line.split('\t').map((c) => c.trim()).filter((c) => c !== '');
    if (cols.length < 2) {
      throw new UsageError(`${file}:${k + 1}: expected a word, a tab and at least one class tag, got \`${line.slice(0, 60)}\``);
    }
    const [word, ...classes] = cols;
    const had = out.get(word);
    out.set(word, had ? [...had, ...classes.filter((c) => !had.includes(c))] : classes);
  }
  return out;
}

export const lexicon: FeatureTemplate = {
  id: 'lexicon.v1',
  summary: 'lexicon classes of argument heads: verb–object, preposition–object, preposition–attachment site',
  example: 'lexicon.v1 verb-obj mended appliance',
  exampleTree: '(S (NP (DT the) (NN warden)) (VP (VBD mended) (NP (DT the) (NN stove))) (. .))',
  options: {
    path: { type: 'string', default: null, doc: 'the lexicon TSV (relative to the pipeline file)' },
    lowercase: { type: 'boolean', default: true, doc: 'look words up in lower case' },
    unknown: { type: 'string', default: 'class', choices: ['class', 'skip'], doc: 'words not in the lexicon: class `?`, or no feature' },
    verbTags: { type: 'strings', default: ['VB', 'VBD', 'VBG', 'VBN', 'VBP', 'VBZ'], doc: 'POS tags of verb heads' },
    objectLabels: { type: 'strings', default: ['NP'], doc: 'labels of objects' },
    prepLabels: { type: 'strings', default: ['PP'], doc: 'labels of prepositional phrases' },
  },
  configure(options, context) {
    if (typeof options.path !== 'string') {
      throw new UsageError('lexicon.v1: expected `path` to name a lexicon TSV file (word, then class tags); the template needs it');
    }
    const entries = parseLexicon(context.readText(options.path), options.path);
    const lower = options.lowercase as boolean;
    const skipUnknown = options.unknown === 'skip';
    const verbTags = new Set(options.verbTags as string[]);
    const objects = new Set(options.objectLabels as string[]);
    const preps = new Set(options.prepLabels as string[]);
    const UNKNOWN = [piece('?')];
    const NONE: Uint8Array[] = [];
    const [verbObj, prepObj, prepSite, attach] = ['verb-obj', 'prep-obj', 'prep-site', 'attach'].map((k) => piece(`lexicon.v1 ${k}`));
    // Class pieces per word id, per vocabulary.
    const cache = new WeakMap<object, Map<number, Uint8Array[]>>();
    const classesOf = (v: CandidateView, wordNode: number): Uint8Array[] => {
      const t = v.tree;
      let m = cache.get(t.vocab);
      if (!m) {
        m = new Map();
        cache.set(t.vocab, m);
      }
      const id = t.sym[wordNode];
      let c = m.get(id);
      if (!c) {
        const w = t.vocab.words.name(id);
        const found = entries.get(lower ? w.toLowerCase() : w);
        c = found ? found.map(piece) : skipUnknown ? NONE : UNKNOWN;
        m.set(id, c);
      }
      return c;
    };
    const label = (v: CandidateView, i: number) => v.tree.vocab.labels.name(v.tree.sym[i]);
    /** Head word of the object of a PP: its first constituent child after the head. */
    const ppObject = (v: CandidateView, pp: number): number => {
      const t = v.tree;
      const h = v.headChild[pp];
      for (let c = t.end[h]; c < t.end[pp]; c = t.end[c]) if (!t.isWord[c]) return v.headWord[c];
      return -1;
    };
    const each = (sink: FeatureSink, prefix: Uint8Array, first: Uint8Array, classes: Uint8Array[]) => {
      for (const c of classes) {
        sink.begin(prefix).add(first).add(c);
        sink.emit();
      }
    };
    return {
      reach: { depth: 2 },
      node(v, i, sink) {
        if (v.preterminal[i]) return;
        const t = v.tree;
        const h = v.headChild[i];
        const head = v.headWord[i];
        const headIsVerb = v.preterminal[h] === 1 && verbTags.has(label(v, h));
        const isPP = preps.has(label(v, i));
        if (isPP && v.preterminal[h]) {
          const obj = ppObject(v, i);
          if (obj >= 0) each(sink, prepObj, wordBytes(v, head), classesOf(v, obj));
        }
        for (let d = i + 1; d < t.end[i]; d = t.end[d]) {
          if (d === h || t.isWord[d]) continue;
          const dl = label(v, d);
          if (headIsVerb && objects.has(dl)) each(sink, verbObj, wordBytes(v, head), classesOf(v, v.headWord[d]));
          if (preps.has(dl) && v.preterminal[v.headChild[d]]) {
            const prep = wordBytes(v, v.headWord[d]);
            const site = classesOf(v, head);
            each(sink, prepSite, prep, site);
            const obj = ppObject(v, d);
            if (obj < 0) continue;
            const objClasses = classesOf(v, obj);
            for (const s of site) {
              for (const o of objClasses) {
                sink.begin(attach).add(s).add(prep).add(o);
                sink.emit();
              }
            }
          }
        }
      },
    };
  },
};
