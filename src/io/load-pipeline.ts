/**
 * Reads a pipeline file (or a shipped pipeline by name: `default`, `demo`)
 * and validates it (src/pipeline/pipeline.ts) before any data is read. Paths
 * inside it (the lexicon) are resolved against the pipeline file's folder and
 * read once, here: workers get the resolved config and these bytes, so an
 * edit to a file mid-run cannot make them diverge from the manifest's digest.
 * The digest is the sha256 of the resolved configuration's canonical JSON
 * (sorted keys) and of the bytes of every file the pipeline reads.
 */
import { createHash } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { UsageError } from '../core/errors.js';
import { buildPipeline, type Pipeline } from '../pipeline/pipeline.js';

export interface LoadedPipeline extends Pipeline {
  file: string;
  /** `sha256:<hex>` of the canonical config and the files it read. */
  digest: string;
  /** The files the pipeline read, by the path the pipeline names them with. */
  files: Record<string, Uint8Array>;
}

/** The pipelines shipped with sheaf, by name. */
export const SHIPPED_PIPELINES = ['default', 'demo'] as const;

export function shippedPipeline(name: string): string {
  return fileURLToPath(new URL(`../../pipelines/${name}.json`, import.meta.url));
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

/** The file a `--pipeline` value names: a path, or a shipped pipeline's name. */
export function resolvePipelinePath(fileOrName: string): string {
  if ((SHIPPED_PIPELINES as readonly string[]).includes(fileOrName) && !existsSync(fileOrName)) return shippedPipeline(fileOrName);
  return fileOrName;
}

export function loadPipeline(fileOrName: string): LoadedPipeline {
  const file = resolvePipelinePath(fileOrName);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (error) {
    throw new UsageError(`cannot read the pipeline file \`${fileOrName}\` (expected a pipeline file or one of the shipped pipelines: ${SHIPPED_PIPELINES.map((n) => `\`${n}\``).join(', ')}): ${(error as Error).message}`, { cause: error });
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (error) {
    throw new UsageError(`${file}: expected a JSON pipeline file: ${(error as Error).message}`, { cause: error });
  }
  const base = dirname(resolve(file));
  const files: Record<string, Uint8Array> = Object.create(null);
  const pipeline = buildPipeline(raw, file, {
    readText(path) {
      const full = resolve(base, path);
      try {
        const bytes = readFileSync(full);
        files[path] = bytes;
        return bytes.toString('utf8');
      } catch (error) {
        throw new UsageError(`${file}: cannot read \`${path}\` (resolved to \`${full}\`): ${(error as Error).message}`, { cause: error });
      }
    },
  });
  const h = createHash('sha256').update(canonicalJson(pipeline.config));
  for (const path of Object.keys(files)) h.update('\0').update(path).update('\0').update(files[path]);
  return { ...pipeline, file, digest: `sha256:${h.digest('hex')}`, files };
}
