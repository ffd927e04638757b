/**
 * `names.json`: for each occupied bucket, up to `perBucket` canonical feature
 * keys (the smallest in code-unit order, so the file does not depend on which
 * worker saw what). Written by `prepare` when the hashing stage keeps names.
 *
 *   {"bits": 20, "seed": 0, "perBucket": 3, "names": {"17": ["rules.v1 NP DT NN"], …}}
 *
 * Pure: no node: imports.
 */
import { UsageError } from '../core/errors.js';
import { show } from '../core/show.js';

export interface NamesFile {
  bits: number;
  seed: number;
  perBucket: number;
  /** Bucket → kept keys, ascending by bucket. */
  names: [number, string[]][];
}

/** One bucket per line, so the file diffs and greps well. */
export function formatNames(n: NamesFile): string {
  const body = n.names.map(([b, ks]) => `${JSON.stringify(String(b))}: ${JSON.stringify(ks)}`).join(',\n');
  return `{"bits": ${n.bits}, "seed": ${n.seed}, "perBucket": ${n.perBucket}, "names": {\n${body}\n}}\n`;
}

export function parseNames(text: string, file: string): NamesFile {
  let raw: any;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new UsageError(`${file}: expected the names file {"bits", "seed", "perBucket", "names"}: ${(e as Error).message}`, { cause: e });
  }
  if (!raw || typeof raw !== 'object' || !Number.isInteger(raw.bits) || !raw.names || typeof raw.names !== 'object') {
    throw new UsageError(`${file}: expected the names file {"bits", "seed", "perBucket", "names"}`);
  }
  const names: [number, string[]][] = [];
  for (const b of Object.keys(raw.names)) {
    const ks = raw.names[b];
    if (!/^\d+$/.test(b) || !Array.isArray(ks) || ks.some((k: unknown) => typeof k !== 'string')) throw new UsageError(`${file}: bucket ${show(b)}: expected a list of key strings`);
    names.push([Number(b), ks]);
  }
  names.sort((a, b) => a[0] - b[0]);
  return { bits: raw.bits, seed: raw.seed ?? 0, perBucket: raw.perBucket ?? 0, names };
}
