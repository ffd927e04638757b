/**
 * Writes shard files and their count files. Every file is written under
 * `NAME.tmp` and renamed when complete; after each shard, `onShard` is told
 * (the caller journals the state), so an interrupted run resumes from the
 * last complete shard and gives the same bytes. Shard records arrive encoded
 * (and compressed) by the workers; this only appends, counts and digests.
 */
import { createHash, type Hash } from 'node:crypto';
import { closeSync, openSync, renameSync, writeSync, writevSync } from 'node:fs';
import { join } from 'node:path';
import { encodeCounts } from '../formats/counts-file.js';
import type { WriterState } from '../formats/journal.js';
import type { ModelIdentity } from '../records.js';
import { shardFull, type ShardLimits } from '../stages/write-shards.js';
import { sha256, writeFileAtomic } from './files.js';
import { environmentError, onPath } from './fs-faults.js';

export const shardName = (k: number, compressed: boolean) => `shard-${String(k).padStart(5, '0')}.msgpack${compressed ? '.gz' : ''}`;
export const countsName = (k: number) => `shard-${String(k).padStart(5, '0')}.counts.msgpack`;

export interface EncodedSentence {
  bytes: Uint8Array;
  rawBytes: number;
  candidates: number;
  /** Candidates dropped from this list (words differ from the gold's). */
  dropped?: readonly unknown[];
  varying: Uint32Array;
  templateCounts: Uint32Array;
}

export interface ShardWriterOptions {
  limits: ShardLimits;
  bits: number;
  compressed: boolean;
  /** Template ids in pipeline order (the order of `templateCounts`). */
  templates: readonly string[];
}

export class ShardWriter {
  private fd = -1;
  private hash: Hash | null = null;
  private shardBytes = 0;
  private shardRaw = 0;
  private shardSentences = 0;
  private shardCandidates = 0;
  private offsets: number[] = [];
  private templateTotals: Float64Array;
  private pending: Uint8Array[] = [];
  private pendingBytes = 0;
  private readonly varying: BucketCounts;

  constructor(
    private readonly dir: string,
    private readonly options: ShardWriterOptions,
    readonly state: WriterState,
    private readonly onShard: (k: number, state: WriterState) => void,
  ) {
    this.varying = new BucketCounts(options.bits);
    this.templateTotals = new Float64Array(2 * options.templates.length);
  }

  /** Writes one encoded sentence; `consumed` counts input records through this one. */
  sentence(s: EncodedSentence, fold: number | null, source: ModelIdentity | null, consumed: number): void {
    if (this.fd < 0) this.open();
    this.offsets.push(this.shardBytes);
    this.pending.push(s.bytes);
    this.pendingBytes += s.bytes.length;
    this.hash!.update(s.bytes);
    this.shardBytes += s.bytes.length;
    this.shardRaw += s.rawBytes;
    this.shardSentences++;
    this.shardCandidates += s.candidates;
    this.varying.add(s.varying);
    for (let k = 0; k < s.templateCounts.length; k++) this.templateTotals[k] += s.templateCounts[k];
    const st = this.state;
    st.written++;
    st.candidates += s.candidates;
    st.candidatesDropped = (st.candidatesDropped ?? 0) + (s.dropped?.length ?? 0);
    if (s.candidates === 0) st.noCandidates++;
    st.consumed = consumed;
    countFold(st, fold, source);
    if (this.pendingBytes >= 1 << 20) this.flush();
    if (shardFull(this.options.limits, this.shardSentences, this.shardBytes)) this.close();
  }

  /** Counts a refused record; `consumed` counts input records through this one. */
  rejected(consumed: number): void {
    this.state.rejected++;
    this.state.consumed = consumed;
  }

  private open(): void {
    const k = this.state.shards.length;
    const file = shardName(k, this.options.compressed);
    this.fd = onPath(join(this.dir, file), 'write', () => openSync(join(this.dir, `${file}.tmp`), 'w'));
    this.hash = createHash('sha256');
    this.shardBytes = 0;
    this.shardRaw = 0;
    this.shardSentences = 0;
    this.shardCandidates = 0;
    this.offsets = [];
    this.templateTotals.fill(0);
    this.varying.clear();
  }

