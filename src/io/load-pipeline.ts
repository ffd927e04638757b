/**
 * Reads a pipeline file and validates it (src/pipeline/pipeline.ts) before
 * any data is read. Paths inside it (the lexicon) are resolved against the
 * pipeline file's folder. The config digest is the sha256 of the resolved
 * configuration's canonical JSON (sorted keys), plus the bytes of every file
 * the pipeline reads, so a changed lexicon changes the digest.
 */
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { UsageError } from '../core/errors.js';
import { buildPipeline, type Pipeline } from '../pipeline/pipeline.js';

export interface LoadedPipeline extends Pipeline {
  file: string;
  /** `sha256:<hex>` of the canonical config and the files it read. */
  digest: string;
}

/** JSON with object keys sorted at every level (stable bytes for digests). */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (value !== null && typeof value === 'object') {
    const keys = Object.keys(value as object).sort();
    return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson((value as Record<string, unknown>)[k])}`).join(',')}}`;
  }
  return JSON.stringify(value);
}

export function loadPipeline(file: string): LoadedPipeline {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (error) {
    throw new UsageError(`cannot read the pipeline file \`${file}\`: ${(error as Error).message}`, { cause: error });
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (error) {
    throw new UsageError(`${file}: expected a JSON pipeline file: ${(error as Error).message}`, { cause: error });
  }
  const base = dirname(resolve(file));
  const read: { path: string; bytes: Buffer }[] = [];
  const pipeline = buildPipeline(raw, file, {
    readText(path) {
      const full = resolve(base, path);
      try {
        const bytes = readFileSync(full);
        read.push({ path, bytes });
        return bytes.toString('utf8');
      } catch (error) {
        throw new UsageError(`${file}: cannot read \`${path}\` (resolved to \`${full}\`): ${(error as Error).message}`, { cause: error });
      }
    },
  });
  const h = createHash('sha256').update(canonicalJson(pipeline.config));
  for (const r of read) h.update('\0').update(r.path).update('\0').update(r.bytes);
  return { ...pipeline, file, digest: `sha256:${h.digest('hex')}` };
}
