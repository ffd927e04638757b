/**
 * `sheaf inspect MODEL_DIR`: how a model was trained, and its highest and
 * lowest weighted buckets with their kept key names (when the shards kept
 * names). `--jsonl` prints the same as JSON lines.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseNames } from '../formats/names-file.js';
import { loadModel } from '../io/model-dir.js';
import { fileInside } from '../io/files.js';

export interface TopWeight {
  bucket: number;
  weight: number;
  names: string[];
}

export function topWeights(weights: Float32Array, n: number): { highest: number[]; lowest: number[] } {
  const nz: number[] = [];
  for (let b = 0; b < weights.length; b++) if (weights[b] !== 0) nz.push(b);
  nz.sort((a, b) => weights[b] - weights[a] || a - b);
  return { highest: nz.slice(0, n), lowest: nz.slice(-n).reverse() };
}

export async function inspectModel(o: { dir: string; top: number; jsonl: boolean }, print: (line: string) => void | Promise<void>): Promise<number> {
  const model = loadModel(o.dir);
  const info = model.info;
  let names = new Map<number, string[]>();
  if (info.names && existsSync(join(o.dir, info.names))) names = new Map(parseNames(readFileSync(fileInside(o.dir, info.names), 'utf8'), info.names).names);
  const { highest, lowest } = topWeights(model.weights, o.top);
  const row = (b: number): TopWeight => ({ bucket: b, weight: model.weights[b], names: names.get(b) ?? [] });
  if (o.jsonl) {
    await print(JSON.stringify({ method: info.method, settings: info.settings, bestEpoch: info.bestEpoch, epochs: info.epochs, features: info.features, pipeline: info.pipeline.digest }));
    for (const b of highest) await print(JSON.stringify({ side: 'highest', ...row(b) }));
    for (const b of lowest) await print(JSON.stringify({ side: 'lowest', ...row(b) }));
    return 0;
  }
  const n = (x: number) => x.toLocaleString('en-US');
  await print(`${o.dir}: ${info.method}, ${info.epochs.length} epoch(s), kept epoch ${info.bestEpoch}${info.epochs[info.bestEpoch - 1]?.devF1 != null ? ` (dev F1 ${info.epochs[info.bestEpoch - 1].devF1!.toFixed(2)})` : ''}; ${n(info.features.nonZero)} non-zero weights of ${n(info.features.kept)} kept buckets (cut-off ${info.settings.cutoff}); trained on ${n(info.trainedOn.sentences)} sentences (${info.trainedOn.digest.slice(0, 19)}…)`);
  if (names.size === 0) await print('(no feature names: prepare with `names` set in the hashing stage to keep them)');
  for (const [title, list] of [['highest weights', highest], ['lowest weights', lowest]] as const) {
    await print('');
    await print(title);
    for (const b of list) {
      const r = row(b);
      await print(`  ${r.weight.toFixed(4).padStart(10)}  ${String(b).padStart(8)}  ${r.names.join(' | ')}`);
    }
  }
  return 0;
}
