/**
 * The fold plan (`folds.json`, format `sheaf-folds/1`): which sentence ids
 * are held out in which fold, and — once jackknifing has run — the identity
 * of the base model trained without each fold.
 *
 *   { "format": "sheaf-folds/1", "k": 5, "seed": 1, "method": "hash",
 *     "folds": [ { "fold": 0, "ids": ["1", "6", …], "digest": "sha256:…",
 *                  "model": { "parser": "…", "fingerprint": "…" } | null }, … ] }
 *
 * Pure: parsing and checking only; reading the file is the caller's.
 */
import { UsageError } from '../core/errors.js';
import { notWellFormed } from '../core/well-formed.js';
import type { ModelIdentity } from '../records.js';
import { show } from '../core/show.js';

export const FOLDS_FORMAT = 'sheaf-folds/1';

export interface FoldEntry {
  fold: number;
  ids: string[];
  /** Digest of the fold's held-out trees (set by `sheaf split`), or null when not known. */
  digest: string | null;
  /** The base model trained without this fold, or null until known. */
  model: ModelIdentity | null;
}

export interface FoldPlan {
  format: typeof FOLDS_FORMAT;
  k: number;
  seed: number | null;
  method: 'hash' | 'blocks' | null;
  folds: FoldEntry[];
}

const has = (o: object, key: string) => Object.prototype.hasOwnProperty.call(o, key);

/** Checks a model identity: `{parser: string, fingerprint: string}`, both non-empty. */
export function isModelIdentity(v: unknown): v is ModelIdentity {
  return v !== null && typeof v === 'object' && !Array.isArray(v)
    && typeof (v as ModelIdentity).parser === 'string' && typeof (v as ModelIdentity).fingerprint === 'string'
    // Empty names cannot be told from "no source" (manifests count unnamed sources as empty strings).
    && (v as ModelIdentity).parser.length > 0 && (v as ModelIdentity).fingerprint.length > 0
    && Object.keys(v as object).every((k) => k === 'parser' || k === 'fingerprint');
}

/** Parses and checks folds.json text; `file` names it in messages. */
export function parseFoldPlan(text: string, file: string): FoldPlan {
  let raw: unknown;
  try {
    raw = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (e) {
    throw new UsageError(`${file}: expected a JSON fold plan: ${(e as Error).message}`, { cause: e });
  }
  const shape = `{"format": "${FOLDS_FORMAT}", "k", "folds": [{"fold", "ids", "model"}]}`;
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw)) throw new UsageError(`${file}: expected a fold plan ${shape}`);
  const r = raw as Record<string, unknown>;
  if (r.format !== FOLDS_FORMAT) throw new UsageError(`${file}: expected \`format\` to be \`${FOLDS_FORMAT}\`, got ${show(r.format)}`);
  if (!Array.isArray(r.folds) || r.folds.length === 0) throw new UsageError(`${file}: expected \`folds\` to be a non-empty list; a plan looks like ${shape}`);
  const seenFolds = new Set<number>();
  const seenIds = new Map<string, number>();
  const folds: FoldEntry[] = r.folds.map((f: unknown, k: number) => {
    const at = `${file}: folds[${k}]`;
    if (f === null || typeof f !== 'object' || Array.isArray(f)) throw new UsageError(`${at}: expected {"fold": integer, "ids": [...], "model": {"parser", "fingerprint"} | null}`);
    const e = f as Record<string, unknown>;
    if (!Number.isSafeInteger(e.fold) || (e.fold as number) < 0) throw new UsageError(`${at}: expected \`fold\` to be an integer ≥ 0, got ${show(e.fold)}`);
    const fold = e.fold as number;
    if (seenFolds.has(fold)) throw new UsageError(`${at}: fold ${fold} appears twice`);
    seenFolds.add(fold);
    if (!Array.isArray(e.ids) || e.ids.some((x) => typeof x !== 'string' && !(typeof x === 'number' && Number.isFinite(x)))) {
      throw new UsageError(`${at}: expected \`ids\` to be a list of sentence ids (strings)`);
    }
    const ids = e.ids.map(String);
    for (const id of ids) {
      const notText = notWellFormed(id, 'a sentence id');
      if (notText) throw new UsageError(`${at}: ${notText}`);
      const prior = seenIds.get(id);
      if (prior !== undefined) throw new UsageError(`${at}: sentence \`${id}\` is also in fold ${prior}; a sentence is held out in exactly one fold`);
      seenIds.set(id, fold);
    }
    const model = has(e, 'model') ? e.model : null;
    if (model !== null && !isModelIdentity(model)) {
      throw new UsageError(`${at}: expected \`model\` to be null or {"parser": string, "fingerprint": string} with both non-empty (\`sheaf jackknife\` fills it in), got ${show(model)}`);
    }
    const digest = has(e, 'digest') ? e.digest : null;
    if (digest !== null && typeof digest !== 'string') throw new UsageError(`${at}: expected \`digest\` to be a string or null`);
    return { fold, ids, digest: digest as string | null, model: model as ModelIdentity | null };
  });
  const k = has(r, 'k') ? r.k : folds.length;
  if (k !== folds.length) throw new UsageError(`${file}: \`k\` is ${show(k)} but the plan lists ${folds.length} folds`);
  const seed = has(r, 'seed') ? r.seed : null;
  if (seed !== null && !Number.isSafeInteger(seed)) throw new UsageError(`${file}: expected \`seed\` to be an integer or null`);
  const method = has(r, 'method') ? r.method : null;
  if (method !== null && method !== 'hash' && method !== 'blocks') throw new UsageError(`${file}: expected \`method\` to be "hash", "blocks" or null`);
  return { format: FOLDS_FORMAT, k: folds.length, seed: seed as number | null, method: method as FoldPlan['method'], folds };
}

/** The plan as folds.json text (stable key order). */
export function formatFoldPlan(p: FoldPlan): string {
  const folds = p.folds.map((f) => `    {"fold": ${f.fold}, "digest": ${JSON.stringify(f.digest)}, "model": ${JSON.stringify(f.model)}, "ids": ${JSON.stringify(f.ids)}}`);
  return `{\n  "format": "${FOLDS_FORMAT}",\n  "k": ${p.k},\n  "seed": ${JSON.stringify(p.seed)},\n  "method": ${JSON.stringify(p.method)},\n  "folds": [\n${folds.join(',\n')}\n  ]\n}\n`;
}
