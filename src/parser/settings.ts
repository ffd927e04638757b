/**
 * Settings of the embedded PCFG parser: estimation (binarisation, unknown
 * words, smoothing) and search (unary chains, beam, derivation cap). One
 * object covers both, because the caller fingerprints a model together with
 * the n-best lists it makes, and both change those lists.
 *
 * Defaults were chosen by `node scripts/bench-parser.mjs --sweep`: 6-fold
 * cross-validation on the demo corpus (1,200 trees) for accuracy and speed,
 * plus the speed of a large grammar (3,600 random trees), since the demo
 * grammar (30–90 binary rules) parses in under 1 ms whatever the setting.
 * DEVELOPERS.md has the table.
 */
import { UsageError } from '../core/errors.js';

export interface PcfgSettings {
  /**
   * Horizontal Markov order h (Klein & Manning 2003): an intermediate symbol
   * of a binarised rule remembers the parent and the last h siblings already
   * generated. Infinity keeps them all (no markovisation: the binarised
   * grammar is then the plain treebank PCFG). Default 1: on the demo corpus
   * every h ≥ 1 gives the same F1 (97.37 at v = 2; h = 0 loses 0.2), and on
   * the large grammar h = 1 parses ~3× faster than h = 2 (50–58 vs
   * 156–164 ms per 20-word sentence at 50-best, two runs).
   */
  horizontal: number;
  /**
   * Vertical order v: a phrasal symbol is annotated with its v - 1 nearest
   * ancestors' labels (v = 2 is parent annotation, Johnson 1998). Default 2:
   * +1.8 F1 over v = 1 on the demo corpus. v = 3 gains another 0.6 there
   * (97.98) but parses the large grammar ~4× slower (200–229 vs 50–58 ms
   * per 20-word sentence at 50-best, two runs), which the 2-minute budget
   * cannot take.
   */
  vertical: number;
  /**
   * Words seen fewer than this many times in training are replaced by their
   * signature class (see unknown-words.ts); 0 turns unknown-word classes off
   * (a word unseen in training then makes its sentence unparseable).
   * Default 2 (words seen once stand for unseen words). The demo corpus
   * cannot inform this choice: every word in it occurs 19 times or more.
   */
  unknownThreshold: number;
  /**
   * Weight λ of the class prior in the lexical estimate: a word's tag
   * distribution is interpolated with its signature class's as
   * (c(T,w) + λ·P(T|class)) / (c(w) + λ); classes back off the same way to
   * coarser classes. 0 gives plain relative frequencies. Default 0.5, not
   * from a measurement: the demo corpus has no rare words, so λ changes no
   * F1 there and only costs time (each word gets more tags); it is kept so
   * that a word seen with one tag can still take another.
   */
  lexicalSmoothing: number;
  /**
   * Longest chain of unary rules the parser builds inside one span (the
   * virtual top's own rule not counted). Chains never repeat a symbol, so
   * unary cycles cannot loop. Default 3: the longest chain in the demo
   * corpus is 1, and 3 covers the usual S → VP → VB or NP → QP → CD.
   */
  maxUnaryChain: number;
  /**
   * Per-cell beam, in natural-log units: after a cell is filled, symbols whose
   * inside score is below the cell's best minus `beam` are dropped. 0 turns
   * pruning off (exact search). A sentence the beam leaves with no parse is
   * parsed again without it. Default 0: the demo grammar parses a 20-word
   * sentence at 50-best in under 1 ms exactly, and this inside-score beam
   * buys little elsewhere: on the large stress grammar (55–75 ms exact)
   * beam 10 saved 0–10 % and beam 7 10–40 % across runs, while beam 5
   * pruned every parse of every sentence (which then fell back to exact
   * search, slower than no beam). On the demo split beam 5 changed no F1;
   * beam 3 lost 2.5 F1.
   */
  beam: number;
  /**
   * The k-best extractor draws at most k × derivationFactor derivations
   * while looking for k distinct trees. With this trainer's binarisation
   * every tree has one derivation, so the cap is a guard. Default 4.
   */
  derivationFactor: number;
}

