/**
 * Generators for the fuzz suite (fast-check): hut-log trees and their text
 * layouts, JSON values that readers must survive (wrong types, huge and
 * non-finite numbers, deep nesting, lone surrogates, prototype-named keys),
 * byte-level damage, gzip (whole, cut short, corrupted) and chunkings.
 */
import { gzipSync } from 'node:zlib';
import fc from 'fast-check';
import { PROTO_KEYS } from './settings.js';

export type TreeNode = { label: string; kids: (TreeNode | string)[] };

const LABELS = ['S', 'NP', 'VP', 'PP', 'NP-SBJ-1', 'ADVP', 'PRT', 'SBAR', '-NONE-', 'TOP', 'Ä', '名詞'];
const TAGS = ['DT', 'NN', 'NNS', 'VBD', 'IN', 'CD', ',', '.', '-NONE-', 'JJ'];
const WORDS = ['the', 'warden', 'porter', 'crates', 'ropes', 'stove', 'logged', 'mended', 'at', 'two', ',', '.', '*-1', 'Hütte', '雪', '-LRB-', 'ledger'];

export const treeArb: fc.Arbitrary<TreeNode> = fc.letrec<{ node: TreeNode; kid: TreeNode | string }>((tie) => ({
  node: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    fc.record({ label: fc.constantFrom(...TAGS), kids: fc.tuple(fc.constantFrom(...WORDS)).map((k): (TreeNode | string)[] => k) }),
    fc.record({ label: fc.constantFrom(...LABELS), kids: fc.array(tie('node'), { minLength: 1, maxLength: 4 }) }),
  ),
  kid: tie('node'),
})).node;

export function writeNode(n: TreeNode | string): string {
  return typeof n === 'string' ? n : `(${n.label} ${n.kids.map(writeNode).join(' ')})`;
}

/** A tree as a file holds it: one line, or indented continuation lines, maybe wrapped in `( … )`. */
export function layoutTree(n: TreeNode, wrap: boolean, multiline: boolean): string {
  const inner = multiline && typeof n !== 'string' && n.kids.length > 1
    ? `(${n.label} ${n.kids.map(writeNode).join('\n    ')})`
    : writeNode(n);
  return wrap ? `( ${inner} )` : inner;
}

/** A treebank text: trees in column 1, one layout per tree. */
export const treebankArb = fc.array(fc.tuple(treeArb, fc.boolean(), fc.boolean()), { minLength: 1, maxLength: 12 })
  .map((ts) => ({ trees: ts.map(([t]) => t), text: ts.map(([t, w, m]) => layoutTree(t, w, m)).join('\n') + '\n' }));

/** Strings that UTF-8 cannot hold, and other awkward ones. */
export const nastyString = fc.oneof(
  fc.string({ maxLength: 12 }),
  fc.string({ unit: 'binary', maxLength: 8 }),
  fc.constantFrom('\ud800', '\udbff', 'a\udc00b', '\ufeff', '', ' ', '\u0000', '(', ')', '()', '((', '\n', '"', '\\', ...PROTO_KEYS),
);

/** Numbers readers must weigh: huge, beyond the safe integers, beyond float32, tiny, negative zero. */
export const nastyNumber = fc.oneof(
  fc.double({ noNaN: true, noDefaultInfinity: true }),
  fc.integer({ min: -3, max: 40 }),
  fc.constantFrom(1e300, -1e300, 9007199254740993, 2 ** 53, -1, 0.5, -0, 3.5e38, -3.4e38, 3e38, 1e-320, 4294967296),
);

/** Deeply nested arrays or objects (as JSON text, built without recursion). */
export const deepJson = fc.tuple(fc.integer({ min: 1, max: 5000 }), fc.boolean()).map(([d, obj]) => (obj ? '{"a":'.repeat(d) + '1' + '}'.repeat(d) : '['.repeat(d) + ']'.repeat(d)));

/** A JSON value as text: plain values, nasty strings and numbers, deep nesting, objects with prototype-named keys. */
export const nastyJsonText: fc.Arbitrary<string> = fc.oneof(
  fc.jsonValue({ maxDepth: 3 }).map((v) => JSON.stringify(v)),
  nastyString.map((s) => JSON.stringify(s)),
  nastyNumber.map((x) => JSON.stringify(x)),
  deepJson,
  fc.constantFrom('null', 'true', '[]', '{}', 'NaN', 'Infinity', '-Infinity', '1e999', '"\\ud800"'),
  fc.dictionary(fc.constantFrom(...PROTO_KEYS), fc.jsonValue({ maxDepth: 1 }), { maxKeys: 3 }).map((o) => objectText(o)),
);

/** JSON object text from entries, keeping `__proto__` as an own key. */
export function objectText(o: Record<string, unknown>): string {
  return `{${Object.entries(o).map(([k, v]) => `${JSON.stringify(k)}:${typeof v === 'string' && v.startsWith('\u0001raw:') ? v.slice(5) : JSON.stringify(v)}`).join(',')}}`;
}
const raw = (text: string) => `\u0001raw:${text}`;

