/**
 * The shard directory's `manifest.json` (format `sheaf-shards/3`), typed and
 * checked. Written last by `prepare` (and `merge`): a directory with a
 * manifest is complete. Readers check it before trusting it: shard and count
 * files must be plain names inside the directory, totals must reconcile.
 *
 * Pure: no node: imports.
 */
import { UsageError } from '../core/errors.js';
import type { ModelIdentity, PipelineConfig } from '../records.js';
import { PIPELINE_FILES } from './pipeline-files.js';
import { SHARD_FORMAT } from './shard-record.js';
import { show } from '../core/show.js';

export { SHARD_FORMAT };

export interface InputDigest {
  path: string;
  bytes: number | null;
  sha256: string;
}

export interface NbestInput extends InputDigest {
  /** Records read from this dump (input positions are numbered across dumps in order). */
  records: number;
}

export interface ShardEntry {
  file: string;
  sentences: number;
  candidates: number;
  /** Bytes of the shard file as written (compressed when compression is on). */
  bytes: number;
  /** Bytes of its MessagePack records before compression. */
  rawBytes: number;
  sha256: string;
  counts: string;
  countsSha256: string;
  /** Per template id: [distinct buckets fired summed over sentences, of which vary]. */
  templates: Record<string, [number, number]>;
}

export interface FoldStats {
  fold: number | null;
  sentences: number;
  sources: (ModelIdentity & { sentences: number })[];
}

export interface Totals {
  /** Input records read from the dumps (= written + rejected). */
  read: number;
  written: number;
  rejected: number;
  /** Candidates in the written lists as read (= candidates + candidatesDropped). */
  candidatesRead: number;
  /** Candidates kept and stored. */
  candidates: number;
  /** Candidates dropped from written lists because their words differ from the gold's (each in rejects.jsonl). */
  candidatesDropped: number;
  noCandidates: number;
  goldTrees: number;
  goldRejected: number;
  goldWithoutNbest: number;
}

export interface NamesSummary {
  file: string;
  perBucket: number;
  keys: number;
  buckets: number;
  collisionRate: number;
  expectedRate: number;
}

export interface ShardManifest {
  format: typeof SHARD_FORMAT;
  tool: { name: 'sheaf'; version: string };
  /** The resolved pipeline config, its digest, and the file holding the bytes of the files it reads. */
  pipeline: { digest: string; config: PipelineConfig; files: string };
  hashing: { bits: number; seed: number; rule: string; dropUniform: boolean };
  compression: { method: 'gzip' | 'none'; level: number; unit: 'sentence' };
  /** The record layout, in words (the README documents the bytes). */
  record: Record<string, string>;
  inputs: { gold: InputDigest; nbest: NbestInput[]; plan: { path: string; sha256: string } | null };
  folds: FoldStats[];
  shards: ShardEntry[];
  totals: Totals;
  rejects: { file: string; count: number };
  names: NamesSummary | null;
}

/** Record layout written into every manifest (the bytes are in formats/shard-record.ts). */
export const RECORD_LAYOUT: Record<string, string> = {
  sentence: 'map {id, pos, fold, gold, len, flag, buckets, btype, itype, ref, cands}',
  buckets: 'bin: every bucket some vector of the sentence stores, ascending, as gaps (the first, then differences) of numpy type `btype` (<u1, <u2 or <u4)',
  ref: 'map {idx, val, dtype, ridx, rval, rdtype} | nil: per bucket the value most candidates share, where the list varies',
  candidate: 'map {score, rank, matched, test, idx, val, dtype, ridx, rval, rdtype}: its vector minus the reference',
  'idx, ridx': 'bin: positions in `buckets`, ascending, as gaps of numpy type `itype`; an index is in at most one of the two',
  val: 'bin: the integer-valued entries, numpy type `dtype` (<i1, <i2 or <i4)',
  rval: 'bin: the other entries, numpy type `rdtype` (<f4 or <f8)',
};

/** The names file's fixed name (formats/names-file.ts writes it; kept here to stay pure). */
const NAMES_FILE = 'names.json';

const isObject = (v: unknown): v is Record<string, unknown> => v !== null && typeof v === 'object' && !Array.isArray(v);
const isDigest = (v: unknown): boolean => typeof v === 'string' && /^sha256:[0-9a-f]{64}$/.test(v);

const SHARD_FILE = /^shard-\d{5}\.msgpack(\.gz)?$/;
const COUNTS_FILE = /^shard-\d{5}\.counts\.msgpack$/;

