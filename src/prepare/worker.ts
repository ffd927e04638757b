/**
 * A prepare worker thread: loads and validates the pipeline itself (the
 * templates and lexicon live here, not in the main thread), then processes
 * batches of sentences. Results go back with their buffers transferred, not
 * copied.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { loadPipeline } from '../io/load-pipeline.js';
import { createSentenceProcessor, type SentenceJob } from './sentence-job.js';

const pipeline = loadPipeline((workerData as { pipelineFile: string }).pipelineFile);
const process = createSentenceProcessor(pipeline);

parentPort!.on('message', (msg: { batch: number; jobs: SentenceJob[] } | { names: true }) => {
  if ('names' in msg) {
    parentPort!.postMessage({ names: process.seenKeys() });
    return;
  }
  const results = msg.jobs.map(process);
  const transfer: ArrayBuffer[] = [];
  for (const r of results) {
    if ('bytes' in r) transfer.push(r.bytes.buffer as ArrayBuffer, r.varying.buffer as ArrayBuffer);
  }
  parentPort!.postMessage({ batch: msg.batch, results }, transfer);
});
