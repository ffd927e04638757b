/**
 * `rejects.jsonl`: one line per refused input record (file, line, column,
 * id, code, reason) and per candidate dropped from a kept list (the same
 * with `candidate`, its base rank), written as `rejects.jsonl.tmp` and renamed when the run
 * completes. Its length is journaled with every shard, so a resumed run cuts
 * it back to what matches the last complete shard.
 */
import { closeSync, existsSync, openSync, renameSync, statSync, truncateSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import type { RejectRecord } from '../records.js';
import { environmentError } from './fs-faults.js';

export const REJECTS = 'rejects.jsonl';

export function rejectLine(r: RejectRecord): string {
  const line = r.candidate === undefined
    ? { file: r.file, line: r.line, column: r.column, id: r.id, code: r.code, reason: r.reason }
    : { file: r.file, line: r.line, column: r.column, id: r.id, candidate: r.candidate, code: r.code, reason: r.reason };
  return JSON.stringify(line) + '\n';
}

export class RejectsLog {
  private readonly fd: number;
  private readonly tmp: string;
  private closed = false;

  /** Opens `dir/rejects.jsonl.tmp`, cut back to `keepBytes` (0: a fresh log). */
  constructor(private readonly dir: string, keepBytes: number) {
    this.tmp = join(dir, `${REJECTS}.tmp`);
    if (!existsSync(this.tmp)) closeSync(openSync(this.tmp, 'w'));
    truncateSync(this.tmp, keepBytes);
    this.fd = openSync(this.tmp, 'a');
  }

  write(r: RejectRecord): void {
    try {
      writeSync(this.fd, Buffer.from(rejectLine(r), 'utf8'));
    } catch (e) {
      throw environmentError(e, join(this.dir, REJECTS), 'write');
    }
  }

  /** Bytes written so far. */
  get bytes(): number {
    return statSync(this.tmp).size;
  }

  /** Closes the log and gives it its final name. */
  finish(): void {
    this.closed = true;
    closeSync(this.fd);
    renameSync(this.tmp, join(this.dir, REJECTS));
  }

  /** Closes the log, leaving it under its temporary name (for a later resume). */
  close(): void {
    this.closed = true;
    closeSync(this.fd);
  }

  /** Closes the log if it is still open (after a failure; never throws). */
  abandon(): void {
    if (this.closed) return;
    this.closed = true;
    try {
      closeSync(this.fd);
    } catch {
      // Nothing more to do.
    }
  }
}
