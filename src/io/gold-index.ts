/**
 * The gold side of the join. The gold treebank is streamed once; each tree is
 * checked (not built) and its text written to a spill file on disk and
 * indexed by id: in memory stay the id table (core/id-table.ts) and, per gold
 * sentence, a spill offset and length, a fold, a seen flag and its line —
 * about 45–55 bytes per gold sentence. Dumps may then come in any order; each
 * lookup is one positional read.
 */
import { closeSync, openSync, readSync, writeSync } from 'node:fs';
import { DataError } from '../core/errors.js';
import { IdTable } from '../core/id-table.js';
import { createVocabulary } from '../core/interner.js';
import type { RejectRecord } from '../records.js';
import { readTreeTexts } from './read-treebank.js';

export class GoldIndex {
  private readonly ids = new IdTable();
  private offsets = new Float64Array(1024);
  private lengths = new Int32Array(1024);
  private folds = new Int32Array(1024).fill(-1);
  private seenFlags = new Uint8Array(1024);
  private lines = new Int32Array(1024);
  private fd: number;
  private written = 0;
  private pending: Buffer[] = [];
  private pendingBytes = 0;

  private constructor(readonly spillPath: string, readonly file: string) {
    this.fd = openSync(spillPath, 'w+');
  }

  /** Reads the whole gold treebank; bad trees and duplicate ids go to `onReject`. */
  static async build(file: string, spillPath: string, onReject: (r: RejectRecord) => void, tap?: (c: Buffer) => void): Promise<GoldIndex> {
    const index = new GoldIndex(spillPath, file);
    try {
      const vocab = createVocabulary();
      const rejectOf = (e: DataError): RejectRecord => ({ file: e.file ?? file, line: e.line ?? null, column: e.column ?? null, id: e.id ?? null, code: e.code, reason: e.reason });
      for await (const rec of readTreeTexts(file, { vocab, onBad: (e) => onReject(rejectOf(e)), tap })) {
        const k = index.ids.add(rec.id);
        if (k < 0) {
          onReject({ file, line: rec.line, column: rec.column, id: rec.id, code: 'duplicate-id', reason: `gold id \`${rec.id}\` appears again (first at line ${index.lines[-1 - k]}); the later tree is refused` });
          continue;
        }
        index.add(k, rec.text, rec.line);
        if (rec.byPosition) index.byPosition = true;
      }
      index.flush();
    } catch (e) {
      index.close();
      throw e;
    }
    return index;
  }

  /** True when (some) gold ids are tree positions, which a damaged file could shift. */
  byPosition = false;

  get size(): number {
    return this.ids.size;
  }

  /** Where the gold tree of an ordinal came from, for messages when ids are positions ('' otherwise). */
  origin(ordinal: number): string {
    return this.byPosition ? `; the gold tree with this id (ids are positions) is the one at ${this.file} line ${this.lines[ordinal]}` : '';
  }

  private add(k: number, text: string, line: number): void {
    if (k === this.offsets.length) this.grow();
    const bytes = Buffer.from(text, 'utf8');
    this.offsets[k] = this.written + this.pendingBytes;
    this.lengths[k] = bytes.length;
    this.lines[k] = line;
    this.pending.push(bytes);
    this.pendingBytes += bytes.length;
    if (this.pendingBytes > 1 << 20) this.flush();
  }

  private flush(): void {
    if (this.pendingBytes === 0) return;
    writeSync(this.fd, Buffer.concat(this.pending), 0, this.pendingBytes, this.written);
    this.written += this.pendingBytes;
    this.pending = [];
    this.pendingBytes = 0;
  }

  private grow(): void {
    const size = this.offsets.length * 2;
    const g = <T extends Float64Array | Int32Array | Uint8Array>(a: T, make: (n: number) => T, fill?: number): T => {
      const b = make(size);
      if (fill !== undefined) b.fill(fill as never);
      b.set(a as never);
      return b;
    };
    this.offsets = g(this.offsets, (k) => new Float64Array(k));
    this.lengths = g(this.lengths, (k) => new Int32Array(k));
    this.folds = g(this.folds, (k) => new Int32Array(k), -1);
    this.seenFlags = g(this.seenFlags, (k) => new Uint8Array(k));
    this.lines = g(this.lines, (k) => new Int32Array(k));
  }

  /** Ordinal of a gold id, or -1. */
  ordinal(id: string): number {
    return this.ids.get(id);
  }

  /** The gold tree text of an ordinal (one positional read). */
  tree(ordinal: number): string {
    const len = this.lengths[ordinal];
    const buf = Buffer.allocUnsafe(len);
    readSync(this.fd, buf, 0, len, this.offsets[ordinal]);
    return buf.toString('utf8');
  }

  /** Marks an ordinal as seen in a dump; false if it was seen before. */
  markSeen(ordinal: number): boolean {
    if (this.seenFlags[ordinal]) return false;
    this.seenFlags[ordinal] = 1;
    return true;
  }

  /** Gold sentences no dump mentioned. */
  unseen(): number {
    let k = 0;
    for (let i = 0; i < this.size; i++) if (!this.seenFlags[i]) k++;
    return k;
  }

  setFold(ordinal: number, fold: number): void {
    this.folds[ordinal] = fold;
  }

  /** Planned fold of an ordinal, or -1 if the plan does not name it. */
  fold(ordinal: number): number {
    return this.folds[ordinal];
  }

  close(): void {
    closeSync(this.fd);
  }
}