  private flush(): void {
    if (this.pendingBytes === 0) return;
    try {
      // The records as they are (no joined copy); a short write goes on from a joined copy of the rest.
      let off = writevSync(this.fd, this.pending);
      if (off < this.pendingBytes) {
        const all = Buffer.concat(this.pending, this.pendingBytes);
        while (off < all.length) off += writeSync(this.fd, all, off, all.length - off);
      }
    } catch (e) {
      // A write carries no path of its own: name the shard.
      throw environmentError(e, join(this.dir, shardName(this.state.shards.length, this.options.compressed)), 'write');
    }
    this.pending = [];
    this.pendingBytes = 0;
  }

  /** After a failure: closes the open shard's temporary file without completing it. */
  abort(): void {
    if (this.fd < 0) return;
    try {
      closeSync(this.fd);
    } catch {
      // already unusable; the file is removed by the caller's cleanup
    }
    this.fd = -1;
    this.pending = [];
    this.pendingBytes = 0;
  }

  /** Completes the open shard (if any): count file, renames, then `onShard`. */
  close(): void {
    if (this.fd < 0) return;
    this.flush();
    closeSync(this.fd);
    this.fd = -1;
    const k = this.state.shards.length;
    const { idx, cnt } = this.varying.nonZero();
    const countsBytes = encodeCounts({ bits: this.options.bits, idx, count: cnt, offsets: Float64Array.from(this.offsets) });
    writeFileAtomic(join(this.dir, countsName(k)), countsBytes);
    const file = shardName(k, this.options.compressed);
    onPath(join(this.dir, file), 'write', () => renameSync(join(this.dir, `${file}.tmp`), join(this.dir, file)));
    const templates: Record<string, [number, number]> = {};
    this.options.templates.forEach((id, t) => {
      templates[id] = [this.templateTotals[2 * t], this.templateTotals[2 * t + 1]];
    });
    this.state.shards.push({
      file,
      sentences: this.shardSentences,
      candidates: this.shardCandidates,
      bytes: this.shardBytes,
      rawBytes: this.shardRaw,
      sha256: `sha256:${this.hash!.digest('hex')}`,
      counts: countsName(k),
      countsSha256: sha256(countsBytes),
      templates,
    });
    this.onShard(k, this.state);
  }
}

/** Per-fold provenance: sentences per fold, and per base model within it. */
function countFold(state: WriterState, fold: number | null, source: ModelIdentity | null): void {
  let f = state.folds.find((x) => x.fold === fold);
  if (!f) {
    f = { fold, sentences: 0, sources: [] };
    state.folds.push(f);
    state.folds.sort((a, b) => (a.fold ?? -1) - (b.fold ?? -1));
  }
  f.sentences++;
  const p = source ?? { parser: '', fingerprint: '' };
  let s = f.sources.find((x) => x.parser === p.parser && x.fingerprint === p.fingerprint);
  if (!s) {
    s = { parser: p.parser, fingerprint: p.fingerprint, sentences: 0 };
    f.sources.push(s);
  }
  s.sentences++;
}

/**
 * In how many sentences of the shard each bucket varies: a dense array up to
 * 2^24 buckets (fast, 64 MB at most), a Map beyond (hash spaces up to 2^31).
 */
export class BucketCounts {
  private readonly dense: Uint32Array | null;
  private readonly sparse = new Map<number, number>();

  constructor(bits: number) {
    this.dense = bits <= 24 ? new Uint32Array(2 ** bits) : null;
  }

  add(buckets: Uint32Array): void {
    const d = this.dense;
    if (d) for (let k = 0; k < buckets.length; k++) d[buckets[k]]++;
    else for (let k = 0; k < buckets.length; k++) this.sparse.set(buckets[k], (this.sparse.get(buckets[k]) ?? 0) + 1);
  }

  clear(): void {
    this.dense?.fill(0);
    this.sparse.clear();
  }

  /** Buckets with a non-zero count, ascending, and their counts. */
  nonZero(): { idx: Uint32Array; cnt: Uint32Array } {
    const d = this.dense;
    if (!d) {
      const idx = Uint32Array.from(this.sparse.keys()).sort();
      return { idx, cnt: Uint32Array.from(idx, (i) => this.sparse.get(i)!) };
    }
    let nz = 0;
    for (let i = 0; i < d.length; i++) if (d[i]) nz++;
    const idx = new Uint32Array(nz);
    const cnt = new Uint32Array(nz);
    for (let i = 0, o = 0; i < d.length; i++) {
      if (d[i]) {
        idx[o] = i;
        cnt[o++] = d[i];
      }
    }
    return { idx, cnt };
  }
}
