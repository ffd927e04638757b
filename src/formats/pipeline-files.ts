/**
 * `pipeline-files.msgpack`: the bytes of every file a pipeline reads (the
 * lexicon), by the path the pipeline names them with — one MessagePack map
 * of path → bin. A shard directory carries it and a model directory copies
 * it, so a model can rebuild its pipeline (pipeline/pipeline.ts,
 * rebuildPipeline) with no file of the user's at hand.
 *
 * Pure: no node: imports.
 */
import { DataError } from '../core/errors.js';
import { MsgpackReader, MsgpackWriter } from './msgpack.js';

export const PIPELINE_FILES = 'pipeline-files.msgpack';

export function encodePipelineFiles(files: Readonly<Record<string, Uint8Array>>): Uint8Array {
  const w = new MsgpackWriter();
  const paths = Object.keys(files).sort();
  w.mapHeader(paths.length);
  for (const p of paths) {
    w.str(p);
    w.bin(files[p]);
  }
  return w.bytes();
}

export function decodePipelineFiles(bytes: Uint8Array, file: string): Record<string, Uint8Array> {
  let raw;
  try {
    raw = new MsgpackReader(bytes).decode();
  } catch (e) {
    throw new DataError('bad-shard', `expected a map of path → file bytes: ${(e as Error).message}`, { file });
  }
  if (raw === null || typeof raw !== 'object' || Array.isArray(raw) || raw instanceof Uint8Array) throw new DataError('bad-shard', 'expected a map of path → file bytes', { file });
  const out: Record<string, Uint8Array> = Object.create(null);
  for (const [p, b] of Object.entries(raw)) {
    if (!(b instanceof Uint8Array)) throw new DataError('bad-shard', `expected the bytes of \`${p}\``, { file });
    out[p] = new Uint8Array(b);
  }
  return out;
}
