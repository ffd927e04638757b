/**
 * The body of every worker thread: loads the job module named in
 * `workerData`, builds its handler from `init`, then runs batches as they
 * come, sending results back with their buffers transferred.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { JobHandler } from './ordered-pool.js';

const { module, init } = workerData as { module: string; init: unknown };
const mod = (await import(module)) as { createJobHandler(init: unknown): JobHandler<unknown, unknown> };
const handler = mod.createJobHandler(init);

parentPort!.on('message', (msg: { batch: number; jobs: unknown[] } | { collect: true } | { stop: true }) => {
  if ('stop' in msg) {
    // Nothing left to wait for: the thread ends once this handler returns.
    parentPort!.close();
    return;
  }
  if ('collect' in msg) {
    parentPort!.postMessage({ collected: handler.collect?.() });
    return;
  }
  try {
    const { results, transfer } = handler.run(msg.jobs);
    parentPort!.postMessage({ batch: msg.batch, results }, transfer);
  } catch (e) {
    parentPort!.postMessage({ batch: msg.batch, error: e instanceof Error ? (e.stack ?? e.message) : String(e) });
  }
});
