/**
 * Signature classes for rare and unseen words, from word shape and suffix.
 *
 * The signature rule (sheaf's own):
 *   shape = case + marks, where
 *     case:  `AA`  two or more cased letters, all upper case;
 *            `Aa1` first character an upper-case letter, word first in the sentence;
 *            `Aa`  first character an upper-case letter, elsewhere;
 *            `aA`  an upper-case letter after the first character;
 *            `a`   cased letters, all lower case;
 *            `x`   no cased letter but other letters or symbols (e.g. CJK);
 *            ``    nothing of the above (digits and punctuation only);
 *     marks, in this order, each added once if present:
 *            `9`   a digit (`99` if the word is only digits and . , : /);
 *            `-`   a hyphen;
 *            `.`   other ASCII punctuation (not in a `99` word, whose
 *                  . , : / belong to the number);
 *   suffix = the longest of SUFFIXES ending the lower-cased word, tried only
 *            when the case is `a`, `Aa`, `Aa1` or `aA` and the word is at
 *            least two characters longer than the suffix.
 * The full class is `*UNK-<shape>-<suffix>` (just `*UNK-<shape>` without a
 * suffix), backing off to the shape class `*UNK-<shape>` and then to the
 * generic class `*UNK`. Names start with `*UNK`, which no real word need
 * avoid: class names live in their own table, apart from known words.
 */

/** Common English suffixes (inflection and derivation), longest first when matching. */
export const SUFFIXES: readonly string[] = [
  'ing', 'ed', 'es', 's', 'ly', 'er', 'ers', 'est', 'ion', 'ions', 'tion', 'ment', 'ness', 'able', 'ible', 'al', 'ive',
  'ous', 'ful', 'less', 'ity', 'ize', 'ise', 'ic', 'y', 'en', 'ant', 'ent', 'ism', 'ist', 'age', 'ery', 'ward',
];

const BY_LENGTH = [...SUFFIXES].sort((a, b) => b.length - a.length || (a < b ? -1 : a > b ? 1 : 0));

export const GENERIC_CLASS = '*UNK';

function isUpper(ch: string): boolean {
  return ch !== ch.toLowerCase() && ch === ch.toUpperCase();
}
function isLower(ch: string): boolean {
  return ch !== ch.toUpperCase() && ch === ch.toLowerCase();
}

/** The shape part of the signature (see the rule above). */
export function wordShape(word: string, first: boolean): string {
  const s = shapeParts(word, first);
  return s.kind + s.marks;
}

function shapeParts(word: string, first: boolean): { kind: string; marks: string } {
  let upper = 0;
  let lower = 0;
  let upperLater = false;
  let other = 0;
  let digit = false;
  let onlyNumber = word.length > 0;
  let hyphen = false;
  let punct = false;
  const chars = Array.from(word);
  for (let k = 0; k < chars.length; k++) {
    const ch = chars[k];
    const c = ch.charCodeAt(0);
    if (c >= 48 && c <= 57) {
      digit = true;
      continue;
    }
    const numberMark = ch === '.' || ch === ',' || ch === ':' || ch === '/';
    if (!numberMark) onlyNumber = false;
    if (isUpper(ch)) {
      upper++;
      if (k > 0) upperLater = true;
    } else if (isLower(ch)) lower++;
    else if (ch === '-') hyphen = true;
    else if (c < 128) punct = true;
    else other++;
  }
  let kind: string;
  if (upper >= 2 && lower === 0) kind = 'AA';
  else if (upper > 0 && isUpper(chars[0])) kind = first ? 'Aa1' : 'Aa';
  else if (upperLater) kind = 'aA';
  else if (lower > 0) kind = 'a';
  else if (other > 0 || upper > 0) kind = 'x';
  else kind = '';
  let marks = '';
  const number = digit && onlyNumber;
  if (digit) marks += number ? '99' : '9';
  if (hyphen) marks += '-';
  if (punct && !number) marks += '.';
  return { kind, marks };
}

const SUFFIXED_KINDS = new Set(['a', 'Aa', 'Aa1', 'aA']);

/** The suffix part, or '' (`kind`: the case part of the shape). */
function wordSuffix(word: string, kind: string): string {
  if (!SUFFIXED_KINDS.has(kind)) return '';
  const w = word.toLowerCase();
  for (const s of BY_LENGTH) if (w.length >= s.length + 2 && w.endsWith(s)) return s;
  return '';
}

export interface Signature {
  /** Shape and suffix: `*UNK-a-ing`. Equal to `shape` when there is no suffix. */
  full: string;
  /** Shape only: `*UNK-a`. */
  shape: string;
}

/** The signature classes of `word` (`first`: it is the sentence's first word). */
export function signatureOf(word: string, first: boolean): Signature {
  const { kind, marks } = shapeParts(word, first);
  const suffix = wordSuffix(word, kind);
  const s = `${GENERIC_CLASS}-${kind}${marks}`;
  return { full: suffix ? `${s}-${suffix}` : s, shape: s };
}
