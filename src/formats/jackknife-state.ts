/**
 * `NBEST_DIR/jackknife.json`: what each n-best output was made from, so a
 * re-run redoes only what changed, and says why it re-made what it re-made.
 *
 *   { "format": "sheaf-jackknife/1",
 *     "outputs": { "fold-0.jsonl.gz": { "fold": 0, "model": {"parser", "fingerprint"},
 *                  "input": "sha256:…", "nbest": 50, "sentences": 400,
 *                  "sha256": "sha256:…", "why": "…" }, … } }
 *
 * `input` is the digest of the parsed sentences' treebank (a fold's held-out
 * file, or a `--parse` file); `why` says why the output was last (re)made.
 * Pure: parsing and formatting only.
 */
import type { ModelIdentity } from '../records.js';
import { isModelIdentity } from './fold-plan.js';

export const JACKKNIFE_FORMAT = 'sheaf-jackknife/1';

export interface OutputRecord {
  /** The fold parsed, or null for a `--parse` file. */
  fold: number | null;
  model: ModelIdentity;
  input: string;
  nbest: number;
  sentences: number;
  sha256: string;
  why: string;
}

export interface JackknifeState {
  format: typeof JACKKNIFE_FORMAT;
  outputs: Record<string, OutputRecord>;
}

export function emptyJackknifeState(): JackknifeState {
  return { format: JACKKNIFE_FORMAT, outputs: {} };
}

/** Reads the state; anything unreadable counts as no state (every output is then re-made, and says so). */
export function parseJackknifeState(text: string): JackknifeState {
  try {
    const raw = JSON.parse(text);
    if (raw?.format !== JACKKNIFE_FORMAT || raw.outputs === null || typeof raw.outputs !== 'object') return emptyJackknifeState();
    const outputs: Record<string, OutputRecord> = {};
    for (const [name, r] of Object.entries(raw.outputs as Record<string, OutputRecord>)) {
      if (!/^[\w.-]+\.jsonl\.gz$/.test(name) || !r || !isModelIdentity(r.model) || typeof r.input !== 'string' || !Number.isInteger(r.nbest) || typeof r.sha256 !== 'string') continue;
      outputs[name] = { fold: Number.isInteger(r.fold) ? r.fold : null, model: r.model, input: r.input, nbest: r.nbest, sentences: r.sentences ?? 0, sha256: r.sha256, why: String(r.why ?? '') };
    }
    return { format: JACKKNIFE_FORMAT, outputs };
  } catch {
    return emptyJackknifeState();
  }
}

export function formatJackknifeState(s: JackknifeState): string {
  const names = Object.keys(s.outputs).sort();
  return JSON.stringify({ format: s.format, outputs: Object.fromEntries(names.map((n) => [n, s.outputs[n]])) }, null, 2) + '\n';
}

/** Why an output must be (re)made, or null when the recorded one still holds. */
export function staleReason(had: OutputRecord | undefined, want: Omit<OutputRecord, 'sentences' | 'sha256' | 'why'>, fileOk: boolean): string | null {
  if (!had) return 'no earlier output';
  if (!fileOk) return 'the output file is missing or not what was recorded (an interrupted run, or an edit)';
  if (had.input !== want.input) return 'its sentences changed';
  if (had.model.fingerprint !== want.model.fingerprint) return had.model.parser !== want.model.parser ? `the base parser changed (${had.model.parser} → ${want.model.parser})` : 'the base model changed (its training part or the parser settings)';
  if (had.nbest !== want.nbest) return `the list depth changed (${had.nbest} → ${want.nbest})`;
  return null;
}
