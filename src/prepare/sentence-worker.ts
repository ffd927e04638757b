/**
 * The job module that prepare's worker threads run (pool/ordered-pool.ts):
 * built from the resolved pipeline config and the bytes of the files it
 * reads, then sentence batches in, encoded records out (buffers transferred).
 */
import type { JobHandler } from '../pool/ordered-pool.js';
import { rebuildPipeline, type PipelineConfig } from '../pipeline/pipeline.js';
import type { SentenceJob, SentenceResult } from '../records.js';
import { createSentenceChain } from './sentence-chain.js';

export interface SentenceWorkerInit {
  config: PipelineConfig;
  files: Record<string, Uint8Array>;
}

export function createJobHandler(init: SentenceWorkerInit): JobHandler<SentenceJob, SentenceResult> {
  const chain = createSentenceChain(rebuildPipeline(init.config, init.files));
  return {
    run(jobs) {
      const results = jobs.map(chain.run);
      const transfer: ArrayBuffer[] = [];
      for (const r of results) {
        if (!('bytes' in r)) continue;
        // Transfer only buffers the result owns whole (never a shared pool slab).
        for (const a of [r.bytes, r.varying, r.templateCounts]) {
          if (a.byteOffset === 0 && a.byteLength === a.buffer.byteLength && !transfer.includes(a.buffer as ArrayBuffer)) transfer.push(a.buffer as ArrayBuffer);
        }
      }
      return { results, transfer };
    },
    collect: () => chain.seenKeys(),
  };
}
