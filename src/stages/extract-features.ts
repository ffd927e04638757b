/**
 * Stage `extract-features.v1`: global features of each whole candidate tree
 * from the listed templates. Extraction and hashing share one loop (keys go
 * straight from templates into the hashing sink, never as strings), so this
 * factory takes the hashing stage's options too; the pipeline still lists and
 * checks the two stages apart.
 */
import { VectorExtractor } from '../features/extract-vectors.js';
import type { ConfiguredTemplate } from '../features/template.js';
import type { HashingOptions } from './hash-features.js';
import type { StageSpec } from './stage.js';

export const extractFeaturesSpec: StageSpec = {
  id: 'extract-features.v1',
  summary: 'global features of each whole candidate tree, from the listed templates',
  needs: ['candidates'],
  adds: ['features'],
  options: {
    // `templates` is checked against the template registry (features/registry.ts), not here.
  },
};

export function extractFeatures(templates: readonly ConfiguredTemplate[], hashing: HashingOptions): VectorExtractor {
  return new VectorExtractor({ templates, bits: hashing.bits, seed: hashing.seed, dropUniform: hashing.dropUniform, names: hashing.names });
}
