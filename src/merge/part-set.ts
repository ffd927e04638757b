/**
 * The parts given to `sheaf merge`: each folder read and checked on its own
 * (complete, a part), then the set: one run (pipeline, inputs, number of
 * parts, tool), every part once, none missing. Every refusal names the
 * folders at fault and what to do.
 */
import { existsSync, readFileSync, realpathSync } from 'node:fs';
import { join } from 'node:path';
import { UsageError } from '../core/errors.js';
import type { ShardManifest } from '../formats/manifest.js';
import { parsePartInfo, PART_FILE, type PartInfo } from '../formats/part-file.js';
import { MANIFEST, readManifest } from '../io/read-shards.js';
import { JOURNAL } from '../prepare/output-dir.js';

export interface PartFolder {
  dir: string;
  manifest: ShardManifest;
  info: PartInfo;
}

/** What the journal of an unfinished part says it is, if anything. */
function journalPart(dir: string): string {
  try {
    const lines = readFileSync(join(dir, JOURNAL), 'utf8').split('\n').filter((l) => l.trim());
    const p = JSON.parse(lines[0]).header?.part;
    const shards = lines.length - 1;
    return p && Number.isInteger(p.index) && Number.isInteger(p.of) ? ` (part ${p.index} of ${p.of} by its journal, ${shards} shard(s) complete)` : '';
  } catch {
    return '';
  }
}

/** Reads one part folder; refuses folders that are not complete parts. */
export function loadPart(dir: string): PartFolder {
  if (!existsSync(dir)) throw new UsageError(`\`${dir}\` does not exist (expected a folder written by \`sheaf prepare … --part I/N\`)`);
  if (!existsSync(join(dir, MANIFEST))) {
    if (existsSync(join(dir, JOURNAL)) || existsSync(join(dir, `${PART_FILE}.tmp`))) {
      throw new UsageError(`\`${dir}\` is an incomplete part${journalPart(dir)}: its prepare run did not finish (no manifest.json); run the same \`sheaf prepare … --part I/N\` again to resume it, then merge`);
    }
    throw new UsageError(`\`${dir}\` is not a complete part (no manifest.json; expected a folder written by \`sheaf prepare … --part I/N\`)`);
  }
  if (!existsSync(join(dir, PART_FILE))) {
    throw new UsageError(`\`${dir}\` is a shard directory made without \`--part\` (no ${PART_FILE}); merge takes the parts of one run, made with \`sheaf prepare … --part I/N\``);
  }
  const manifest = readManifest(dir);
  const info = parsePartInfo(readFileSync(join(dir, PART_FILE), 'utf8'), dir);
  const bad = (why: string): never => {
    throw new UsageError(`\`${dir}\` is not a usable part: ${why}`);
  };
  if (manifest.totals.read !== info.share) bad(`manifest.json says ${manifest.totals.read} records were read, ${PART_FILE} says its share is ${info.share}`);
  if (info.sides.length !== manifest.shards.length) bad(`${PART_FILE} lists ${info.sides.length} side file(s) for ${manifest.shards.length} shard(s)`);
  info.sides.forEach((s, k) => {
    if (s.sentences !== manifest.shards[k].sentences) bad(`side file ${s.file} holds ${s.sentences} sentences, shard ${manifest.shards[k].file} ${manifest.shards[k].sentences}`);
  });
  // One position per rejects line: each rejected record, and each candidate dropped from a kept list.
  const lines = manifest.totals.rejected + (manifest.totals.candidatesDropped ?? 0);
  if (info.rejectPositions.count !== lines) bad(`${info.rejectPositions.count} reject position(s) for ${manifest.totals.rejected} rejected record(s) and ${manifest.totals.candidatesDropped ?? 0} dropped candidate(s)`);
  if ((info.keys === null) !== (manifest.names === null)) bad(`${manifest.names ? 'names are kept but no key list is' : 'a key list is kept without names'}`);
  const records = manifest.inputs.nbest.reduce((a, x) => a + x.records, 0);
  if (records !== info.read) bad(`the inputs hold ${records} records but ${PART_FILE} says ${info.read} were read`);
  return { dir, manifest, info };
}

/** The fields every part of one run shares, labelled for messages. */
function identity(p: PartFolder): [string, string][] {
  const m = p.manifest;
  return [
    ['pipeline digest', m.pipeline.digest],
    ['number of parts', String(p.info.of)],
    ['gold treebank (sha256)', m.inputs.gold.sha256],
    ['n-best dumps (sha256, records)', m.inputs.nbest.map((x) => `${x.sha256} ${x.records}`).join(', ')],
    ['fold plan (sha256)', m.inputs.plan?.sha256 ?? 'none'],
    ['sheaf version', m.tool.version],
    ['gold counts (trees, rejected, without a list)', `${m.totals.goldTrees}, ${m.totals.goldRejected}, ${m.totals.goldWithoutNbest}`],
  ];
}

/**
 * Checks that the parts are one run, each part once and none missing;
 * returns them ordered by part index.
 */
