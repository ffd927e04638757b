/** Reads and writes `PLAN_DIR/folds.json` (format in formats/fold-plan.ts); writes are atomic. */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { UsageError } from '../core/errors.js';
import { formatFoldPlan, parseFoldPlan, type FoldPlan } from '../formats/fold-plan.js';
import { writeFileAtomic } from './files.js';

export const FOLDS_FILE = 'folds.json';

export function loadFoldPlan(dir: string): { file: string; plan: FoldPlan } {
  const file = join(dir, FOLDS_FILE);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new UsageError(`cannot read the fold plan \`${file}\` (expected a folder made by \`sheaf split\`): ${(e as Error).message}`, { cause: e });
  }
  return { file, plan: parseFoldPlan(text, file) };
}

export function saveFoldPlan(dir: string, plan: FoldPlan): void {
  writeFileAtomic(join(dir, FOLDS_FILE), formatFoldPlan(plan));
}
