/**
 * The files a part of a prepare run (`--part I/N`) keeps beside its shards
 * (formats/part-file.ts): a side file per shard, written before the shard is
 * journaled; the input positions of its record rejects, appended as they
 * come and cut back on resume like rejects.jsonl; at the end its key list
 * (when names are kept) and part.json.
 */
import { closeSync, existsSync, openSync, readFileSync, renameSync, statSync, truncateSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { MsgpackWriter } from '../formats/msgpack.js';
import { encodeSideRecord, formatPartInfo, parsePartInfo, PART_FILE, PART_FORMAT, PART_KEYS, REJECT_POSITIONS, shareSize, sideName, type PartInfo, type PartSpec } from '../formats/part-file.js';
import type { WriterState } from '../formats/journal.js';
import { fileSha256, writeFileAtomic } from '../io/files.js';
import { REJECTS } from '../io/rejects-log.js';
import type { ModelIdentity } from '../records.js';

export { parsePartSpec, type PartSpec } from '../formats/part-file.js';

export class PartOutput {
  private readonly side = new MsgpackWriter();
  private sideSentences = 0;
  private readonly fd: number;
  private readonly positionsTmp: string;
  private readonly pos = new BigUint64Array(1);

  /**
   * Opens the reject positions, cut back to those of a resumed run's last
   * complete shard (0: fresh): one per rejected record and one per dropped
   * candidate, as rejects.jsonl has a line for each.
   */
  constructor(private readonly dir: string, readonly spec: PartSpec, state: WriterState) {
    this.positionsTmp = join(dir, `${REJECT_POSITIONS}.tmp`);
    if (!existsSync(this.positionsTmp)) closeSync(openSync(this.positionsTmp, 'w'));
    truncateSync(this.positionsTmp, 8 * (state.rejected + (state.candidatesDropped ?? 0)));
    this.fd = openSync(this.positionsTmp, 'a');
  }

  /** Whether input position `p` is in this part's share. */
  holds(p: number): boolean {
    return p % this.spec.of === this.spec.index;
  }

  /** Records the side data of a written sentence (call before the shard writer takes it). */
  sentence(s: { rawBytes: number; candidates: number; varying: Uint32Array; templateCounts: Uint32Array }, fold: number | null, source: ModelIdentity | null, pos: number): void {
    encodeSideRecord(this.side, { pos, rawBytes: s.rawBytes, candidates: s.candidates, fold, source, varying: s.varying, templateCounts: s.templateCounts });
    this.sideSentences++;
  }

  /** Records the input position of a record reject. */
  rejected(pos: number): void {
    this.pos[0] = BigInt(pos);
    writeSync(this.fd, new Uint8Array(this.pos.buffer));
  }

  /** Writes shard k's side file (call when the shard is complete, before it is journaled). */
  shardDone(k: number): void {
    writeFileAtomic(join(this.dir, sideName(k)), this.side.bytes());
    this.side.reset();
    this.sideSentences = 0;
  }

  /** Leaves the reject positions under their temporary name (for a later resume). */
  close(): void {
    closeSync(this.fd);
  }

  /** Writes the key list and part.json (call just before the manifest, once rejects.jsonl has its final name). */
  finish(read: number, state: WriterState, keys: string[] | null): PartInfo {
    closeSync(this.fd);
    const positions = join(this.dir, REJECT_POSITIONS);
    renameSync(this.positionsTmp, positions);
    let keyEntry: PartInfo['keys'] = null;
    if (keys) {
      const sorted = [...new Set(keys)].sort();
      writeFileAtomic(join(this.dir, PART_KEYS), sorted.map((k) => JSON.stringify(k) + '\n').join(''));
      keyEntry = { file: PART_KEYS, count: sorted.length, sha256: fileSha256(join(this.dir, PART_KEYS)) };
    }
    const info: PartInfo = {
      format: PART_FORMAT,
      part: this.spec.index,
      of: this.spec.of,
      read,
      share: shareSize(read, this.spec),
      sides: state.shards.map((s, k) => ({ file: sideName(k), sentences: s.sentences, sha256: fileSha256(join(this.dir, sideName(k))) })),
      rejectPositions: { file: REJECT_POSITIONS, count: statSync(positions).size / 8, sha256: fileSha256(positions) },
      rejects: { file: REJECTS, sha256: fileSha256(join(this.dir, REJECTS)) },
      keys: keyEntry,
    };
    writeFileAtomic(join(this.dir, PART_FILE), formatPartInfo(info));
    return info;
  }
}

/** Whether the folder's part.json (if any) says it holds part `spec` (undefined: no part.json at all). */
export function samePart(dir: string, spec: PartSpec | undefined): boolean {
  const file = join(dir, PART_FILE);
  if (!existsSync(file)) return spec === undefined;
  if (spec === undefined) return false;
  try {
    // Read loosely: a part made by another version of sheaf is still this part, made again (not another one).
    const p = JSON.parse(readFileSync(file, 'utf8'));
    return p !== null && typeof p === 'object' && p.part === spec.index && p.of === spec.of;
  } catch {
    return false;
  }
}

/** Whether the folder's part.json is one this sheaf reads (a part made by another version is made again). */
export function partIsCurrent(dir: string): boolean {
  try {
    parsePartInfo(readFileSync(join(dir, PART_FILE), 'utf8'), dir);
    return true;
  } catch {
    return false;
  }
}