export const DEFAULT_PCFG_SETTINGS: PcfgSettings = Object.freeze({
  horizontal: 1,
  vertical: 2,
  unknownThreshold: 2,
  lexicalSmoothing: 0.5,
  maxUnaryChain: 3,
  beam: 0,
  derivationFactor: 4,
});

interface Rule {
  /** Integer-valued (true) or any finite number (false). */
  integer: boolean;
  min: number;
  max: number;
  /** Infinity is allowed (written `inf`). */
  infinite?: boolean;
  range: string;
}

const RULES: Record<keyof PcfgSettings, Rule> = {
  horizontal: { integer: true, min: 0, max: 64, infinite: true, range: 'an integer from 0 to 64, or inf' },
  vertical: { integer: true, min: 1, max: 4, range: 'an integer from 1 to 4' },
  unknownThreshold: { integer: true, min: 0, max: 1_000_000, range: 'an integer from 0 to 1000000' },
  lexicalSmoothing: { integer: false, min: 0, max: 1e6, range: 'a number from 0 to 1000000' },
  maxUnaryChain: { integer: true, min: 0, max: 16, range: 'an integer from 0 to 16' },
  beam: { integer: false, min: 0, max: 1e6, range: 'a number from 0 (off) to 1000000' },
  derivationFactor: { integer: true, min: 1, max: 1000, range: 'an integer from 1 to 1000' },
};

const KEYS = Object.keys(RULES).sort() as (keyof PcfgSettings)[];

/**
 * Full settings from a partial record (defaults for what is missing).
 * Accepts numbers or their text (as a command line gives them), and `inf`
 * where Infinity is allowed. Throws UsageError naming the setting and range.
 */
export function checkPcfgSettings(partial: Record<string, unknown>): PcfgSettings {
  const out: PcfgSettings = { ...DEFAULT_PCFG_SETTINGS };
  for (const key of Object.keys(partial)) {
    if (!(key in RULES)) {
      throw new UsageError(`unknown parser setting \`${key}\`; expected one of ${KEYS.join(', ')}`);
    }
    const value = partial[key];
    if (value === undefined) continue;
    out[key as keyof PcfgSettings] = checkOne(key as keyof PcfgSettings, value);
  }
  return out;
}

function checkOne(key: keyof PcfgSettings, value: unknown): number {
  const rule = RULES[key];
  let x: number;
  if (typeof value === 'number') x = value;
  else if (typeof value === 'string' && value.trim() !== '') {
    const t = value.trim();
    x = t === 'inf' || t === 'Infinity' ? Infinity : Number(t);
  } else x = NaN;
  const bad = Number.isNaN(x)
    || (x === Infinity ? !rule.infinite : !Number.isFinite(x) || x < rule.min || x > rule.max || (rule.integer && !Number.isInteger(x)));
  if (bad) throw new UsageError(`parser setting \`${key}\` must be ${rule.range}; got ${JSON.stringify(value) ?? String(value)}`);
  return x;
}

const KEY_VERSION = 'sheaf-pcfg/1';

/**
 * Canonical text of the settings: a version tag, then `name=value` pairs
 * sorted by name, numbers in JavaScript's shortest round-trip form, Infinity
 * as `inf`. The same settings always give the same text.
 */
export function settingsKey(settings: PcfgSettings): string {
  const s = checkPcfgSettings(settings as unknown as Record<string, unknown>);
  return [KEY_VERSION, ...KEYS.map((k) => `${k}=${s[k] === Infinity ? 'inf' : String(s[k])}`)].join(';');
}

/** The settings a settingsKey text stands for (used when decoding a model). */
export function parseSettingsKey(text: string): PcfgSettings {
  const parts = text.split(';');
  if (parts[0] !== KEY_VERSION) throw new UsageError(`expected parser settings of version ${KEY_VERSION}, got \`${parts[0]}\``);
  const rec: Record<string, unknown> = {};
  for (const p of parts.slice(1)) {
    const eq = p.indexOf('=');
    if (eq < 0) throw new UsageError(`bad parser settings entry \`${p}\``);
    rec[p.slice(0, eq)] = p.slice(eq + 1);
  }
  return checkPcfgSettings(rec);
}
