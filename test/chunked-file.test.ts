/**
 * The chunked reader merge streams parts through: values, lines and byte runs
 * that straddle its 1 MiB chunks (and values larger than a chunk) come back
 * whole. References: @msgpack/msgpack (npm) encoding and decoding the same
 * values; String#split for lines; Buffer#subarray for byte runs; Node's
 * crypto for the sha256.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { decodeMulti, encode } from '@msgpack/msgpack';
import { afterAll, describe, expect, it } from 'vitest';
import { ChunkedFile } from '../src/io/chunked-file.js';
import { seededRandom } from './helpers/synthetic-nbest.js';

const dir = mkdtempSync(join(tmpdir(), 'sheaf-chunked-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
const rand = seededRandom(7);
const sha = (b: Uint8Array) => `sha256:${createHash('sha256').update(b).digest('hex')}`;

describe('chunked file', () => {
  it('reads MessagePack values across chunk boundaries, one larger than a chunk, as @msgpack/msgpack wrote them', () => {
    const values: unknown[] = [];
    for (let k = 0; k < 400; k++) values.push([k, 'warden ' + 'x'.repeat(Math.floor(rand() * 9000)), new Uint8Array(Math.floor(rand() * 4000)).fill(k & 255)]);
    values.splice(200, 0, { big: new Uint8Array(1.5 * (1 << 20)).fill(9) });
    const bytes = Buffer.concat(values.map((v) => encode(v)));
    expect(bytes.length).toBeGreaterThan(3 << 20);
    const f = join(dir, 'values.msgpack');
    writeFileSync(f, bytes);
    // Bins as hex strings (@msgpack/msgpack gives Buffers, ours Uint8Array views; copied at once, as views are reused), maps as plain objects.
    const plain = (x: unknown): unknown => (x instanceof Uint8Array ? Buffer.from(x).toString('hex') : Array.isArray(x) ? x.map(plain) : x && typeof x === 'object' ? Object.fromEntries(Object.entries(x).map(([k, v]) => [k, plain(v)])) : x);
    const r = new ChunkedFile(f);
    const got: unknown[] = [];
    for (let v; (v = r.value()) !== null; ) got.push(plain(v));
    const want = [...decodeMulti(bytes)];
    expect(got.length).toBe(want.length);
    got.forEach((g, k) => expect(plain(g)).toEqual(plain(want[k])));
    expect(r.close()).toBe(sha(bytes));
  });

  it('reads lines and byte runs across chunk boundaries, lines longer than a chunk included', () => {
    const lines = Array.from({ length: 300 }, (_, k) => `{"crate": ${k}, "note": "${'é'.repeat(Math.floor(rand() * 20000))}"}`);
    lines[150] = 'r'.repeat(1.3 * (1 << 20));
    const text = lines.join('\n') + '\n';
    const f = join(dir, 'lines.jsonl');
    writeFileSync(f, text);
    const r = new ChunkedFile(f);
    const got: string[] = [];
    for (let l; (l = r.line()) !== null; ) got.push(l);
    expect(got).toEqual(text.split('\n').slice(0, -1));
    expect(r.lines).toBe(300);
    expect(r.close()).toBe(sha(Buffer.from(text)));

    const bytes = Buffer.from(text);
    const b = new ChunkedFile(f);
    let at = 0;
    while (at < bytes.length) {
      const n = Math.min(bytes.length - at, Math.floor(rand() * 700000));
      expect(Buffer.from(b.take(n)).equals(bytes.subarray(at, at + n))).toBe(true);
      at += n;
      expect(b.offset).toBe(at);
    }
    expect(b.atEnd).toBe(true);
    expect(() => b.take(1)).toThrow(/ends 1 byte\(s\) short/);
  });

  it('names the file when a line has no end or a value is cut short, and gives no sha256 for a file not read whole', () => {
    const f = join(dir, 'cut.jsonl');
    writeFileSync(f, 'one\ntwo');
    const r = new ChunkedFile(f);
    expect(r.line()).toBe('one');
    expect(() => r.line()).toThrow(/cut\.jsonl:2: the last line \(3 bytes\) has no line end/);
    const g = join(dir, 'cut.msgpack');
    writeFileSync(g, Buffer.from(encode('ropes and stoves')).subarray(0, 6));
    expect(() => new ChunkedFile(g).value()).toThrow(/cut\.msgpack.*truncated/);
    writeFileSync(g, Buffer.concat([encode(1), encode(2)]));
    const h = new ChunkedFile(g);
    expect(h.value()).toBe(1);
    expect(h.close()).toBeNull();
  });
});
