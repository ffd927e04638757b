#!/usr/bin/env node
/**
 * The fuzz suite (test/fuzz, fast-check), longer than CI runs it: more cases
 * per property and several seeds. Each property's case count is multiplied
 * by --scale; each seed is a separate, reproducible run (a failure prints the
 * seed and the path that replays it).
 *
 *   node scripts/fuzz-long.mjs [--scale 10] [--seeds 3] [--seed 20261202]
 *
 * Seeds used are --seed, --seed + 1, … Runs under the fuzz project's 512 MB
 * heap; no time limit per test (each case keeps its own).
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const args = process.argv.slice(2);
const opt = (name, fallback) => {
  const k = args.indexOf(`--${name}`);
  if (k < 0) return fallback;
  const v = Number(args[k + 1]);
  if (!Number.isInteger(v) || v < 1) {
    console.error(`fuzz-long: expected --${name} to be a positive integer, got \`${args[k + 1]}\``);
    process.exit(1);
  }
  return v;
};
const scale = opt('scale', 10);
const seeds = opt('seeds', 1);
const first = opt('seed', 20261202);
const root = fileURLToPath(new URL('..', import.meta.url));

let failed = 0;
for (let s = first; s < first + seeds; s++) {
  console.log(`== fuzz: seed ${s}, ${scale}× the CI cases`);
  const started = Date.now();
  const r = spawnSync('npx', ['vitest', 'run', '--project', 'fuzz', '--testTimeout=0'], {
    cwd: root,
    stdio: 'inherit',
    env: { ...process.env, SHEAF_FUZZ_SCALE: String(scale), SHEAF_FUZZ_SEED: String(s) },
  });
  console.log(`== seed ${s}: ${r.status === 0 ? 'passed' : 'FAILED'} in ${((Date.now() - started) / 1000).toFixed(0)} s`);
  if (r.status !== 0) failed++;
}
process.exit(failed ? 1 : 0);
