/**
 * Stage `align-gold.v1`: join each n-best list with its gold tree by id, and
 * refuse lists that could have leaked: with a fold plan, a list is accepted
 * for training only if it comes from the base model of the sentence's own
 * fold (the model trained without it). Pure decisions; the gold index that
 * answers the lookups is io/gold-index.ts.
 */
import type { ModelIdentity, RejectCode } from '../records.js';
import type { StageSpec } from './stage.js';

export const alignGoldSpec: StageSpec = {
  id: 'align-gold.v1',
  summary: 'join each sentence with its gold tree by id; refuse lists from a base model that saw the sentence',
  needs: ['id'],
  adds: ['gold'],
  options: {},
};

/** Where the plan puts a sentence: its held-out fold and that fold's base model (null: not known yet). */
export interface PlannedFold {
  fold: number;
  model: ModelIdentity | null;
}

/**
 * Why the list of sentence `id` may not be used for training, or null if it
 * may. `planned` is undefined when the plan does not hold the sentence.
 */
export function checkProvenance(id: string, planned: PlannedFold | undefined, listFold: number | null, source: ModelIdentity | null): string | null {
  if (!planned) return `sentence \`${id}\` is in no fold of the plan, so nothing shows its base model did not see it`;
  if (listFold !== planned.fold) {
    return `sentence \`${id}\` is in fold ${planned.fold} of the plan, but this list comes from the base model of fold ${listFold ?? 'none'}: that model may have seen it`;
  }
  const m = planned.model;
  if (m && (source === null || m.fingerprint !== source.fingerprint)) {
    return `sentence \`${id}\` (fold ${planned.fold}): the plan's base model for that fold is \`${m.parser}\` ${m.fingerprint}, but the list says ${source ? `\`${source.parser}\` ${source.fingerprint}` : 'nothing about its source'}`;
  }
  return null;
}

export interface JoinRefusal {
  code: RejectCode;
  reason: string;
}

/**
 * The join's verdict for one list: `found` says whether a gold tree has the
 * id, `firstSight` whether no earlier list had it; `planned` as above, or
 * `null` when no plan was given (then provenance is not checked).
 */
export function joinVerdict(id: string, found: boolean, firstSight: boolean, planned: PlannedFold | undefined | null, listFold: number | null, source: ModelIdentity | null): JoinRefusal | null {
  if (!found) return { code: 'no-gold', reason: `no gold tree has the id \`${id}\`` };
  if (!firstSight) return { code: 'duplicate-id', reason: `the id \`${id}\` was already read from a dump; this list is refused` };
  if (planned === null) return null;
  const leak = checkProvenance(id, planned, listFold, source);
  return leak ? { code: 'leak', reason: leak } : null;
}
