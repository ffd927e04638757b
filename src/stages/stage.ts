/**
 * What a registered prepare stage declares: a versioned id, its options
 * (with defaults), and the record fields it needs and adds, so a pipeline is
 * checked before any data flows (pipeline/pipeline.ts). Each stage file
 * exports its spec and the factory that builds its per-record function from
 * validated options.
 */
import type { OptionSchema } from '../features/options.js';

export interface StageSpec {
  id: string;
  summary: string;
  needs: readonly string[];
  adds: readonly string[];
  options: OptionSchema;
}
