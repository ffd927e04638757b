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

  it('runs the demo end to end and prints base, oracle and re-ranked F1 as JSON, re-ranked significantly above base', () => {
    const r = sheaf('demo', '--json', '--workers', '2');
    expect(r.status).toBe(0);
    const s = JSON.parse(r.stdout);
    expect(s.prepare.train).toMatchObject({ read: 4000, written: 4000, rejected: 0, candidates: 200000 });
    expect(s.prepare.test).toMatchObject({ read: 400, written: 400, rejected: 0 });
    for (const k of ['base', 'oracle', 'reranked']) expect(Object.keys(s[k]).sort()).toEqual(['f1', 'precision', 'recall', 'sentences']);
    // The oracle bounds both; the demo corpus makes attachments depend on word classes the features see.
    expect(s.oracle.f1).toBeGreaterThanOrEqual(s.reranked.f1);
    expect(s.reranked.f1).toBeGreaterThan(s.base.f1);
    expect(s.bootstrap).toMatchObject({ samples: 10000, seed: 0 });
    expect(s.bootstrap.p).toBeLessThan(0.01);
    // The demo alone takes about 40 s on 2 cores; beside the rest of the suite (fuzzing, crash runs) it needs more.
  }, 240_000);

  it('runs prepare on a dump read from stdin and prints a JSON summary', async () => {
    const { mkdtempSync, rmSync, writeFileSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const { join } = await import('node:path');
    const d = mkdtempSync(join(tmpdir(), 'sheaf-cli-'));
    writeFileSync(join(d, 'gold.trees'), '(S (NP (NN fog)) (VP (VBD lifted)))\n(S (NP (NN rope)) (VP (VBD froze)))\n');
    const dump = [
      { id: '1', candidates: [{ tree: '(S (NP (NN fog)) (VP (VBD lifted)))', score: -3 }, { tree: '(S (VP (NN fog) (VBD lifted)))', score: -4 }] },
      { id: '2', candidates: [{ tree: '(S (NP (NN rope)) (VP (VBD froze)))', score: -2 }] },
      { id: '3', candidates: [] },
    ].map((r) => JSON.stringify(r)).join('\n');
    const pipeline = fileURLToPath(new URL('../pipelines/default.json', import.meta.url));
    const r = spawnSync(process.execPath, [BIN, 'prepare', '--gold', join(d, 'gold.trees'), '--nbest', '-', '--pipeline', pipeline, '-o', join(d, 'out'), '--json', '--quiet', '--workers', '1'], { input: dump, encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    rmSync(d, { recursive: true, force: true });
    expect(JSON.parse(r.stdout)).toMatchObject({ read: 3, written: 2, rejected: 1, candidates: 3 });
  });

  it('refuses a prepare without its required options, naming them', () => {
    const r = sheaf('prepare', '--gold', 'x.trees');
    expect(r.status).toBe(1);
    expect(r.stderr).toMatch(/expected .*`--nbest`/);
  });

  it('refuses an unknown command with status 1 and a hint', () => {
    const r = sheaf('frobnicate');
    expect(r.status).toBe(1);
    expect(r.stderr).toContain('sheaf --help');
  });
});
