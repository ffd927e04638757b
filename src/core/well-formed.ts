/**
 * Lone surrogates: a JSON string may hold `\ud800` alone, which no UTF-8 text
 * can: written to a shard, a spill file or a log it becomes U+FFFD, so two
 * different ids (`"\ud800"`, `"\udbff"`) would become one. Readers refuse
 * such strings where they are ids or trees. Pure.
 */

/** The 0-based index of the first lone surrogate in `s`, or -1. */
export function loneSurrogateAt(s: string): number {
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    if (c < 0xd800 || c > 0xdfff) continue;
    if (c <= 0xdbff && i + 1 < s.length) {
      const d = s.charCodeAt(i + 1);
      if (d >= 0xdc00 && d <= 0xdfff) {
        i++;
        continue;
      }
    }
    return i;
  }
  return -1;
}

/** String.prototype.isWellFormed (ES2024; native in Node 20), where there is one: the JS loop otherwise. */
const isWellFormed: ((this: string) => boolean) | undefined = (String.prototype as { isWellFormed?: (this: string) => boolean }).isWellFormed;

/** Why `s` cannot stand for `what` (a lone surrogate at …), or null. */
export function notWellFormed(s: string, what: string): string | null {
  // Every candidate tree of every list passes here: the native check first, the position only for the message.
  if (isWellFormed !== undefined && isWellFormed.call(s)) return null;
  const at = loneSurrogateAt(s);
  if (at < 0) return null;
  return `expected ${what} to be Unicode text, got a lone surrogate \\u${s.charCodeAt(at).toString(16)} at character ${at + 1} (UTF-8 cannot hold it, so it would turn into U+FFFD)`;
}
