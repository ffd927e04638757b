/**
 * A grammar as bytes and back (sheaf's own layout, little-endian):
 *
 *   magic "SHEAF-PCFG", u32 layout version (1)
 *   str   settingsKey of the settings
 *   u32   trained trees, skipped trees
 *   strs  labels
 *   u32   symbols S; u8[S] kinds; i32[S] base labels;
 *         i32s ctx starts (S + 1), i32s ctx; i32s sib starts (S + 1), i32s sibs
 *   u32   TOP's id
 *   rules binary: u32 n; i32[n] parents, lefts, rights; f64[n] scores
 *   rules unary:  u32 n; i32[n] parents, children; f64[n] scores
 *   lex   words:   strs; i32s starts; i32s tags; f64s scores
 *   lex   classes: the same
 * where `str` is u32 byte length + UTF-8, `strs` and `i32s`/`f64s` are a u32
 * count then the items. Floats are written bit for bit, so decoding gives
 * the same numbers; the trainer fixes every order, so the same training data
 * and settings give the same bytes.
 */
import { UsageError } from '../core/errors.js';
import { Grammar, type GrammarData } from './grammar.js';
import { parseSettingsKey, settingsKey } from './settings.js';

const MAGIC = 'SHEAF-PCFG';
const LAYOUT = 1;
const utf8 = new TextEncoder();
const fromUtf8 = new TextDecoder('utf-8', { fatal: true });

class ByteWriter {
  private buf = new Uint8Array(1 << 16);
  private view = new DataView(this.buf.buffer);
  private n = 0;

  private room(k: number): void {
    if (this.n + k <= this.buf.length) return;
    let cap = this.buf.length * 2;
    while (cap < this.n + k) cap *= 2;
    const b = new Uint8Array(cap);
    b.set(this.buf.subarray(0, this.n));
    this.buf = b;
    this.view = new DataView(b.buffer);
  }

  u8(x: number): void {
    this.room(1);
    this.buf[this.n++] = x;
  }
  u32(x: number): void {
    this.room(4);
    this.view.setUint32(this.n, x, true);
    this.n += 4;
  }
  i32(x: number): void {
    this.room(4);
    this.view.setInt32(this.n, x, true);
    this.n += 4;
  }
  f64(x: number): void {
    this.room(8);
    this.view.setFloat64(this.n, x, true);
    this.n += 8;
  }
  raw(b: Uint8Array): void {
    this.room(b.length);
    this.buf.set(b, this.n);
    this.n += b.length;
  }
  str(s: string): void {
    const b = utf8.encode(s);
    this.u32(b.length);
    this.raw(b);
  }
  strs(list: readonly string[]): void {
    this.u32(list.length);
    for (const s of list) this.str(s);
  }
  i32s(a: Int32Array): void {
    this.u32(a.length);
    for (let i = 0; i < a.length; i++) this.i32(a[i]);
  }
  f64s(a: Float64Array): void {
    this.u32(a.length);
    for (let i = 0; i < a.length; i++) this.f64(a[i]);
  }
  bytes(): Uint8Array {
    return this.buf.slice(0, this.n);
  }
}

class ByteReader {
  private readonly view: DataView;
  private n = 0;

  constructor(private readonly buf: Uint8Array) {
    this.view = new DataView(buf.buffer, buf.byteOffset, buf.byteLength);
  }

  private need(k: number): void {
    if (this.n + k > this.buf.length) throw new UsageError(`grammar bytes end early (at byte ${this.n}, ${k} more needed); the model file is truncated or not a sheaf grammar`);
  }
  u8(): number {
    this.need(1);
    return this.buf[this.n++];
  }
  u32(): number {
    this.need(4);
    const x = this.view.getUint32(this.n, true);
    this.n += 4;
    return x;
  }
  i32(): number {
    this.need(4);
    const x = this.view.getInt32(this.n, true);
    this.n += 4;
    return x;
  }
  f64(): number {
    this.need(8);
    const x = this.view.getFloat64(this.n, true);
    this.n += 8;
    return x;
  }
  str(): string {
    const len = this.u32();
    this.need(len);
    const s = fromUtf8.decode(this.buf.subarray(this.n, this.n + len));
    this.n += len;
    return s;
  }
  strs(): string[] {
    const n = this.u32();
    const out: string[] = [];
    for (let i = 0; i < n; i++) out.push(this.str());
    return out;
  }
  i32s(expect?: number): Int32Array {
    const n = this.u32();
    this.check(n, expect);
    this.need(4 * n);
    const a = new Int32Array(n);
    for (let i = 0; i < n; i++) a[i] = this.i32();
    return a;
  }
  f64s(expect?: number): Float64Array {
    const n = this.u32();
    this.check(n, expect);
    this.need(8 * n);
    const a = new Float64Array(n);
    for (let i = 0; i < n; i++) a[i] = this.f64();
    return a;
  }
  private check(n: number, expect?: number): void {
    if (expect !== undefined && n !== expect) throw new UsageError(`grammar bytes are inconsistent: expected an array of ${expect} items at byte ${this.n - 4}, got ${n}`);
  }
  get done(): boolean {
    return this.n === this.buf.length;
  }
}

