/**
 * The CLI contract (DESIGN.md): exit status 0 ok, 1 bad input or usage;
 * commands not built yet refuse to run. Runs the built launcher
 * (`npm test` builds first).
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const BIN = fileURLToPath(new URL('../bin/sheaf.js', import.meta.url));
const sheaf = (...args: string[]) => spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8' });

describe('sheaf CLI', () => {
  it('lists every command of the design in --help', () => {
    const r = sheaf('--help');
    expect(r.status).toBe(0);
    for (const c of ['split', 'jackknife', 'prepare', 'train', 'eval', 'rerank', 'inspect', 'export', 'demo']) {
      expect(r.stdout).toContain(`sheaf ${c}`);
    }
  });

  it('runs the demo on the shipped corpus', () => {
    const r = sheaf('demo');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/read 1200 trees \(\d+ words\), 0 rejected/);
  });

  it('refuses an unknown command with status 1 and a hint', () => {
    const r = sheaf('frobnicate');
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('sheaf --help');
  });
});
