/**
 * The registered feature templates, by versioned id. Adding a template:
 * write it in templates/, add it here, document it in the README's feature
 * section.
 */
import type { FeatureTemplate } from './template.js';
import { ancestors } from './templates/ancestors.js';
import { baseScore } from './templates/base-score.js';
import { branching } from './templates/branching.js';
import { coordination } from './templates/coordination.js';
import { boundaryWords } from './templates/boundary-words.js';
import { headDeps } from './templates/head-deps.js';
import { headRules } from './templates/head-rules.js';
import { lexicon } from './templates/lexicon.js';
import { rules } from './templates/rules.js';
import { siblings } from './templates/siblings.js';
import { spanShape } from './templates/span-shape.js';

export const TEMPLATES: ReadonlyMap<string, FeatureTemplate> = new Map(
  [rules, ancestors, headRules, headDeps, siblings, spanShape, boundaryWords, branching, coordination, lexicon, baseScore].map((t) => [t.id, t]),
);
