/**
 * One part's items in input-position order, streamed: its written sentences
 * (record bytes cut out of the shard files by the count files' offsets, with
 * the side records beside them) and its record rejects (the lines of
 * rejects.jsonl after the gold rejects, with their positions). Every file is
 * checked against the sha256 its part recorded once it has been read whole.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { UsageError } from '../core/errors.js';
import { decodeCounts } from '../formats/counts-file.js';
import { toSideRecord, type SideRecord } from '../formats/part-file.js';
import { sha256 } from '../io/files.js';
import { REJECTS } from '../io/rejects-log.js';
import { ChunkedFile } from '../io/chunked-file.js';
import type { PartFolder } from './part-set.js';

export type PartItem =
  | { kind: 'sentence'; pos: number; side: SideRecord; bytes: Uint8Array }
  | { kind: 'reject'; pos: number; line: string };

export class PartStream {
  private shardK = -1;
  private shard: ChunkedFile | null = null;
  private side: ChunkedFile | null = null;
  private offsets: Float64Array = new Float64Array(0);
  private record = 0;
  private readonly rejects: ChunkedFile;
  private readonly positions: ChunkedFile;
  private rejectsSeen = 0;
  private nextS: PartItem | null | undefined;
  private nextR: PartItem | null | undefined;
  private lastPos = -1;
  private lastWasDropped = false;
  /** sha256 over the gold reject lines at the head of rejects.jsonl (the same in every part). */
  readonly goldRejects: string;

  constructor(readonly part: PartFolder, onGoldReject?: (line: string) => void) {
    this.rejects = new ChunkedFile(join(part.dir, REJECTS));
    this.positions = new ChunkedFile(join(part.dir, part.info.rejectPositions.file));
    const h = createHash('sha256');
    for (let k = 0; k < part.manifest.totals.goldRejected; k++) {
      const line = this.rejects.line();
      if (line === null) this.fail(`${REJECTS} ends after ${k} line(s), before its ${part.manifest.totals.goldRejected} gold rejects`);
      h.update(line + '\n');
      onGoldReject?.(line);
    }
    this.goldRejects = h.digest('hex');
  }

  private fail(why: string): never {
    throw new UsageError(`\`${this.part.dir}\` (part ${this.part.info.part} of ${this.part.info.of}) is damaged: ${why}; make this part again with \`sheaf prepare … --part ${this.part.info.part}/${this.part.info.of}\``);
  }

  private checkClosed(file: ChunkedFile, expected: string, what: string): void {
    const got = file.close();
    if (got === null) this.fail(`${what} holds more than its part says`);
    if (got !== expected) this.fail(`${what} does not match the sha256 its part recorded`);
  }

  /** Opens shard k (its count file read whole: a few bytes per sentence). */
  private openShard(k: number): void {
    const sh = this.part.manifest.shards[k];
    const countsPath = join(this.part.dir, sh.counts);
    const countsBytes = readFileSync(countsPath);
    if (sha256(countsBytes) !== sh.countsSha256) this.fail(`${sh.counts} does not match the sha256 in manifest.json`);
    this.offsets = decodeCounts(countsBytes, countsPath).offsets;
    if (this.offsets.length !== sh.sentences) this.fail(`${sh.counts} gives ${this.offsets.length} offsets for ${sh.sentences} sentences`);
    this.shard = new ChunkedFile(join(this.part.dir, sh.file));
    this.side = new ChunkedFile(join(this.part.dir, this.part.info.sides[k].file));
    this.shardK = k;
    this.record = 0;
  }

  private closeShard(): void {
    const k = this.shardK;
    const sh = this.part.manifest.shards[k];
    if (this.shard!.offset !== sh.bytes) this.fail(`${sh.file} is not ${sh.bytes} bytes long as manifest.json says`);
    this.checkClosed(this.shard!, sh.sha256, sh.file);
    this.checkClosed(this.side!, this.part.info.sides[k].sha256, this.part.info.sides[k].file);
    this.shard = null;
    this.side = null;
  }

  private readSentence(): PartItem | null {
    const shards = this.part.manifest.shards;
    while (this.shard === null || this.record === this.offsets.length) {
      if (this.shard !== null) this.closeShard();
      if (this.shardK + 1 >= shards.length) return null;
      this.openShard(this.shardK + 1);
    }
    const sh = shards[this.shardK];
    const k = this.record++;
    const end = k + 1 < this.offsets.length ? this.offsets[k + 1] : sh.bytes;
    if (this.shard.offset !== this.offsets[k] || end < this.offsets[k]) this.fail(`${sh.counts}: offset of record ${k + 1} is not where record ${k} ends`);
    const raw = this.side!.value();
    if (raw === null) this.fail(`${this.part.info.sides[this.shardK].file} ends before record ${k + 1} of ${sh.file}`);
    const side = toSideRecord(raw, join(this.part.dir, this.part.info.sides[this.shardK].file));
    return { kind: 'sentence', pos: side.pos, side, bytes: this.shard.take(end - this.offsets[k]) };
  }

  private readReject(): PartItem | null {
    if (this.rejectsSeen === this.part.info.rejectPositions.count) return null;
    const p = this.positions.take(8);
    const pos = Number(new DataView(p.buffer, p.byteOffset, 8).getBigUint64(0, true));
    const line = this.rejects.line();
    if (line === null) this.fail(`${REJECTS} ends before reject ${this.rejectsSeen + 1} of ${this.part.info.rejectPositions.count}`);
    this.rejectsSeen++;
    return { kind: 'reject', pos, line };
  }

  /** The next item in position order, or null when the part is exhausted (then every file has been checked). */
  next(): PartItem | null {
    if (this.nextS === undefined) this.nextS = this.readSentence();
    if (this.nextR === undefined) this.nextR = this.readReject();
    const s = this.nextS;
    const r = this.nextR;
    let item: PartItem | null;
    // A dropped candidate's rejects line has its list's position; one machine writes it before the list.
    if (s && (!r || s.pos < r.pos)) {
      item = s;
      this.nextS = undefined;
    } else if (r) {
      item = r;
      this.nextR = undefined;
    } else {
      item = null;
    }
    if (item) {
      const sameList = item.pos === this.lastPos && this.lastWasDropped;
      this.lastWasDropped = item.kind === 'reject' && isDroppedLine(item.line);
      if (item.pos <= this.lastPos && !sameList) this.fail(`input position ${item.pos} comes after ${this.lastPos} (${item.pos === this.lastPos ? 'a record twice' : 'out of order'})`);
      this.lastPos = item.pos;
    }
    return item;
  }

  /** Checks the reject files were read whole and match their sha256 (after next() gave null). */
  finish(): void {
    if (this.rejects.line() !== null) this.fail(`${REJECTS} holds more lines than its ${this.part.manifest.rejects.count} rejects`);
    this.checkClosed(this.rejects, this.part.info.rejects.sha256, REJECTS);
    this.checkClosed(this.positions, this.part.info.rejectPositions.sha256, this.part.info.rejectPositions.file);
  }
}

/** Whether a rejects line is a candidate dropped from a kept list (it names the candidate's base rank). */
export function isDroppedLine(line: string): boolean {
  return /"candidate":\d/.test(line);
}
