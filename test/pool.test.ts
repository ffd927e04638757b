/**
 * The ordered worker pool: results come back in submission order whatever
 * the worker count and however long each batch takes, at most `maxInFlight`
 * batches are out at once, a failing job fails the run with its message, and
 * items without a job keep their place.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { OrderedBatches, OrderedPool } from '../src/pool/ordered-pool.js';

const dir = mkdtempSync(join(tmpdir(), 'sheaf-pool-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
// A job module in plain JavaScript (workers run compiled code): squares numbers,
// spends a job-dependent time on each, throws on 13.
const module = join(dir, 'square.mjs');
writeFileSync(module, `
export function createJobHandler(init) {
  let seen = 0;
  return {
    run(jobs) {
      const results = jobs.map((x) => {
        if (x === 13) throw new Error('thirteen is refused');
        const until = Date.now() + (x % 3);
        while (Date.now() < until);
        seen++;
        return x * x + init.offset;
      });
      return { results, transfer: [] };
    },
    collect: () => seen,
  };
}
`);
const url = pathToFileURL(module);

async function squares(size: number, n: number, maxInFlight = 2): Promise<{ out: [number, number | undefined][]; peak: number }> {
  const pool = await OrderedPool.start<number, number>({ size, module: url, init: { offset: 1 } });
  const out: [number, number | undefined][] = [];
  let peak = 0;
  const submit = pool.submit.bind(pool);
  let inFlight = 0;
  pool.submit = (jobs) => {
    inFlight++;
    peak = Math.max(peak, inFlight);
    return submit(jobs).finally(() => inFlight--);
  };
  const batches = new OrderedBatches<number, number, number>(pool, { batchSize: 3, maxInFlight }, (item, r) => out.push([item, r]));
  try {
    for (let k = 0; k < n; k++) {
      if (k === 13) continue;
      // Every fifth item rides along without a job.
      await batches.push(k, k % 5 === 4 ? undefined : k);
    }
    await batches.finish();
    const seen = (await pool.collect()) as number[];
    expect(seen.reduce((a, b) => a + b, 0)).toBe(out.filter(([, r]) => r !== undefined).length);
  } finally {
    await pool.close();
  }
  return { out, peak };
}

describe('ordered pool', () => {
  it('returns results in submission order with 0, 1, 2 and 3 workers', async () => {
    const want = Array.from({ length: 60 }, (_, k) => k).filter((k) => k !== 13).map((k) => [k, k % 5 === 4 ? undefined : k * k + 1]);
    for (const size of [0, 1, 2, 3]) expect((await squares(size, 60)).out).toEqual(want);
  });

  it('keeps at most maxInFlight batches out at once', async () => {
    const { peak } = await squares(3, 90, 2);
    expect(peak).toBeLessThanOrEqual(2);
    expect(peak).toBeGreaterThan(0);
  });

  it('fails with the job\'s own message when a job throws, in a worker or inline', async () => {
    for (const size of [0, 2]) {
      const pool = await OrderedPool.start<number, number>({ size, module: url, init: { offset: 0 } });
      try {
        await expect(pool.submit([12, 13, 14])).rejects.toThrow(/thirteen is refused/);
      } finally {
        await pool.close();
      }
    }
  });

  it('closes while batches that gzip are in flight without aborting the process (100 rounds, 2 workers)', () => {
    // Terminating a worker thread in the middle of zlib work aborts Node 20 with the native assertion
    // "close before init" (seen when a full disk stopped prepare); close() lets each worker finish what it
    // was sent and end by itself. Run in a child process: an abort would take the test runner with it.
    const gzipJobs = join(dir, 'gzip.mjs');
    writeFileSync(gzipJobs, `
import { gzipSync } from 'node:zlib';
const bytes = Buffer.alloc(4000, 7);
export function createJobHandler() {
  return { run(jobs) { return { results: jobs.map((n) => { let s = 0; for (let k = 0; k < n; k++) s += gzipSync(bytes, { level: 1 }).length; return s; }), transfer: [] }; } };
}
`);
    const poolJs = pathToFileURL(join(fileURLToPath(new URL('..', import.meta.url)), 'dist/pool/ordered-pool.js')).href;
    const script = `
import { OrderedPool } from ${JSON.stringify(poolJs)};
for (let round = 0; round < 100; round++) {
  const pool = await OrderedPool.start({ size: 2, module: new URL(${JSON.stringify(pathToFileURL(gzipJobs).href)}), init: {} });
  // Both workers busy gzipping when close() is called: the first small batch is back, the big ones are not.
  const out = [pool.submit([1]), pool.submit([1]), pool.submit([300]), pool.submit([300])];
  for (const p of out) p.catch(() => {});
  await Promise.all(out.slice(0, 2));
  await new Promise((r) => setTimeout(r, round % 5));
  await pool.close();
}
console.log('closed 100 pools');
`;
    const main = join(dir, 'close-while-busy.mjs');
    writeFileSync(main, script);
    const r = spawnSync(process.execPath, [main], { encoding: 'utf8', timeout: 120_000 });
    expect(r.stderr).not.toMatch(/Assertion failed/);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toContain('closed 100 pools');
  }, 150_000);
});
