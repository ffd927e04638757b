/**
 * sheaf's MessagePack writer and strict reader against an independent
 * implementation (@msgpack/msgpack, npm): what one writes the other reads
 * back equal; the reader refuses what sheaf never writes (extension types,
 * non-string map keys), names the byte offset, and tells truncation apart
 * (streams wait for more bytes then).
 */
import { decode, encode, ExtensionCodec } from '@msgpack/msgpack';
import { describe, expect, it } from 'vitest';
import { decodeAll, MsgpackError, MsgpackReader, MsgpackWriter } from '../src/formats/msgpack.js';

function rand(seed: number) {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s ^ (s >>> 15), 0x2c1b3c6d) + 0x6d2b79f5) >>> 0;
    return s / 4294967296;
  };
}

/** Seeded random values of the kinds sheaf writes. */
function value(r: () => number, depth = 0): unknown {
  const k = Math.floor(r() * (depth > 3 ? 5 : 8));
  switch (k) {
    case 0: return null;
    case 1: return r() < 0.5;
    case 2: return Math.floor((r() - 0.5) * 2 ** (1 + Math.floor(r() * 52)));
    case 3: return (r() - 0.5) * 1e6;
    case 4: return ['', 'rope', 'Hütte', '雪', 'x'.repeat(Math.floor(r() * 300))][Math.floor(r() * 5)];
    case 5: return Uint8Array.from({ length: Math.floor(r() * 300) }, () => Math.floor(r() * 256));
    case 6: return Array.from({ length: Math.floor(r() * 5) }, () => value(r, depth + 1));
    default: return Object.fromEntries(Array.from({ length: Math.floor(r() * 5) }, (_, i) => [`k${i}${Math.floor(r() * 9)}`, value(r, depth + 1)]));
  }
}

/** Our decoded form compared on plain terms (null-prototype maps as plain objects). */
const plain = (v: unknown): unknown => (v instanceof Uint8Array ? Array.from(v) : Array.isArray(v) ? v.map(plain) : v && typeof v === 'object' ? Object.fromEntries(Object.entries(v).map(([k, x]) => [k, plain(x)])) : v);

describe('MessagePack', () => {
  it('reads what the independent encoder writes, and the independent decoder reads what ours writes (2,000 values)', () => {
    const r = rand(7);
    for (let k = 0; k < 2000; k++) {
      const v = value(r);
      const theirs = encode(v);
      expect(plain(new MsgpackReader(theirs).decode())).toEqual(plain(v));
      const w = new MsgpackWriter();
      w.value(v);
      expect(plain(decode(w.bytes()))).toEqual(plain(v));
    }
  });

  it('writes numbers as a bin of little-endian elements (binOf): what @msgpack/msgpack decodes is the typed array\'s bytes', () => {
    const r = rand(11);
    const kinds = [
      ['i8', Int8Array, () => Math.floor(r() * 256) - 128],
      ['i16', Int16Array, () => Math.floor(r() * 65536) - 32768],
      ['i32', Int32Array, () => Math.floor(r() * 2 ** 32) - 2 ** 31],
      ['u32', Uint32Array, () => Math.floor(r() * 2 ** 32)],
      ['f32', Float32Array, () => Math.fround((r() - 0.5) * 1e4)],
      ['f64', Float64Array, () => (r() - 0.5) * 1e9],
    ] as const;
    for (const [type, Typed, draw] of kinds) {
      // Lengths across the bin8 / bin16 / bin32 header sizes, at odd offsets in the output.
      for (const n of [0, 1, 7, 63, 300, 20000]) {
        const src = Array.from({ length: n + 3 }, draw);
        const w = new MsgpackWriter();
        w.str('x');
        w.binOf(src, 2, n, type);
        const [, bin] = decodeAll(w.bytes()) as [string, Uint8Array];
        const expected = Typed.from(src.slice(2, 2 + n));
        expect(decode(w.bytes().subarray(2)), `${type} × ${n}`).toEqual(new Uint8Array(expected.buffer));
        expect(Array.from(bin)).toEqual(Array.from(new Uint8Array(expected.buffer)));
      }
    }
  });

  it('refuses extension types, naming the byte offset', () => {
    const codec = new ExtensionCodec();
    codec.register({ type: 1, encode: (x: unknown) => (x instanceof Date ? new Uint8Array([1, 2, 3]) : null), decode: () => null });
    const bytes = encode({ when: new Date(0) }, { extensionCodec: codec });
    expect(() => new MsgpackReader(bytes).decode()).toThrow(/at byte 6: expected no MessagePack extension types/);
  });

  it('refuses a map key that is not a string', () => {
    const bytes = Uint8Array.of(0x81, 0x01, 0x02); // {1: 2}
    expect(() => new MsgpackReader(bytes).decode()).toThrow(/expected a map key that is a string/);
  });

  it('reads map keys of every string width (a long file path keys pipeline-files)', () => {
    const long = `/${'hut-ledgers/'.repeat(30)}lexicon.tsv`; // str16 (over 255 bytes)
    const mid = `/srv/${'crates/'.repeat(5)}lexicon.tsv`; // str8 (32–255 bytes)
    const value = { short: 1, [mid]: 2, [long]: 3 };
    // Written by @msgpack/msgpack (npm), an outside encoder.
    expect(plain(new MsgpackReader(encode(value)).decode())).toEqual(value);
  });

  it('tells truncation apart and leaves the offset where the value started', () => {
    const full = encode([1, 'rope', Uint8Array.of(1, 2, 3)]);
    const r = new MsgpackReader(full.subarray(0, full.length - 2));
    try {
      r.decode();
      throw new Error('no error');
    } catch (e) {
      expect(e).toBeInstanceOf(MsgpackError);
      expect((e as MsgpackError).truncated).toBe(true);
    }
    expect(r.offset).toBe(0);
    expect(decodeAll(Buffer.concat([encode(1), encode('two')]))).toEqual([1, 'two']);
  });

  it('refuses nesting deeper than its limit instead of overflowing the stack', () => {
    const deep = new Uint8Array(100001).fill(0x91);
    deep[100000] = 0xc0;
    expect(() => new MsgpackReader(deep).decode()).toThrow(/at most 64 levels of nesting/);
  });

  it('keeps keys named like object built-ins as plain data', () => {
    const v = new MsgpackReader(encode(JSON.parse('{"__proto__": {"polluted": 1}, "constructor": 2}'))).decode() as Record<string, unknown>;
    expect(Object.keys(v)).toEqual(['__proto__', 'constructor']);
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
    expect(Object.getPrototypeOf(v)).toBeNull();
  });
});
