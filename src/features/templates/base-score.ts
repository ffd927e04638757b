/**
 * `base-score.v1` — the base model's view of the candidate: its log score
 * (real-valued) and its rank bucket.
 * Keys: `base-score.v1 score` (value −41.2, say), `base-score.v1 rank 0` (the
 * base model's best), `base-score.v1 rank 3-4`.
 */
import { piece } from '../../core/feature-sink.js';
import type { FeatureTemplate } from '../template.js';
import { rankBucket } from '../pieces.js';

export const baseScore: FeatureTemplate = {
  id: 'base-score.v1',
  summary: 'the base model\'s log score (real-valued) and rank bucket',
  example: 'base-score.v1 rank 0',
  exampleTree: '(S (NP (DT the) (NN porter)) (VP (VBD carried) (NP (CD two) (NNS crates)) (PP (TO to) (NP (DT the) (NN hut)))) (. .))',
  options: {
    score: { type: 'boolean', default: true, doc: 'fire the log score as a real value' },
    rank: { type: 'boolean', default: true, doc: 'fire the rank bucket' },
    scale: { type: 'number', default: 1, doc: 'multiplies the log score' },
  },
  configure(options) {
    const score = piece('base-score.v1 score');
    const rank = piece('base-score.v1 rank');
    const scale = options.scale as number;
    return {
      tree(v, sink) {
        if (options.score) {
          sink.begin(score);
          sink.emit(v.score * scale);
        }
        if (options.rank) {
          sink.begin(rank).add(rankBucket(v.rank));
          sink.emit();
        }
      },
    };
  },
};
