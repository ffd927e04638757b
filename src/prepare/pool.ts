/**
 * Runs sentence batches on a pool of worker threads (or inline with 0
 * workers). Each batch goes to the worker with the fewest batches in hand;
 * callers await results per batch and consume them in submission order, so
 * output order (and bytes) never depend on the number of workers.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Pipeline } from '../pipeline/pipeline.js';
import { createSentenceProcessor, type SentenceJob, type SentenceProcessor, type SentenceResult } from './sentence-job.js';

/**
 * The compiled worker next to this module; when this module runs from
 * src/ (under the test runner, which compiles on the fly), the one in dist/,
 * which `npm test` builds first.
 */
function workerScript(): URL {
  const here = new URL('./worker.js', import.meta.url);
  if (existsSync(fileURLToPath(here))) return here;
  const built = new URL(here.href.replace(/\/src\/prepare\/worker\.js$/, '/dist/prepare/worker.js'));
  if (existsSync(fileURLToPath(built))) return built;
  throw new Error(`cannot find the compiled prepare worker (looked at ${fileURLToPath(here)} and ${fileURLToPath(built)}); run \`npm run build\``);
}

interface Pending {
  resolve: (r: SentenceResult[]) => void;
  reject: (e: Error) => void;
}

export class SentencePool {
  private readonly workers: Worker[] = [];
  private readonly load: number[] = [];
  private readonly pending = new Map<number, Pending>();
  private readonly inline: SentenceProcessor | null = null;
  private nameWaiters: ((keys: string[]) => void)[] = [];
  private nextBatch = 0;
  private failure: Error | null = null;

  constructor(count: number, pipelineFile: string, pipeline: Pipeline) {
    if (count === 0) {
      this.inline = createSentenceProcessor(pipeline);
      return;
    }
    const script = workerScript();
    for (let k = 0; k < count; k++) {
      const w = new Worker(script, { workerData: { pipelineFile } });
      w.on('message', (msg: { batch: number; results: SentenceResult[] } | { names: string[] }) => {
        if ('names' in msg) {
          this.nameWaiters.shift()?.(msg.names);
          return;
        }
        this.load[k]--;
        const p = this.pending.get(msg.batch);
        this.pending.delete(msg.batch);
        p?.resolve(msg.results);
      });
      w.on('error', (e) => this.fail(e));
      w.on('exit', (code) => {
        if (code !== 0 && !this.closing) this.fail(new Error(`a prepare worker stopped with exit code ${code}`));
      });
      this.workers.push(w);
      this.load.push(0);
    }
  }

  private closing = false;

  private fail(e: Error): void {
    this.failure = e;
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
  }

  /** Batches submitted and not yet returned. */
  get inFlight(): number {
    return this.pending.size;
  }

  get size(): number {
    return this.workers.length;
  }

  submit(jobs: SentenceJob[]): Promise<SentenceResult[]> {
    if (this.failure) return Promise.reject(this.failure);
    if (this.inline) {
      try {
        return Promise.resolve(jobs.map(this.inline));
      } catch (e) {
        return Promise.reject(e);
      }
    }
    const batch = this.nextBatch++;
    let k = 0;
    for (let j = 1; j < this.workers.length; j++) if (this.load[j] < this.load[k]) k = j;
    this.load[k]++;
    return new Promise((resolve, reject) => {
      this.pending.set(batch, { resolve, reject });
      this.workers[k].postMessage({ batch, jobs });
    });
  }

  /** Every distinct canonical key the workers saw (call when no batch is in flight). */
  async seenKeys(): Promise<string[]> {
    if (this.inline) return this.inline.seenKeys();
    const all: string[] = [];
    for (const w of this.workers) {
      const keys = await new Promise<string[]>((resolve) => {
        this.nameWaiters.push(resolve);
        w.postMessage({ names: true });
      });
      all.push(...keys);
    }
    return all;
  }

  async close(): Promise<void> {
    this.closing = true;
    await Promise.all(this.workers.map((w) => w.terminate()));
  }
}
