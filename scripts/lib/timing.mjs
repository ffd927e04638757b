// Shared by the benchmarks: the best (smallest) of several timings, in seconds.
export function best(fn, reps = 3) {
  let min = Infinity;
  for (let r = 0; r < reps; r++) {
    const t0 = process.hrtime.bigint();
    fn();
    min = Math.min(min, Number(process.hrtime.bigint() - t0) / 1e9);
  }
  return min;
}

export async function bestAsync(fn, reps = 3) {
  let min = Infinity;
  for (let r = 0; r < reps; r++) {
    const t0 = process.hrtime.bigint();
    await fn();
    min = Math.min(min, Number(process.hrtime.bigint() - t0) / 1e9);
  }
  return min;
}
