/**
 * The job module jackknife's worker threads run: the embedded parser built
 * from the model's bytes, then sentences in, k-best lists out.
 */
import { decodeGrammar, KBestParser, type ParseResult } from '../parser/index.js';
import type { JobHandler } from '../pool/ordered-pool.js';

export interface ParseWorkerInit {
  grammar: Uint8Array;
  nbest: number;
}

export interface ParseJob {
  words: string[];
}

export function createJobHandler(init: ParseWorkerInit): JobHandler<ParseJob, ParseResult[]> {
  const parser = new KBestParser(decodeGrammar(init.grammar));
  return {
    run: (jobs) => ({ results: jobs.map((j) => parser.parse(j.words, init.nbest)), transfer: [] }),
  };
}