/** A candidate: usually well formed, sometimes with a field missing, extra or of the wrong type. */
const candidateText = (trees: string[]) => fc.oneof(
  { weight: 6, arbitrary: fc.tuple(fc.constantFrom(...trees), fc.double({ min: -200, max: 0, noNaN: true })).map(([tree, score]) => objectText({ tree, score })) },
  { weight: 1, arbitrary: fc.record({ tree: fc.oneof(fc.constantFrom(...trees), nastyJsonText.map(raw)), score: fc.oneof(nastyNumber, nastyJsonText.map(raw)) }, { requiredKeys: [] }).map(objectText) },
  { weight: 1, arbitrary: nastyJsonText },
);

/** An n-best record's JSON text over the given tree texts (a valid record most of the time). */
export const nbestRecordText = (trees: string[]) => fc.oneof(
  {
    weight: 5,
    arbitrary: fc.record({
      id: fc.oneof(fc.integer({ min: 1, max: 30 }).map(String), nastyString),
      fold: fc.oneof(fc.constant(null), fc.integer({ min: 0, max: 4 })),
      source: fc.constant({ parser: 'fuzz', fingerprint: 'sha256:fuzz' }),
      candidates: fc.array(candidateText(trees), { maxLength: 6 }).map((cs) => raw(`[${cs.join(',')}]`)),
    }).map(objectText),
  },
  {
    weight: 2,
    arbitrary: fc.record({
      id: fc.oneof(nastyString, nastyNumber, nastyJsonText.map(raw)),
      fold: fc.oneof(nastyNumber, nastyJsonText.map(raw)),
      source: fc.oneof(fc.constant(null), nastyJsonText.map(raw), fc.record({ parser: nastyString, fingerprint: nastyString })),
      candidates: fc.oneof(fc.array(candidateText(trees), { maxLength: 4 }).map((cs) => raw(`[${cs.join(',')}]`)), nastyJsonText.map(raw)),
      extra: fc.oneof(nastyJsonText.map(raw), fc.constant(1)),
    }, { requiredKeys: [] }).chain((o) => fc.dictionary(fc.constantFrom(...PROTO_KEYS), fc.constant(raw('{"polluted": 1}')), { maxKeys: 2 }).map((p) => ({ ...o, ...p }))).map(objectText),
  },
  { weight: 1, arbitrary: nastyJsonText },
);

/** Byte-level damage: insert, delete, replace or duplicate a stretch; cut the end. */
export const damageArb = fc.array(fc.tuple(fc.constantFrom('insert', 'delete', 'replace', 'duplicate', 'cut'), fc.nat(), fc.nat({ max: 40 }), fc.uint8Array({ minLength: 1, maxLength: 8 })), { maxLength: 4 });

export function damage(bytes: Buffer, edits: [string, number, number, Uint8Array][]): Buffer {
  let b = bytes;
  for (const [kind, at0, len, stuff] of edits) {
    const at = b.length ? at0 % (b.length + 1) : 0;
    const piece = Buffer.from(stuff);
    if (kind === 'insert') b = Buffer.concat([b.subarray(0, at), piece, b.subarray(at)]);
    else if (kind === 'delete') b = Buffer.concat([b.subarray(0, at), b.subarray(at + len)]);
    else if (kind === 'replace') b = Buffer.concat([b.subarray(0, at), piece, b.subarray(at + piece.length)]);
    else if (kind === 'duplicate') b = Buffer.concat([b.subarray(0, at + len), b.subarray(at, at + len), b.subarray(at + len)]);
    else b = b.subarray(0, at);
  }
  return b;
}

/** How the bytes reach a reader: plain, gzip, gzip cut short, gzip with a corrupted byte. */
export const wrappingArb = fc.oneof(
  { weight: 4, arbitrary: fc.constant({ kind: 'plain' as const, at: 0 }) },
  { weight: 1, arbitrary: fc.constant({ kind: 'gzip' as const, at: 0 }) },
  { weight: 1, arbitrary: fc.nat().map((at) => ({ kind: 'cut' as const, at })) },
  { weight: 1, arbitrary: fc.nat().map((at) => ({ kind: 'corrupt' as const, at })) },
);

export function wrap(bytes: Buffer, w: { kind: 'plain' | 'gzip' | 'cut' | 'corrupt'; at: number }): Buffer {
  if (w.kind === 'plain') return bytes;
  const gz = gzipSync(bytes);
  if (w.kind === 'gzip') return gz;
  if (w.kind === 'cut') return gz.subarray(0, 2 + (w.at % Math.max(1, gz.length - 2)));
  const c = Buffer.from(gz);
  const at = 10 + (w.at % Math.max(1, c.length - 10));
  if (at < c.length) c[at] ^= 0x5a;
  return c;
}

/** Chunk sizes a stream might deliver (now and then a byte at a time). */
export const chunkingArb = fc.oneof(
  { weight: 4, arbitrary: fc.array(fc.integer({ min: 64, max: 65536 }), { minLength: 1, maxLength: 8 }) },
  { weight: 1, arbitrary: fc.array(fc.integer({ min: 1, max: 16 }), { minLength: 1, maxLength: 8 }) },
);

export async function* chunked(bytes: Buffer, sizes: number[]): AsyncGenerator<Buffer> {
  let i = 0;
  let k = 0;
  while (i < bytes.length) {
    const n = sizes[k++ % sizes.length];
    yield bytes.subarray(i, i + n);
    i += n;
  }
}
