/**
 * The house's layering (DEVELOPERS.md): cli → commands → orchestration
 * (prepare/, inspect/, demo/) → stages → core / formats, with IO only in io/
 * and pool/. Pure layers import no `node:` module and nothing above them.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';

const src = fileURLToPath(new URL('../src', import.meta.url));

function files(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(join(dir, e.name)) : e.name.endsWith('.ts') ? [join(dir, e.name)] : []));
}

/** Every module specifier a file imports (static and dynamic). */
function imports(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  return [...text.matchAll(/(?:import|export)\s[^'";]*?from\s+'([^']+)'|import\(\s*'([^']+)'\s*\)/g)].map((m) => m[1] ?? m[2]);
}

/** The top folder under src/ a specifier resolves to (or the package / node: name). */
function target(file: string, spec: string): string {
  if (!spec.startsWith('.')) return spec;
  const abs = join(file, '..', spec);
  return relative(src, abs).split(/[/\\]/)[0];
}

const PURE = ['core', 'formats', 'features', 'parser'];
const FORBIDDEN_FOR_PURE = ['io', 'commands', 'prepare', 'merge', 'cluster', 'pool', 'inspect', 'demo', 'stages', 'pipeline', 'cli.ts'];

describe('layering', () => {
  for (const layer of PURE) {
    it(`${layer}/ imports no node: module and nothing from IO, commands or orchestration`, () => {
      const dir = join(src, layer);
      let seen;
      try {
        seen = files(dir);
      } catch {
        return; // a layer not built yet
      }
      expect(seen.length).toBeGreaterThan(0);
      expect(seen.flatMap(imports).length).toBeGreaterThan(0);
      for (const f of seen) {
        for (const spec of imports(f)) {
          const where = `${relative(src, f)} imports '${spec}'`;
          expect(spec.startsWith('node:'), where).toBe(false);
          expect(FORBIDDEN_FOR_PURE.includes(target(f, spec)), where).toBe(false);
          // core is the bottom: it imports only core (and the types-only records module).
          if (layer === 'core') expect(['core', 'records.ts'].includes(target(f, spec)), where).toBe(true);
        }
      }
    });
  }

  it('commands/ hold yargs wiring only: they call into orchestration, never into io/ writers or stages', () => {
    for (const f of files(join(src, 'commands'))) {
      for (const spec of imports(f)) {
        const t = target(f, spec);
        expect(['stages', 'formats', 'features', 'pool'].includes(t), `${relative(src, f)} imports '${spec}'`).toBe(false);
      }
    }
  });
});
