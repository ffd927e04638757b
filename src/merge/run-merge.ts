/**
 * `sheaf merge`: the parts of one prepare run (`--part I/N`) → one shard
 * directory, byte for byte what one machine would have written.
 *
 * The parts are checked as a set first (one run, every part once, none
 * missing: merge/part-set.ts). Then input positions 0, 1, 2 … are walked in
 * order; position p lives in part p mod N, whose stream (merge/part-stream.ts)
 * must give exactly p next — a written sentence, whose record bytes (its own
 * gzip member, or plain MessagePack) are copied unchanged into the shard
 * writer that cuts shards as prepare does, or a reject, whose line goes to
 * rejects.jsonl after the gold rejects (taken once). Memory: one read buffer
 * per open file per part and one shard's counts; no part is held whole.
 */
import { existsSync, readFileSync, realpathSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { UsageError } from '../core/errors.js';
import { emptyState } from '../formats/journal.js';
import { formatManifest, type NamesSummary, type ShardManifest } from '../formats/manifest.js';
import { formatNames } from '../formats/names-file.js';
import { decodePipelineFiles, PIPELINE_FILES } from '../formats/pipeline-files.js';
import { writeFileAtomic } from '../io/files.js';
import { environmentError } from '../io/fs-faults.js';
import { claimOutputFolder } from '../io/output-folder.js';
import { createProgress } from '../io/progress.js';
import { MANIFEST } from '../io/read-shards.js';
import { RejectsLog, REJECTS } from '../io/rejects-log.js';
import { ShardWriter } from '../io/shard-writer.js';
import { rebuildPipeline } from '../pipeline/pipeline.js';
import type { RejectRecord } from '../records.js';
import { clearPrepareOutput } from '../prepare/output-dir.js';
import { mergeNames } from './merge-names.js';
import { checkPartSet, loadPart } from './part-set.js';
import { isDroppedLine, PartStream } from './part-stream.js';

export interface MergeOptions {
  parts: string[];
  out: string;
  quiet?: boolean;
  /** Write into a folder holding other files. */
  force?: boolean;
}

export interface MergeSummary {
  out: string;
  parts: number;
  read: number;
  written: number;
  rejected: number;
  candidates: number;
  shards: number;
  bytes: number;
  seconds: number;
}

const real = (d: string) => {
  try {
    return realpathSync(d);
  } catch {
    return resolve(d);
  }
};

export async function runMerge(o: MergeOptions): Promise<MergeSummary> {
  const claimed: Claimed = { yes: false, open: [] };
  try {
    return await mergeOnce(o, claimed);
  } catch (e) {
    // merge starts over when run again: what it wrote so far only fills the disk (files still open would keep
    // their space after removal, so they are closed first).
    for (const f of claimed.open) f.abandon();
    if (claimed.yes) {
      try {
        clearPrepareOutput(o.out);
      } catch {
        // The error that stopped the run is the one to report.
      }
    }
    throw environmentError(e, o.out, 'write', 'run the same command again');
  }
}

/** What a failed merge must clean up: whether it took the output folder, and what it has open there. */
interface Claimed {
  yes: boolean;
  open: { abandon(): void }[];
}

async function mergeOnce(o: MergeOptions, claimed: Claimed): Promise<MergeSummary> {
  const started = Date.now();
  if (o.parts.length === 0) throw new UsageError('expected the folders of the parts to merge (made by `sheaf prepare … --part I/N`)');
  const parts = checkPartSet(o.parts.map(loadPart));
  if (parts.some((p) => real(p.dir) === real(o.out))) throw new UsageError(`the output \`${o.out}\` is one of the parts; merge into another folder`);
  const m0 = parts[0].manifest;
  const N = parts.length;
  const read = parts[0].info.read;

  // The pipeline the parts share (one digest), with the bytes of the files it reads: the same in every part.
  const filesBytes = parts.map((p) => {
    const f = join(p.dir, p.manifest.pipeline.files);
    if (!existsSync(f)) throw new UsageError(`\`${p.dir}\` has no ${p.manifest.pipeline.files}; make this part again`);
    return readFileSync(f);
  });
  const odd = parts.filter((_, k) => !filesBytes[k].equals(filesBytes[0]));
  if (odd.length > 0) throw new UsageError(`the ${m0.pipeline.files} of ${odd.map((p) => `\`${p.dir}\``).join(', ')} differs from that of \`${parts[0].dir}\`: make those parts again`);
  const files = decodePipelineFiles(filesBytes[0], join(parts[0].dir, m0.pipeline.files));
  const pipeline = rebuildPipeline(m0.pipeline.config, files);

  claimOutputFolder(o.out, 'shards', { force: o.force });
  claimed.yes = true;
  clearPrepareOutput(o.out);
  const progress = createProgress({ quiet: o.quiet ?? false, label: 'sheaf merge', totalBytes: null });
  const rejects = new RejectsLog(o.out, 0);
  const state = emptyState();
  const writer = new ShardWriter(o.out, {
    limits: pipeline.shards,
    bits: pipeline.hashing.bits,
    compressed: pipeline.encode.compression === 'gzip',
    templates: pipeline.config.templates.map((t) => t.template),
  }, state, () => {});
  claimed.open.push(rejects, { abandon: () => writer.abort() });
  const asReject = (line: string, dir: string): RejectRecord => {
    try {
      const r = JSON.parse(line);
      if (r && typeof r === 'object' && typeof r.code === 'string' && typeof r.reason === 'string') return r as RejectRecord;
    } catch {
      // named below
    }
    throw new UsageError(`\`${dir}\`: a line of ${REJECTS} is not a reject record {"file", "line", "column", "id", "code", "reason"}`);
  };

  let streams: PartStream[] = [];
  try {
    // The gold rejects head every part's log; they are written once, from part 0, and must agree.
    streams = parts.map((p, k) => new PartStream(p, k === 0 ? (line) => rejects.write(asReject(line, p.dir)) : undefined));
    const differ = streams.filter((s) => s.goldRejects !== streams[0].goldRejects);
    if (differ.length > 0) throw new UsageError(`the gold rejects of ${differ.map((s) => `\`${s.part.dir}\``).join(', ')} differ from those of \`${parts[0].dir}\`: the parts did not read the same gold treebank`);
    for (let p = 0; p < read; p++) {
      const s = streams[p % N];
      let item = s.next();
      // Candidates dropped from this position's list: their rejects lines first, as one machine writes them.
      let dropped = 0;
      while (item !== null && item.kind === 'reject' && item.pos === p && isDroppedLine(item.line)) {
        rejects.write(asReject(item.line, s.part.dir));
        dropped++;
        item = s.next();
      }
      if (item === null || item.pos !== p) {
        throw new UsageError(`\`${s.part.dir}\` (part ${s.part.info.part} of ${N}) ${item === null ? 'ends' : `gives input position ${item.pos}`} where position ${p} was expected: its files do not belong together; make this part again`);
      }
      if (item.kind === 'sentence') {
        const { side, bytes } = item;
        writer.sentence({ bytes, rawBytes: side.rawBytes, candidates: side.candidates, varying: side.varying, templateCounts: side.templateCounts, dropped: new Array(dropped) }, side.fold, side.source, p + 1);
      } else {
        if (dropped > 0) throw new UsageError(`\`${s.part.dir}\` (part ${s.part.info.part} of ${N}) drops candidates at input position ${p} but rejects its list: its files do not belong together; make this part again`);
        rejects.write(asReject(item.line, s.part.dir));
        writer.rejected(p + 1);
      }
      if ((p & 1023) === 0) progress.update({ sentences: p + 1, candidates: state.candidates, bytesDone: 0 });
    }
    for (const s of streams) {
      const extra = s.next();
      if (extra !== null) throw new UsageError(`\`${s.part.dir}\` (part ${s.part.info.part} of ${N}) holds input position ${extra.pos}, beyond the ${read} records of the inputs`);
      s.finish();
    }
  } catch (e) {
    rejects.abandon();
    writer.abort();
    throw e;
  }
  writer.close();
  rejects.finish();

  let names: NamesSummary | null = null;
  if (m0.names) {
    const hashing = { bits: m0.hashing.bits, seed: m0.hashing.seed, perBucket: m0.names.perBucket };
    const merged = mergeNames(parts.map((p) => ({ path: join(p.dir, p.info.keys!.file), sha256: p.info.keys!.sha256, count: p.info.keys!.count })), hashing);
    writeFileAtomic(join(o.out, m0.names.file), formatNames(merged.file));
    names = {
      file: m0.names.file,
      perBucket: m0.names.perBucket,
      keys: merged.keys,
      buckets: merged.buckets,
      collisionRate: merged.keys === 0 ? 0 : 1 - merged.buckets / merged.keys,
      expectedRate: merged.keys / (2 * 2 ** m0.hashing.bits),
    };
  }

  const goldRejected = m0.totals.goldRejected;
  if (state.written + state.rejected !== read) throw new Error(`totals do not reconcile: read ${read}, written ${state.written}, rejected ${state.rejected}`);
  // Part 0's manifest with the whole run's shards and totals (keys in the order prepare writes them).
  const manifest: ShardManifest = {
    ...m0,
    folds: state.folds,
    shards: state.shards,
    totals: m0.totals.candidatesRead === undefined
      ? { ...m0.totals, read, written: state.written, rejected: state.rejected, candidates: state.candidates, noCandidates: state.noCandidates }
      : { ...m0.totals, read, written: state.written, rejected: state.rejected, candidatesRead: state.candidates + (state.candidatesDropped ?? 0), candidates: state.candidates, candidatesDropped: state.candidatesDropped ?? 0, noCandidates: state.noCandidates },
    rejects: { file: REJECTS, count: state.rejected + goldRejected + (state.candidatesDropped ?? 0) },
    names,
  };
  writeFileAtomic(join(o.out, PIPELINE_FILES), filesBytes[0]);
  writeFileAtomic(join(o.out, MANIFEST), formatManifest(manifest));
  const summary: MergeSummary = {
    out: o.out,
    parts: N,
    read,
    written: state.written,
    rejected: state.rejected,
    candidates: state.candidates,
    shards: state.shards.length,
    bytes: state.shards.reduce((a, s) => a + s.bytes, 0),
    seconds: (Date.now() - started) / 1000,
  };
  const n = (x: number) => x.toLocaleString('en-US');
  progress.done(`sheaf merge: ${N} part(s): ${n(read)} records: wrote ${n(state.written)} (${n(state.candidates)} candidates) in ${n(state.shards.length)} shard(s), rejected ${n(state.rejected)}; ${summary.seconds.toFixed(1)} s`);
  return summary;
}
