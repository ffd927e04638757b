/**
 * Stage `read-nbest.v1`: one decoded n-best record → a checked NbestRecord or
 * a reject naming what was expected. The bytes (files, gzip, stdin, JSON
 * Lines or a JSON array) are io/read-nbest.ts's business.
 */
import { notWellFormed } from '../core/well-formed.js';
import type { CandidateText, NbestRecord, RejectCode, RejectRecord } from '../records.js';
import type { StageSpec } from './stage.js';
import { show } from '../core/show.js';

export const readNbestSpec: StageSpec = {
  id: 'read-nbest.v1',
  summary: 'read n-best dumps (JSONL or a JSON array, .gz, stdin) sentence by sentence',
  needs: [],
  adds: ['id', 'fold', 'source', 'candidateTexts'],
  options: {
    maxCandidates: { type: 'integer', default: 0, min: 0, max: 100000, doc: 'keep at most this many candidates per sentence (0: all)' },
  },
};

export type NbestItem = { record: NbestRecord } | { reject: RejectRecord };

function reject(file: string, line: number | null, id: string | null, code: RejectCode, reason: string): NbestItem {
  return { reject: { file, line, column: null, id, code, reason } };
}

const has = (o: object, key: string) => Object.prototype.hasOwnProperty.call(o, key);

/**
 * Checks one decoded record. `line` is 1-based (0 inside a JSON array, where
 * `index` names the element); `maxCandidates` > 0 keeps the first few.
 */
export function checkNbestRecord(value: unknown, file: string, line: number, index: number, maxCandidates = 0): NbestItem {
  const at = line > 0 ? line : null;
  const where = line > 0 ? '' : ` (array element ${index})`;
  if (value === null || typeof value !== 'object' || Array.isArray(value)) {
    return reject(file, at, null, 'bad-json', `expected a JSON object {"id", "fold", "source", "candidates"}${where}`);
  }
  const r = value as Record<string, unknown>;
  const rawId = has(r, 'id') ? r.id : undefined;
  const id = typeof rawId === 'string' ? rawId : typeof rawId === 'number' && Number.isFinite(rawId) ? String(rawId) : null;
  if (id === null) return reject(file, at, null, 'bad-field', `expected \`id\` to be a string or a number, got ${show(rawId)}${where}`);
  const badId = notWellFormed(id, '`id`');
  if (badId) return reject(file, at, id, 'bad-field', badId + where);
  let fold: number | null = null;
  const rawFold = has(r, 'fold') ? r.fold : null;
  if (rawFold !== undefined && rawFold !== null) {
    if (typeof rawFold !== 'number' || !Number.isSafeInteger(rawFold) || rawFold < 0) {
      return reject(file, at, id, 'bad-field', `expected \`fold\` to be an integer from 0 to 2^53 − 1, or null, got ${show(rawFold)}${where}`);
    }
    fold = rawFold;
  }
  let source: NbestRecord['source'] = null;
  const rawSource = has(r, 'source') ? r.source : null;
  if (rawSource !== undefined && rawSource !== null) {
    const s = rawSource as Record<string, unknown>;
    if (typeof s !== 'object' || Array.isArray(s) || typeof s.parser !== 'string' || typeof s.fingerprint !== 'string') {
      return reject(file, at, id, 'bad-field', `expected \`source\` to be {"parser": string, "fingerprint": string}${where}`);
    }
    source = { parser: s.parser, fingerprint: s.fingerprint };
  }
  const list = has(r, 'candidates') ? r.candidates : undefined;
  if (!Array.isArray(list)) return reject(file, at, id, 'bad-field', `expected \`candidates\` to be a list of {"tree", "score"}${where}`);
  const n = maxCandidates > 0 ? Math.min(maxCandidates, list.length) : list.length;
  const candidates: CandidateText[] = new Array(n);
  for (let k = 0; k < n; k++) {
    const c = list[k] as Record<string, unknown> | null;
    if (c === null || typeof c !== 'object' || Array.isArray(c)) return reject(file, at, id, 'bad-field', `expected candidate ${k} to be an object {"tree", "score"}${where}`);
    if (typeof c.tree !== 'string') return reject(file, at, id, 'bad-field', `expected candidate ${k}'s \`tree\` to be a string${where}`);
    const badTree = notWellFormed(c.tree, `candidate ${k}'s \`tree\``);
    if (badTree) return reject(file, at, id, 'bad-field', badTree + where);
    if (typeof c.score !== 'number' || !Number.isFinite(c.score)) {
      return reject(file, at, id, 'bad-field', `expected candidate ${k}'s \`score\` to be a finite number, got ${show(c.score)}${where}`);
    }
    // Feature values are float32: a score beyond its range would become ±Infinity in the shards.
    if (!Number.isFinite(Math.fround(c.score))) {
      return reject(file, at, id, 'bad-field', `expected candidate ${k}'s \`score\` to be within the float32 range (magnitude below 3.4e38; feature values are float32), got ${c.score}${where}`);
    }
    candidates[k] = { tree: c.tree, score: c.score };
  }
  return { record: { id, fold, source, candidates, file, line, index } };
}
