/** The files a prepare run owns in its output folder. */
import { existsSync, readdirSync, unlinkSync } from 'node:fs';
import { join } from 'node:path';
import { removeTemporaries } from '../io/fs-faults.js';

export const JOURNAL = 'journal.jsonl';

const OWNED = /^(shard-\d{5}\.(counts\.|part\.)?msgpack(\.gz)?|manifest\.json|rejects\.jsonl|names\.json|journal\.jsonl|pipeline-files\.msgpack|\.gold-spill|part\.json|rejects\.positions|part-keys\.jsonl)(\.tmp)?$/;

/** Removes every file a prepare run writes (a fresh start). */
export function clearPrepareOutput(dir: string): void {
  for (const f of readdirSync(dir)) if (OWNED.test(f)) unlinkSync(join(dir, f));
}

/**
 * After a failed run: removes the run's temporary files (a partial shard,
 * the gold spill, half-written count, manifest or names files) so that a full
 * disk does not stay full, and keeps what a resume needs — the completed
 * shards, the journal, and the rejects log so far (only with a journal to
 * resume from). Quiet when the folder is missing or unreadable.
 */
export function keepWhatResumeNeeds(dir: string): void {
  const resumable = existsSync(join(dir, JOURNAL));
  removeTemporaries(dir, OWNED, (f) => resumable && f === 'rejects.jsonl.tmp');
}