export function checkPartSet(parts: PartFolder[]): PartFolder[] {
  if (parts.length === 0) throw new UsageError('expected at least one part folder');
  // Foreign parts: those that differ from the run most parts agree on (on a tie, the first given).
  const keys = parts.map((p) => JSON.stringify(identity(p).map(([, v]) => v)));
  const votes = new Map<string, number>();
  for (const k of keys) votes.set(k, (votes.get(k) ?? 0) + 1);
  let run = keys[0];
  for (const [k, n] of votes) if (n > votes.get(run)!) run = k;
  const reference = parts[keys.indexOf(run)];
  const foreign = parts.filter((_, i) => keys[i] !== run);
  if (foreign.length > 0) {
    const ref = identity(reference);
    const lines = foreign.map((p) => {
      const diffs = identity(p).flatMap(([label, v], k) => (v === ref[k][1] ? [] : [`${label} ${v} (the others: ${ref[k][1]})`]));
      return `  \`${p.dir}\` (part ${p.info.part} of ${p.info.of}): ${diffs.join('; ')}`;
    });
    throw new UsageError(`${foreign.length === 1 ? 'a foreign part: this folder is' : `${foreign.length} foreign parts: these folders are`} not from the same run as the others (same pipeline, inputs and number of parts):\n${lines.join('\n')}\nmerge only the parts of one \`sheaf prepare … --part I/N\` run`);
  }
  // The same folder twice, or two folders holding the same part.
  const byIndex = new Map<number, PartFolder[]>();
  for (const p of parts) byIndex.set(p.info.part, [...(byIndex.get(p.info.part) ?? []), p]);
  const twice = [...byIndex].filter(([, ps]) => ps.length > 1).sort((a, b) => a[0] - b[0]);
  if (twice.length > 0) {
    const real = (d: string) => { try { return realpathSync(d); } catch { return d; } };
    const lines = twice.map(([i, ps]) => {
      const same = new Set(ps.map((p) => real(p.dir))).size === 1;
      return `  part ${i} of ${ps[0].info.of}: ${ps.map((p) => `\`${p.dir}\``).join(', ')}${same ? ' (the same folder)' : ''}`;
    });
    throw new UsageError(`duplicated part${twice.length > 1 ? 's' : ''}: each part must be given once, or its records would be written twice:\n${lines.join('\n')}`);
  }
  const of = reference.info.of;
  const missing = [...Array(of).keys()].filter((i) => !byIndex.has(i));
  if (missing.length > 0) {
    const shown = missing.length > 20 ? `${missing.slice(0, 20).join(', ')} … (${missing.length} in all)` : missing.join(', ');
    throw new UsageError(`missing part${missing.length > 1 ? 's' : ''} ${shown} of ${of} (given: ${[...byIndex.keys()].sort((a, b) => a - b).map((i) => `${i} in \`${byIndex.get(i)![0].dir}\``).join(', ')}); give the folders of all ${of} parts`);
  }
  const sorted = [...parts].sort((a, b) => a.info.part - b.info.part);
  // What the merged manifest takes from part 0 must be what every part says (a damaged manifest.json that
  // still parses would otherwise go into the merge unnoticed).
  const first = shared(sorted[0]);
  for (const p of sorted.slice(1)) {
    const mine = shared(p);
    const field = Object.keys(first).find((k) => JSON.stringify(first[k]) !== JSON.stringify(mine[k])) ?? Object.keys(mine).find((k) => !(k in first));
    if (field === 'inputs') {
      // The same files (identity() compared their sha256) named by other paths: rejects.jsonl and the manifest record
      // the paths, so the merge could not be one machine's output.
      const a = inputPaths(sorted[0]);
      const b = inputPaths(p);
      const k = a.findIndex((x, i) => x !== b[i]);
      if (k >= 0) {
        throw new UsageError(`\`${sorted[0].dir}\` (part 0) and \`${p.dir}\` (part ${p.info.part}) name the same input by different paths (\`${a[k]}\` and \`${b[k]}\`); rejects.jsonl and the manifest record input paths, so make every part with the same paths (one command line, run from the same folder)`);
      }
    }
    if (field !== undefined) {
      throw new UsageError(`the manifest.json of \`${sorted[0].dir}\` (part 0) and of \`${p.dir}\` (part ${p.info.part}) disagree on \`${field}\`: one is damaged, or the parts were made with different command lines; make the parts again with one \`sheaf prepare … --part I/N\` command line`);
    }
  }
  return sorted;
}

/** The fields of a part's manifest that are the whole run's, not the part's own (input paths included). */
function shared(p: PartFolder): Record<string, unknown> {
  const { folds: _f, shards: _s, totals, rejects: _r, names, ...rest } = p.manifest;
  return { ...rest, goldTotals: [totals.goldTrees, totals.goldRejected, totals.goldWithoutNbest], names: names ? { file: names.file, perBucket: names.perBucket } : null };
}

/** The input paths a part's manifest records, in order. */
const inputPaths = (p: PartFolder) => [p.manifest.inputs.gold.path, ...p.manifest.inputs.nbest.map((x) => x.path), ...(p.manifest.inputs.plan ? [p.manifest.inputs.plan.path] : [])];