/** Parses and checks manifest.json text of the shard directory `dir`. */
export function parseManifest(text: string, dir: string): ShardManifest {
  const fail = (why: string): never => {
    throw new UsageError(`\`${dir}\` is not a usable shard directory: manifest.json ${why}`);
  };
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    return fail(`is not valid JSON (${(e as Error).message}); run \`sheaf prepare\` again to rewrite it`);
  }
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) return fail('is not a JSON object');
  const m = raw as Record<string, unknown>;
  if (m.format !== SHARD_FORMAT) {
    return fail(`says format ${show(m.format)}; this sheaf reads \`${SHARD_FORMAT}\` (run \`sheaf prepare\` again to rewrite shards of an older format)`);
  }
  const h = m.hashing as Record<string, unknown> | undefined;
  if (!isObject(h) || !Number.isInteger(h.bits) || (h.bits as number) < 1 || (h.bits as number) > 31) return fail('has no valid `hashing.bits`');
  if (!Number.isSafeInteger(h.seed)) return fail('has no valid `hashing.seed`');
  // What readers and `prepare`'s up-to-date check use must be there and well typed.
  const p = m.pipeline;
  if (!isObject(p) || !isDigest(p.digest) || !isObject(p.config) || !Array.isArray(p.config.stages) || !Array.isArray(p.config.templates)) {
    return fail('has no valid `pipeline` {digest, config}');
  }
  if (p.files !== undefined && p.files !== PIPELINE_FILES) return fail(`names the pipeline files ${show(p.files)}: expected \`${PIPELINE_FILES}\` inside the directory`);
  const c = m.compression;
  if (!isObject(c) || (c.method !== 'gzip' && c.method !== 'none')) return fail('has no valid `compression.method` ("gzip" or "none")');
  const inputs = m.inputs;
  if (!isObject(inputs) || !isObject(inputs.gold) || !isDigest(inputs.gold.sha256) || !Array.isArray(inputs.nbest)
    || !inputs.nbest.every((x) => isObject(x) && isDigest(x.sha256)) || !(inputs.plan === null || (isObject(inputs.plan) && isDigest(inputs.plan.sha256)))) {
    return fail('has no valid `inputs` {gold, nbest, plan} with their sha256');
  }
  if (!Array.isArray(m.folds)) return fail('has no `folds` list');
  if (m.names !== undefined && m.names !== null && !(isObject(m.names) && m.names.file === NAMES_FILE)) {
    return fail(`names the names file ${show(isObject(m.names) ? m.names.file : m.names)}: expected \`${NAMES_FILE}\` inside the directory, or null`);
  }
  if (!Array.isArray(m.shards)) return fail('has no `shards` list');
  const seen = new Set<string>();
  for (const [k, s] of (m.shards as unknown[]).entries()) {
    const e = s as Record<string, unknown>;
    if (!e || typeof e.file !== 'string' || !SHARD_FILE.test(e.file)) return fail(`names shard ${k} ${show(e?.file)}: expected a plain name like \`shard-00000.msgpack.gz\` inside the directory`);
    if (typeof e.counts !== 'string' || !COUNTS_FILE.test(e.counts)) return fail(`names count file ${show(e.counts)} for shard ${k}: expected a plain name like \`shard-00000.counts.msgpack\``);
    if (seen.has(e.file)) return fail(`names \`${e.file}\` twice`);
    if (!isDigest(e.sha256) || !isDigest(e.countsSha256)) return fail(`shard ${k}: expected \`sha256\` and \`countsSha256\` to be sha256 digests`);
    seen.add(e.file);
    for (const key of ['sentences', 'candidates', 'bytes']) if (!Number.isSafeInteger(e[key]) || (e[key] as number) < 0) return fail(`shard ${k}: expected \`${key}\` to be a count`);
  }
  const t = m.totals as Record<string, unknown> | undefined;
  if (!isObject(t) || ['read', 'written', 'rejected', 'candidates'].some((k) => !Number.isSafeInteger(t[k]) || (t[k] as number) < 0)) return fail('has no valid `totals`');
  if ((t.written as number) + (t.rejected as number) !== t.read) return fail(`totals do not reconcile (read ${t.read} ≠ written ${t.written} + rejected ${t.rejected})`);
  if (t.candidatesRead !== undefined || t.candidatesDropped !== undefined) {
    if (![t.candidatesRead, t.candidates, t.candidatesDropped].every((x) => Number.isSafeInteger(x) && (x as number) >= 0)) return fail('has no valid candidate totals (`candidatesRead`, `candidates`, `candidatesDropped`)');
    if ((t.candidates as number) + (t.candidatesDropped as number) !== t.candidatesRead) return fail(`candidate totals do not reconcile (read ${t.candidatesRead} ≠ kept ${t.candidates} + dropped ${t.candidatesDropped})`);
  }
  const written = (m.shards as ShardEntry[]).reduce((a, s) => a + s.sentences, 0);
  if (written !== t.written) return fail(`lists shards holding ${written} sentences but says ${t.written} were written`);
  return raw as ShardManifest;
}

/** The manifest as JSON text. */
export function formatManifest(m: ShardManifest): string {
  return JSON.stringify(m, null, 2) + '\n';
}
