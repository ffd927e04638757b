/**
 * Shared settings of the fuzz suite: a fixed seed (reproducible; a failure
 * prints the seed and path to replay), the number of runs per property
 * (scaled by SHEAF_FUZZ_SCALE, which scripts/fuzz-long.mjs raises), a time
 * limit per case, and the check that every failure is one of ours: a
 * located DataError, a UsageError (an EnvironmentError included) or a
 * MsgpackError with its offset — never a TypeError, a RangeError or a raw
 * stream error.
 */
import { getHeapStatistics } from 'node:v8';
import { expect } from 'vitest';
import { DataError, UsageError } from '../../src/core/errors.js';
import { MsgpackError } from '../../src/formats/msgpack.js';

export const SEED = Number(process.env.SHEAF_FUZZ_SEED ?? 20261202);
export const SCALE = Number(process.env.SHEAF_FUZZ_SCALE ?? 1);

/** fast-check parameters for a property meant to run `n` times in CI. */
export function runs(n: number, extra: Record<string, unknown> = {}) {
  return { seed: SEED, numRuns: Math.max(1, Math.round(n * SCALE)), endOnFailure: true, ...extra };
}

/** Time allowed for one case of an in-memory property (a hang or a blow-up fails it). */
export const CASE_MS = 2000;

/** Fails unless `e` is an error sheaf raises on purpose, carrying where and why. */
export function expectTyped(e: unknown, file?: string): void {
  if (e instanceof DataError) {
    expect(e.code).toBeTruthy();
    if (file !== undefined) expect(e.file).toBe(file);
    return;
  }
  if (e instanceof MsgpackError) {
    expect(Number.isInteger(e.offset)).toBe(true);
    return;
  }
  if (e instanceof UsageError) {
    expect(e.message.length).toBeGreaterThan(10);
    return;
  }
  throw e;
}

/** Runs `f` and fails if it takes longer than CASE_MS (for synchronous code that a timer cannot interrupt). */
export function timed<T>(f: () => T): T {
  const t0 = performance.now();
  const v = f();
  const ms = performance.now() - t0;
  if (ms > CASE_MS) throw new Error(`a single case took ${ms.toFixed(0)} ms (limit ${CASE_MS} ms)`);
  return v;
}

/** The heap limit of this process, in MB (the fuzz project runs with --max-old-space-size=512). */
export function heapLimitMb(): number {
  return getHeapStatistics().heap_size_limit / 2 ** 20;
}

/** Keys that name members of Object.prototype, and friends. */
export const PROTO_KEYS = ['__proto__', 'constructor', 'prototype', 'toString', 'valueOf', 'hasOwnProperty', 'isPrototypeOf', '__defineGetter__', '__lookupGetter__', 'propertyIsEnumerable', 'toLocaleString'];

/** Object.prototype's own keys, to check that no input added or changed one. */
export function prototypeSnapshot(): string {
  return JSON.stringify(Object.getOwnPropertyNames(Object.prototype).sort()) + String(({} as Record<string, unknown>).polluted);
}
