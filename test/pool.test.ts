/**
 * The ordered worker pool: results come back in submission order whatever
 * the worker count and however long each batch takes, at most `maxInFlight`
 * batches are out at once, a failing job fails the run with its message, and
 * items without a job keep their place.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
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
});
