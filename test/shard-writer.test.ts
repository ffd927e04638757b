/**
 * The shard writer: shards cut by sentences or bytes, every file renamed
 * into place only when complete, per-sentence offsets and per-bucket counts
 * in the count file, per-template totals, and one `onShard` call per shard
 * with the running state (what the journal records).
 */
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { decodeCounts } from '../src/formats/counts-file.js';
import { emptyState, type WriterState } from '../src/formats/journal.js';
import { ShardWriter } from '../src/io/shard-writer.js';

const dir = mkdtempSync(join(tmpdir(), 'sheaf-writer-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const record = (k: number) => ({
  bytes: Uint8Array.from({ length: 10 + k }, (_, i) => (i * 7 + k) & 255),
  rawBytes: 20 + k,
  candidates: k % 3,
  varying: Uint32Array.of(k % 4, 100 + (k % 2)),
  templateCounts: Uint32Array.of(3, 1, 5, 2),
});

describe('shard writer', () => {
  it('cuts shards by sentences, renames each when complete, and records offsets, counts and totals', () => {
    const out = mkdtempSync(join(dir, 'a-'));
    const seen: [number, number][] = [];
    const w = new ShardWriter(out, { limits: { sentencesPerShard: 4, bytesPerShard: 0 }, bits: 10, compressed: true, templates: ['rules.v1', 'span-shape.v1'] }, emptyState(), (k, st: WriterState) => seen.push([k, st.written]));
    for (let k = 0; k < 10; k++) {
      w.sentence(record(k), k % 2, { parser: 'p', fingerprint: `f${k % 2}` }, k + 1);
      // Nothing half-written is visible under a final name.
      for (const f of readdirSync(out)) if (!f.endsWith('.tmp')) expect(f).toMatch(/^shard-\d{5}\.(msgpack\.gz|counts\.msgpack)$/);
    }
    w.rejected(11);
    w.close();
    expect(seen).toEqual([[0, 4], [1, 8], [2, 10]]);
    const st = w.state;
    expect(st.shards.map((s) => s.sentences)).toEqual([4, 4, 2]);
    expect([st.written, st.rejected, st.consumed]).toEqual([10, 1, 11]);
    expect(st.noCandidates).toBe(4); // k = 0, 3, 6, 9
    expect(st.folds.map((f) => [f.fold, f.sentences])).toEqual([[0, 5], [1, 5]]);
    expect(readdirSync(out).filter((f) => f.endsWith('.tmp'))).toEqual([]);
    const first = st.shards[0];
    expect(first.bytes).toBe(10 + 11 + 12 + 13);
    expect(first.rawBytes).toBe(20 + 21 + 22 + 23);
    expect(first.templates).toEqual({ 'rules.v1': [12, 4], 'span-shape.v1': [20, 8] });
    const counts = decodeCounts(readFileSync(join(out, first.counts)), first.counts);
    expect(Array.from(counts.offsets)).toEqual([0, 10, 21, 33]);
    expect(Array.from(counts.idx)).toEqual([0, 1, 2, 3, 100, 101]);
    expect(Array.from(counts.count)).toEqual([1, 1, 1, 1, 2, 2]);
    // The shard holds the records back to back.
    expect(readFileSync(join(out, first.file)).length).toBe(first.bytes);
  });

  it('cuts by bytes when asked, and writes nothing for an empty run', () => {
    const out = mkdtempSync(join(dir, 'b-'));
    const w = new ShardWriter(out, { limits: { sentencesPerShard: 1000, bytesPerShard: 25 }, bits: 8, compressed: false, templates: [] }, emptyState(), () => {});
    for (let k = 0; k < 5; k++) w.sentence(record(k), null, null, k + 1);
    w.close();
    expect(w.state.shards.map((s) => s.sentences)).toEqual([3, 2]);
    expect(w.state.shards[0].file).toBe('shard-00000.msgpack');
    const empty = mkdtempSync(join(dir, 'c-'));
    const e = new ShardWriter(empty, { limits: { sentencesPerShard: 10, bytesPerShard: 0 }, bits: 8, compressed: true, templates: [] }, emptyState(), () => {});
    e.close();
    expect(readdirSync(empty)).toEqual([]);
    expect(existsSync(join(empty, 'shard-00000.msgpack.gz'))).toBe(false);
  });
});
