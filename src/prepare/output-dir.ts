/** The files a prepare run owns in its output folder. */
import { readdirSync, unlinkSync } from 'node:fs';
import { join } from 'node:path';

export const JOURNAL = 'journal.jsonl';

const OWNED = /^(shard-\d{5}\.(counts\.|part\.)?msgpack(\.gz)?|manifest\.json|rejects\.jsonl|names\.json|journal\.jsonl|pipeline-files\.msgpack|\.gold-spill|part\.json|rejects\.positions|part-keys\.jsonl)(\.tmp)?$/;

/** Removes every file a prepare run writes (a fresh start). */
export function clearPrepareOutput(dir: string): void {
  for (const f of readdirSync(dir)) if (OWNED.test(f)) unlinkSync(join(dir, f));
}
