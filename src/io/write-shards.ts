/**
 * Stage `write-shards.v1`: shards, counts, rejects and the journal that makes
 * an interrupted run resumable.
 *
 * Atomic output: every file is written under `NAME.tmp` and renamed when
 * complete; the manifest is written last. After each shard is renamed, one
 * line is appended to `journal.jsonl` saying how many input records it
 * consumed and how long `rejects.jsonl.tmp` was then, so a re-run resumes
 * from the last complete shard and produces the same bytes.
 */
import { createHash, type Hash } from 'node:crypto';
import { appendFileSync, closeSync, existsSync, openSync, readdirSync, readFileSync, readSync, renameSync, statSync, truncateSync, unlinkSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { MsgpackWriter } from '../core/encode-sentence.js';
import type { RejectRecord } from '../records.js';

export interface ShardEntry {
  file: string;
  sentences: number;
  candidates: number;
  bytes: number;
  sha256: string;
  counts: string;
  countsSha256: string;
}

export interface FoldStats {
  fold: number | null;
  sentences: number;
  sources: { parser: string; fingerprint: string; sentences: number }[];
}

/** Running totals, journaled with every shard. */
export interface WriterState {
  shards: ShardEntry[];
  consumed: number;
  written: number;
  rejected: number;
  candidates: number;
  noCandidates: number;
  rejectsBytes: number;
  folds: FoldStats[];
}

export function emptyState(): WriterState {
  return { shards: [], consumed: 0, written: 0, rejected: 0, candidates: 0, noCandidates: 0, rejectsBytes: 0, folds: [] };
}

export const shardName = (k: number) => `shard-${String(k).padStart(5, '0')}.msgpack`;
export const countsName = (k: number) => `shard-${String(k).padStart(5, '0')}.counts.msgpack`;
export const JOURNAL = 'journal.jsonl';
export const REJECTS = 'rejects.jsonl';
export const MANIFEST = 'manifest.json';

/** sha256 of a file on disk, `sha256:<hex>`. */
export function fileSha256(path: string): string {
  const h = createHash('sha256');
  const fd = openSync(path, 'r');
  const buf = Buffer.allocUnsafe(1 << 20);
  try {
    for (let n; (n = readSync(fd, buf)) > 0; ) h.update(buf.subarray(0, n));
  } finally {
    closeSync(fd);
  }
  return `sha256:${h.digest('hex')}`;
}

/** Removes every file a prepare run writes (a fresh start). */
export function clearOutput(dir: string): void {
  for (const f of readdirSync(dir)) {
    if (/^shard-\d{5}\.(counts\.)?msgpack(\.tmp)?$/.test(f) || [JOURNAL, REJECTS, `${REJECTS}.tmp`, MANIFEST, `${MANIFEST}.tmp`, 'names.json', 'names.json.tmp'].includes(f) || f.startsWith('.gold-spill')) {
      unlinkSync(join(dir, f));
    }
  }
}

export class ShardWriter {
  private fd = -1;
  private hash: Hash | null = null;
  private shardBytes = 0;
  private shardSentences = 0;
  private shardCandidates = 0;
  private readonly varying: BucketCounts;
  private pending: Uint8Array[] = [];
  private pendingBytes = 0;
  private readonly rejectsFd: number;

  constructor(
    readonly dir: string,
    readonly limits: { sentencesPerShard: number; bytesPerShard: number },
    readonly bits: number,
    readonly state: WriterState,
  ) {
    this.varying = new BucketCounts(bits);
    const rejectsTmp = join(dir, `${REJECTS}.tmp`);
    if (!existsSync(rejectsTmp)) closeSync(openSync(rejectsTmp, 'w'));
    truncateSync(rejectsTmp, state.rejectsBytes);
    this.rejectsFd = openSync(rejectsTmp, 'a');
  }

  /** Writes one encoded sentence; `consumed` counts input records through this one. */
  sentence(bytes: Uint8Array, candidates: number, varying: Uint32Array, fold: number | null, source: { parser: string; fingerprint: string } | null, consumed: number): void {
    if (this.fd < 0) this.open();
    this.pending.push(bytes);
    this.pendingBytes += bytes.length;
    this.hash!.update(bytes);
    this.shardBytes += bytes.length;
    this.shardSentences++;
    this.shardCandidates += candidates;
    this.varying.add(varying);
    const s = this.state;
    s.written++;
    s.candidates += candidates;
    if (candidates === 0) s.noCandidates++;
    s.consumed = consumed;
    this.countFold(fold, source);
    if (this.pendingBytes >= 1 << 20) this.flush();
    const { sentencesPerShard, bytesPerShard } = this.limits;
    if (this.shardSentences >= sentencesPerShard || (bytesPerShard > 0 && this.shardBytes >= bytesPerShard)) this.close();
  }

  /** Logs a refused record; `consumed` counts input records through this one. */
  reject(r: RejectRecord, consumed: number | null): void {
    const line = JSON.stringify({ file: r.file, line: r.line, id: r.id, code: r.code, reason: r.reason }) + '\n';
    const b = Buffer.from(line, 'utf8');
    writeSync(this.rejectsFd, b);
    if (consumed !== null) {
      this.state.rejected++;
      this.state.consumed = consumed;
    }
  }

  private countFold(fold: number | null, source: { parser: string; fingerprint: string } | null): void {
    let f = this.state.folds.find((x) => x.fold === fold);
    if (!f) {
      f = { fold, sentences: 0, sources: [] };
      this.state.folds.push(f);
      this.state.folds.sort((a, b) => (a.fold ?? -1) - (b.fold ?? -1));
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

  private open(): void {
    const k = this.state.shards.length;
    this.fd = openSync(join(this.dir, `${shardName(k)}.tmp`), 'w');
    this.hash = createHash('sha256');
    this.shardBytes = 0;
    this.shardSentences = 0;
    this.shardCandidates = 0;
    this.varying.clear();
  }

  private flush(): void {
    if (this.pendingBytes === 0) return;
    writeSync(this.fd, Buffer.concat(this.pending, this.pendingBytes));
    this.pending = [];
    this.pendingBytes = 0;
  }

  /** Completes the open shard (if any): counts file, renames, journal line. */
  close(): void {
    if (this.fd < 0) return;
    this.flush();
    closeSync(this.fd);
    this.fd = -1;
    const k = this.state.shards.length;
    // Per-shard count array, sparse: buckets with a non-zero count.
    const { idx, cnt } = this.varying.nonZero();
    const w = new MsgpackWriter();
    w.mapHeader(3);
    w.str('bits');
    w.int(this.bits);
    w.str('idx');
    w.bin(idx);
    w.str('count');
    w.bin(cnt);
    const countsBytes = w.bytes();
    const countsTmp = join(this.dir, `${countsName(k)}.tmp`);
    const cfd = openSync(countsTmp, 'w');
    writeSync(cfd, countsBytes);
    closeSync(cfd);
    renameSync(countsTmp, join(this.dir, countsName(k)));
    renameSync(join(this.dir, `${shardName(k)}.tmp`), join(this.dir, shardName(k)));
    this.state.shards.push({
      file: shardName(k),
      sentences: this.shardSentences,
      candidates: this.shardCandidates,
      bytes: this.shardBytes,
      sha256: `sha256:${this.hash!.digest('hex')}`,
      counts: countsName(k),
      countsSha256: `sha256:${createHash('sha256').update(countsBytes).digest('hex')}`,
    });
    this.state.rejectsBytes = statSync(join(this.dir, `${REJECTS}.tmp`)).size;
    appendFileSync(join(this.dir, JOURNAL), JSON.stringify({ shard: k, state: this.state }) + '\n');
  }

  /** Closes the last shard and the rejects log (renamed to its final name). */
  finish(): void {
    this.close();
    closeSync(this.rejectsFd);
    renameSync(join(this.dir, `${REJECTS}.tmp`), join(this.dir, REJECTS));
  }
}

/**
 * In how many sentences of the shard each bucket varies: a dense array up to
 * 2^24 buckets (fast, 64 MB at most), a Map beyond (hash spaces up to 2^31).
 */
class BucketCounts {
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

/** The last journaled state whose header matches `header`, or null. */
export function readJournal(dir: string, header: unknown): WriterState | null {
  const path = join(dir, JOURNAL);
  if (!existsSync(path)) return null;
  const lines = readFileSync(path, 'utf8').split('\n').filter((l) => l.trim());
  if (lines.length === 0) return null;
  try {
    if (JSON.stringify(JSON.parse(lines[0]).header) !== JSON.stringify(header)) return null;
  } catch {
    return null;
  }
  let state: WriterState | null = null;
  for (const l of lines.slice(1)) {
    try {
      state = (JSON.parse(l) as { state: WriterState }).state;
    } catch {
      break; // a torn last line (killed mid-append): the shard before it is the last complete one
    }
  }
  return state;
}

export function startJournal(dir: string, header: unknown, state: WriterState): void {
  appendFileSync(join(dir, JOURNAL), JSON.stringify({ header, state }) + '\n');
}
