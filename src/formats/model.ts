/**
 * A model directory (format `sheaf-model/1`):
 * - `weights.msgpack`: one MessagePack map {format, bits, weights: bin
 *   float32 little-endian, one per bucket of the hash space};
 * - `model.json`: how it was trained (method, settings, the training and dev
 *   shards, per-epoch figures, the epoch kept), the pipeline config and
 *   digest it needs, hashing;
 * - `pipeline-files.msgpack`: the files the pipeline reads (the lexicon);
 * - `names.json` (when the shards kept names): the names of the buckets the
 *   model gives a weight.
 * Pure: no node: imports.
 */
import { DataError, UsageError } from '../core/errors.js';
import type { PipelineConfig } from '../records.js';
import { MsgpackReader, MsgpackWriter } from './msgpack.js';
import { show } from '../core/show.js';
import { PIPELINE_FILES } from './pipeline-files.js';

export const MODEL_FORMAT = 'sheaf-model/1';
export const WEIGHTS_FORMAT = 'sheaf-weights/1';
export const MODEL_FILE = 'model.json';
export const WEIGHTS_FILE = 'weights.msgpack';

export interface EpochFigures {
  epoch: number;
  /** Perceptron: updates made; log-linear: the objective. */
  updates: number | null;
  objective: number | null;
  /** Re-ranked F1 on the dev shards after the epoch (null without dev shards). */
  devF1: number | null;
}

export interface ModelInfo {
  format: typeof MODEL_FORMAT;
  tool: { name: 'sheaf'; version: string };
  method: 'perceptron' | 'loglinear';
  settings: { epochs: number; cutoff: number; l2: number; seed: number; window: number };
  pipeline: { digest: string; config: PipelineConfig; files: string };
  hashing: { bits: number; seed: number };
  /** The shards trained on: their count and a digest of their files' sha256 (no paths: the same data gives the same model bytes). */
  trainedOn: { digest: string; sentences: number; candidates: number; lists: number };
  dev: { digest: string; sentences: number } | null;
  features: { kept: number; nonZero: number };
  epochs: EpochFigures[];
  /** The epoch whose weights were kept (best dev F1; the last one without dev shards). */
  bestEpoch: number;
  names: string | null;
}

export function encodeWeights(bits: number, w: Float32Array): Uint8Array {
  const m = new MsgpackWriter();
  m.mapHeader(3);
  m.str('format');
  m.str(WEIGHTS_FORMAT);
  m.str('bits');
  m.int(bits);
  m.str('weights');
  m.bin(w);
  return m.bytes();
}

export function decodeWeights(bytes: Uint8Array, file: string): { bits: number; weights: Float32Array } {
  const bad = (why: string): never => {
    throw new DataError('bad-shard', `${why} (expected {format: "${WEIGHTS_FORMAT}", bits, weights: bin float32})`, { file });
  };
  let raw;
  try {
    raw = new MsgpackReader(bytes).decode();
  } catch (e) {
    return bad((e as Error).message);
  }
  if (!raw || typeof raw !== 'object' || Array.isArray(raw) || raw instanceof Uint8Array) return bad('not a map');
  if (raw.format !== WEIGHTS_FORMAT) return bad(`format is ${show(raw.format)}`);
  const bits = raw.bits;
  const w = raw.weights;
  if (typeof bits !== 'number' || !Number.isInteger(bits) || bits < 1 || bits > 31) return bad('`bits` is not an integer from 1 to 31');
  if (!(w instanceof Uint8Array) || w.byteLength !== 4 * 2 ** bits) return bad(`\`weights\` does not hold 2^${bits} float32 values`);
  return { bits, weights: new Float32Array(new Uint8Array(w).buffer) };
}

export function parseModelInfo(text: string, dir: string): ModelInfo {
  let raw: any;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new UsageError(`\`${dir}\` is not a usable model directory: model.json is not valid JSON (${(e as Error).message}); train it again with \`sheaf train\``);
  }
  if (raw?.format !== MODEL_FORMAT) throw new UsageError(`\`${dir}\` is not a model directory of this sheaf: model.json says format ${show(raw?.format)}, expected \`${MODEL_FORMAT}\``);
  if (typeof raw.pipeline?.digest !== 'string' || !raw.pipeline.config) throw new UsageError(`\`${dir}\`: model.json has no pipeline digest and config`);
  const h = raw.hashing;
  if (!h || !Number.isInteger(h.bits) || h.bits < 1 || h.bits > 31 || !Number.isSafeInteger(h.seed)) throw new UsageError(`\`${dir}\`: model.json has no valid \`hashing\` {bits, seed}; train the model again`);
  // The files it names must be its own, under their fixed names.
  if (raw.pipeline.files !== undefined && raw.pipeline.files !== PIPELINE_FILES) throw new UsageError(`\`${dir}\`: model.json names the pipeline files ${show(raw.pipeline.files)}; expected \`${PIPELINE_FILES}\` inside the folder`);
  if (raw.names !== undefined && raw.names !== null && raw.names !== 'names.json') throw new UsageError(`\`${dir}\`: model.json names the names file ${show(raw.names)}; expected \`names.json\` inside the folder, or null`);
  return raw as ModelInfo;
}
