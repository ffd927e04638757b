/**
 * A value from untrusted input, shown in a message: short and safe. Never
 * recursive (JSON.stringify of a value nested 20,000 deep overflows the
 * stack) and never long (a 10 MB string stays out of a reject line). Pure.
 */
export function show(v: unknown, max = 40): string {
  if (v === undefined) return 'nothing';
  if (v === null || typeof v === 'boolean' || typeof v === 'number') return String(v);
  if (typeof v === 'string') {
    const s = JSON.stringify(v.length > max ? v.slice(0, max) : v);
    return v.length > max ? `${s.slice(0, -1)}…" (${v.length} characters)` : s;
  }
  if (Array.isArray(v)) return `a list of ${v.length} value(s)`;
  if (typeof v === 'object') {
    const keys = Object.keys(v as object);
    return keys.length === 0 ? 'an empty object' : `an object with ${keys.slice(0, 3).map((k) => show(k, 20)).join(', ')}${keys.length > 3 ? ', …' : ''}`;
  }
  return typeof v;
}
