/**
 * `journal.jsonl`, what makes an interrupted `prepare` resumable: a header
 * line (the pipeline digest and the inputs' paths, sizes and mtimes), then
 * one line per completed shard with the writer's state after it. A re-run
 * whose header matches resumes after the last complete line (a torn last
 * line, from a run killed mid-append, is ignored).
 *
 * Pure: no node: imports.
 */
import type { FoldStats, ShardEntry } from './manifest.js';

/** The writer's running totals, journaled after every shard. */
export interface WriterState {
  shards: ShardEntry[];
  /** Input records consumed (written or rejected) through the last complete shard. */
  consumed: number;
  written: number;
  rejected: number;
  candidates: number;
  /** Candidates dropped from kept lists (journals of earlier versions lack it: 0). */
  candidatesDropped: number;
  noCandidates: number;
  /** Length of rejects.jsonl.tmp when the shard completed. */
  rejectsBytes: number;
  folds: FoldStats[];
}

export function emptyState(): WriterState {
  return { shards: [], consumed: 0, written: 0, rejected: 0, candidates: 0, candidatesDropped: 0, noCandidates: 0, rejectsBytes: 0, folds: [] };
}

export function headerLine(header: unknown, state: WriterState): string {
  return JSON.stringify({ header, state }) + '\n';
}

export function shardLine(shard: number, state: WriterState): string {
  return JSON.stringify({ shard, state }) + '\n';
}

/** The last complete state of a journal whose header equals `header`, or null. */
export function lastState(text: string, header: unknown): WriterState | null {
  const lines = text.split('\n').filter((l) => l.trim());
  if (lines.length === 0) return null;
  try {
    if (JSON.stringify(JSON.parse(lines[0]).header) !== JSON.stringify(header)) return null;
  } catch {
    return null;
  }
  let state: WriterState | null = null;
  for (const l of lines.slice(1)) {
    let next: unknown;
    try {
      next = (JSON.parse(l) as { state?: unknown } | null)?.state;
    } catch {
      break; // a torn last line: the shard before it is the last complete one
    }
    if (!isState(next)) break; // damaged: resume from the last good line (or restart)
    state = next;
  }
  return state;
}

function isState(v: unknown): v is WriterState {
  if (v === null || typeof v !== 'object' || Array.isArray(v)) return false;
  const s = v as Record<string, unknown>;
  const count = (x: unknown) => Number.isSafeInteger(x) && (x as number) >= 0;
  return Array.isArray(s.shards) && Array.isArray(s.folds) && ['consumed', 'written', 'rejected', 'candidates', 'noCandidates', 'rejectsBytes'].every((k) => count(s[k]))
    && (s.candidatesDropped === undefined || count(s.candidatesDropped))
    && s.shards.every((e) => e !== null && typeof e === 'object' && typeof (e as Record<string, unknown>).file === 'string'
      && /^shard-\d{5}\.msgpack(\.gz)?$/.test((e as Record<string, string>).file) && typeof (e as Record<string, unknown>).sha256 === 'string');
}
