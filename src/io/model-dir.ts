/** Reads and writes model directories (format in formats/model.ts). */
import { copyFileSync, existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { UsageError } from '../core/errors.js';
import { decodeWeights, encodeWeights, MODEL_FILE, parseModelInfo, WEIGHTS_FILE, type ModelInfo } from '../formats/model.js';
import { decodePipelineFiles, PIPELINE_FILES } from '../formats/pipeline-files.js';
import { fileInside, writeFileAtomic } from './files.js';
import { makeFolder } from './fs-faults.js';

export interface LoadedModel {
  dir: string;
  info: ModelInfo;
  weights: Float32Array;
  files: Record<string, Uint8Array>;
}

export function loadModel(dir: string): LoadedModel {
  const file = fileInside(dir, MODEL_FILE);
  if (!existsSync(file)) throw new UsageError(`\`${dir}\` is not a model directory (no model.json; make one with \`sheaf train\`)`);
  const info = parseModelInfo(readFileSync(file, 'utf8'), dir);
  const w = decodeWeights(readFileSync(fileInside(dir, WEIGHTS_FILE)), join(dir, WEIGHTS_FILE));
  if (w.bits !== info.hashing.bits) throw new UsageError(`\`${dir}\`: weights.msgpack holds 2^${w.bits} weights but model.json says 2^${info.hashing.bits}`);
  const pf = fileInside(dir, info.pipeline.files ?? PIPELINE_FILES);
  const files = existsSync(pf) ? decodePipelineFiles(readFileSync(pf), pf) : {};
  return { dir, info, weights: w.weights, files };
}

/**
 * Writes a model directory: weights and copied files first, model.json last
 * (each renamed into place), so a folder with a model.json holds a whole model.
 */
export function saveModel(dir: string, info: ModelInfo, weights: Float32Array, copies: { from: string; to: string }[]): void {
  makeFolder(dir);
  writeFileAtomic(join(dir, WEIGHTS_FILE), encodeWeights(info.hashing.bits, weights));
  for (const c of copies) {
    copyFileSync(c.from, join(dir, `${c.to}.tmp`));
    writeFileAtomic(join(dir, c.to), readFileSync(join(dir, `${c.to}.tmp`)));
  }
  writeFileAtomic(join(dir, MODEL_FILE), JSON.stringify(info, null, 2) + '\n');
}
