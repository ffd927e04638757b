/**
 * What a part of a prepare run (`sheaf prepare --part I/N`) keeps beside its
 * shard directory, so that `sheaf merge` can restore input order and re-cut
 * the shards exactly as one machine would:
 *
 * - `part.json` (`sheaf-part/2`): which part of how many, the records of all
 *   inputs and of this part's share, and the side files, the reject
 *   positions and rejects.jsonl with their sha256 (format 1 lacked the last,
 *   so a damaged rejects.jsonl went into the merge unnoticed).
 *   Written just before manifest.json: a part with both is complete.
 *
 *     {"format": "sheaf-part/2", "part": 1, "of": 4, "read": 90, "share": 22,
 *      "sides": [{"file": "shard-00000.part.msgpack", "sentences": 22, "sha256": "sha256:…"}],
 *      "rejectPositions": {"file": "rejects.positions", "count": 3, "sha256": "sha256:…"},
 *      "rejects": {"file": "rejects.jsonl", "sha256": "sha256:…"},
 *      "keys": {"file": "part-keys.jsonl", "count": 5120, "sha256": "sha256:…"} | null}
 *
 * - `shard-NNNNN.part.msgpack`, one per shard: per sentence, in shard order,
 *   what the shard record does not hold but the shard's count file and the
 *   manifest need: one MessagePack array
 *
 *     [pos, rawBytes, candidates, fold | nil, parser | nil, fingerprint | nil,
 *      varying: bin (the buckets that vary in the sentence, ascending, as
 *               LEB128 varints of their differences: the first bucket, then
 *               each one minus the one before — about half the bytes of <u4),
 *      templateCounts: bin <u4 (per template: buckets fired, of which vary)]
 *
 * - `rejects.positions`: the input position of each record reject, in the
 *   order of rejects.jsonl after its gold rejects (uint64 little-endian).
 * - `part-keys.jsonl` (only when the pipeline keeps names): every distinct
 *   feature key the part saw, one JSON string per line, in code-unit order.
 *
 * Pure: no node: imports.
 */
import { DataError, UsageError } from '../core/errors.js';
import type { ModelIdentity } from '../records.js';
import { MsgpackWriter, type Decoded } from './msgpack.js';

export const PART_FORMAT = 'sheaf-part/2';
export const PART_FILE = 'part.json';
export const REJECT_POSITIONS = 'rejects.positions';
export const PART_KEYS = 'part-keys.jsonl';
export const sideName = (k: number) => `shard-${String(k).padStart(5, '0')}.part.msgpack`;

/** Part `index` of `of`: the records whose input position p has p mod of = index. */
export interface PartSpec {
  index: number;
  of: number;
}

/** The largest number of parts accepted (a sanity bound, far above any cluster's array size). */
export const MAX_PARTS = 100000;

/** Parses `I/N` (I from 0) as given to `--part`. */
export function parsePartSpec(text: string): PartSpec {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(String(text));
  const index = m ? Number(m[1]) : NaN;
  const of = m ? Number(m[2]) : NaN;
  if (!m || of < 1 || of > MAX_PARTS || index >= of) {
    throw new UsageError(`expected \`--part\` as I/N with N from 1 to ${MAX_PARTS} and I from 0 to N − 1 (e.g. \`--part 0/4\`), got \`${text}\``);
  }
  return { index, of };
}

/** How many of `read` input positions fall in part `index` of `of`. */
export function shareSize(read: number, p: PartSpec): number {
  return read > p.index ? Math.floor((read - p.index - 1) / p.of) + 1 : 0;
}

export interface PartFileEntry {
  file: string;
  sha256: string;
}

export interface PartInfo {
  format: typeof PART_FORMAT;
  part: number;
  of: number;
  /** Input records over all dumps (every part reads them all). */
  read: number;
  /** Input records in this part's share (written + rejected by it). */
  share: number;
  sides: (PartFileEntry & { sentences: number })[];
  rejectPositions: PartFileEntry & { count: number };
  /** rejects.jsonl, gold rejects included. */
  rejects: PartFileEntry;
  keys: (PartFileEntry & { count: number }) | null;
}

export function formatPartInfo(p: PartInfo): string {
  return JSON.stringify(p, null, 2) + '\n';
}

const SHA = /^sha256:[0-9a-f]{64}$/;