function inRange(a: Int32Array, lo: number, hi: number, what: string): void {
  for (let i = 0; i < a.length; i++) {
    if (a[i] < lo || a[i] >= hi) throw new UsageError(`grammar bytes are inconsistent: ${what} refer to id ${a[i]} outside ${lo}..${hi - 1}`);
  }
}

export function encodeGrammar(g: Grammar): Uint8Array {
  const d = g.data;
  const w = new ByteWriter();
  w.raw(utf8.encode(MAGIC));
  w.u32(LAYOUT);
  w.str(settingsKey(d.settings));
  w.u32(d.trainedTrees);
  w.u32(d.skippedTrees);
  w.strs(d.labels);
  const S = d.symKind.length;
  w.u32(S);
  for (let s = 0; s < S; s++) w.u8(d.symKind[s]);
  for (let s = 0; s < S; s++) w.i32(d.symBase[s]);
  w.i32s(d.symCtxStart);
  w.i32s(d.symCtx);
  w.i32s(d.symSibStart);
  w.i32s(d.symSibs);
  w.u32(d.top);
  w.i32s(d.binParent);
  w.i32s(d.binLeft);
  w.i32s(d.binRight);
  w.f64s(d.binScore);
  w.i32s(d.unParent);
  w.i32s(d.unChild);
  w.f64s(d.unScore);
  w.strs(d.words);
  w.i32s(d.wordStart);
  w.i32s(d.wordTag);
  w.f64s(d.wordScore);
  w.strs(d.classes);
  w.i32s(d.classStart);
  w.i32s(d.classTag);
  w.f64s(d.classScore);
  return w.bytes();
}

export function decodeGrammar(bytes: Uint8Array): Grammar {
  const r = new ByteReader(bytes);
  const magic = utf8.encode(MAGIC);
  for (let i = 0; i < magic.length; i++) {
    if (i >= bytes.length || bytes[i] !== magic[i]) throw new UsageError('expected a sheaf grammar (bytes starting with SHEAF-PCFG)');
    r.u8();
  }
  const layout = r.u32();
  if (layout !== LAYOUT) throw new UsageError(`expected sheaf grammar layout ${LAYOUT}, got ${layout}; retrain the model`);
  const settings = parseSettingsKey(r.str());
  const trainedTrees = r.u32();
  const skippedTrees = r.u32();
  const labels = r.strs();
  const S = r.u32();
  const symKind = new Uint8Array(S);
  for (let s = 0; s < S; s++) symKind[s] = r.u8();
  const symBase = new Int32Array(S);
  for (let s = 0; s < S; s++) symBase[s] = r.i32();
  const symCtxStart = r.i32s(S + 1);
  const symCtx = r.i32s(symCtxStart[S]);
  const symSibStart = r.i32s(S + 1);
  const symSibs = r.i32s(symSibStart[S]);
  const top = r.u32();
  const binParent = r.i32s();
  const nb = binParent.length;
  const binLeft = r.i32s(nb);
  const binRight = r.i32s(nb);
  const binScore = r.f64s(nb);
  const unParent = r.i32s();
  const nu = unParent.length;
  const unChild = r.i32s(nu);
  const unScore = r.f64s(nu);
  const words = r.strs();
  const wordStart = r.i32s(words.length + 1);
  const wordTag = r.i32s(wordStart[words.length]);
  const wordScore = r.f64s(wordTag.length);
  const classes = r.strs();
  const classStart = r.i32s(classes.length + 1);
  const classTag = r.i32s(classStart[classes.length]);
  const classScore = r.f64s(classTag.length);
  if (!r.done) throw new UsageError('grammar bytes go on after the end of the grammar; the model file is damaged');
  // Ids in range, so a damaged file fails here and not inside the parser.
  const L = labels.length;
  inRange(symBase, -1, L, 'symbol labels');
  inRange(symCtx, -1, L, 'symbol contexts');
  inRange(symSibs, 0, L, 'symbol siblings');
  for (const [a, what] of [[binParent, 'binary rules'], [binLeft, 'binary rules'], [binRight, 'binary rules'], [unParent, 'unary rules'],
    [unChild, 'unary rules'], [wordTag, 'word tags'], [classTag, 'class tags']] as const) inRange(a, 0, S, what);
  if (top >= S || symKind[top] !== 2) throw new UsageError('grammar bytes are inconsistent: bad TOP symbol');
  const data: GrammarData = {
    settings, labels, symKind, symBase, symCtxStart, symCtx, symSibStart, symSibs, top,
    binParent, binLeft, binRight, binScore, unParent, unChild, unScore,
    words, wordStart, wordTag, wordScore, classes, classStart, classTag, classScore,
    trainedTrees, skippedTrees,
  };
  return new Grammar(data);
}