/** Parses and checks part.json of the part folder `dir`. */
export function parsePartInfo(text: string, dir: string): PartInfo {
  const fail = (why: string): never => {
    throw new UsageError(`\`${dir}\` is not a usable part: ${PART_FILE} ${why}`);
  };
  let raw: any;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    return fail(`is not valid JSON (${(e as Error).message})`);
  }
  if (!raw || typeof raw !== 'object' || Array.isArray(raw)) return fail('is not a JSON object');
  if (raw.format !== PART_FORMAT) {
    const other = typeof raw.format === 'string' && raw.format.startsWith('sheaf-part/') ? ': another version of sheaf made this part; make it again with this one' : '';
    return fail(`says format ${JSON.stringify(raw.format)}; this sheaf reads \`${PART_FORMAT}\`${other}`);
  }
  const count = (v: unknown) => Number.isSafeInteger(v) && (v as number) >= 0;
  if (!count(raw.of) || raw.of < 1 || !count(raw.part) || raw.part >= raw.of) return fail('has no valid `part` and `of` (expected 0 ≤ part < of)');
  if (!count(raw.read) || !count(raw.share) || raw.share !== shareSize(raw.read, { index: raw.part, of: raw.of })) return fail('has no valid `read` and `share`');
  const entry = (e: any, name: RegExp | string, what: string) => {
    if (!e || typeof e !== 'object' || typeof e.file !== 'string' || (typeof name === 'string' ? e.file !== name : !name.test(e.file)) || typeof e.sha256 !== 'string' || !SHA.test(e.sha256)) {
      fail(`names ${what} ${JSON.stringify(e?.file)}: expected a plain file name inside the folder, with its sha256`);
    }
  };
  if (!Array.isArray(raw.sides)) return fail('has no `sides` list');
  raw.sides.forEach((s: any, k: number) => {
    entry(s, sideName(k), `side file ${k}`);
    if (!count(s.sentences)) fail(`side file ${k}: expected \`sentences\` to be a count`);
  });
  entry(raw.rejectPositions, REJECT_POSITIONS, 'the reject positions');
  if (!count(raw.rejectPositions.count)) return fail('`rejectPositions.count` is not a count');
  entry(raw.rejects, 'rejects.jsonl', 'the rejects');
  if (raw.keys !== null) {
    entry(raw.keys, PART_KEYS, 'the key list');
    if (!count(raw.keys.count)) return fail('`keys.count` is not a count');
  }
  return raw as PartInfo;
}

/** One sentence's side record, as `shard-NNNNN.part.msgpack` holds it. */
export interface SideRecord {
  pos: number;
  rawBytes: number;
  candidates: number;
  fold: number | null;
  source: ModelIdentity | null;
  varying: Uint32Array;
  templateCounts: Uint32Array;
}

/** Ascending buckets as LEB128 varints of their differences (the first one as is). */
export function encodeDeltas(buckets: Uint32Array): Uint8Array {
  const out = new Uint8Array(buckets.length * 5);
  let o = 0;
  let prev = 0;
  for (let k = 0; k < buckets.length; k++) {
    let d = buckets[k] - prev;
    prev = buckets[k];
    while (d >= 0x80) {
      out[o++] = (d & 0x7f) | 0x80;
      d >>>= 7;
    }
    out[o++] = d;
  }
  return out.subarray(0, o);
}

/** The buckets back from encodeDeltas; null when the bytes are not strictly ascending varints of 32-bit buckets. */
export function decodeDeltas(bytes: Uint8Array): Uint32Array | null {
  const out = new Uint32Array(bytes.length);
  let n = 0;
  let prev = 0;
  for (let i = 0; i < bytes.length; ) {
    let d = 0;
    let shift = 0;
    for (;;) {
      if (i >= bytes.length || shift > 28) return null;
      const b = bytes[i++];
      d += (b & 0x7f) * 2 ** shift;
      shift += 7;
      if (b < 0x80) break;
    }
    const v = prev + d;
    if ((n > 0 && d === 0) || v > 0xffffffff) return null;
    out[n++] = v;
    prev = v;
  }
  return out.slice(0, n);
}

/** Appends one side record to `w`. */
export function encodeSideRecord(w: MsgpackWriter, r: SideRecord): void {
  w.arrayHeader(8);
  w.int(r.pos);
  w.int(r.rawBytes);
  w.int(r.candidates);
  if (r.fold === null) w.nil();
  else w.int(r.fold);
  if (r.source === null) {
    w.nil();
    w.nil();
  } else {
    w.str(r.source.parser);
    w.str(r.source.fingerprint);
  }
  w.bin(encodeDeltas(r.varying));
  w.bin(r.templateCounts);
}

/** A decoded side record, checked; `file` names it in errors. */
export function toSideRecord(raw: Decoded, file: string): SideRecord {
  const bad = (why: string): never => {
    throw new DataError('bad-shard', `${why} (expected a side record [pos, rawBytes, candidates, fold, parser, fingerprint, varying, templateCounts])`, { file });
  };
  if (!Array.isArray(raw) || raw.length !== 8) return bad('not an array of 8');
  const [pos, rawBytes, candidates, fold, parser, fingerprint, varying, templateCounts] = raw;
  const count = (v: Decoded): v is number => typeof v === 'number' && Number.isSafeInteger(v) && v >= 0;
  if (!count(pos) || !count(rawBytes) || !count(candidates)) return bad('`pos`, `rawBytes` or `candidates` is not a count');
  if (fold !== null && (typeof fold !== 'number' || !Number.isSafeInteger(fold))) return bad('`fold` is neither an integer nor nil');
  if ((parser === null) !== (fingerprint === null) || (parser !== null && (typeof parser !== 'string' || typeof fingerprint !== 'string'))) return bad('`parser` and `fingerprint` are not two strings or two nils');
  const u32 = (b: Decoded, what: string): Uint32Array => {
    if (!(b instanceof Uint8Array) || b.byteLength % 4 !== 0) return bad(`\`${what}\` is not uint32 data`);
    return new Uint32Array(new Uint8Array(b).buffer);
  };
  const deltas = (b: Decoded): Uint32Array => (b instanceof Uint8Array ? decodeDeltas(b) : null) ?? bad('`varying` is not ascending buckets as varint differences');
  return {
    pos,
    rawBytes,
    candidates,
    fold: fold as number | null,
    source: parser === null ? null : { parser: parser as string, fingerprint: fingerprint as string },
    varying: deltas(varying),
    templateCounts: u32(templateCounts, 'templateCounts'),
  };
}
