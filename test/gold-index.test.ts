/**
 * The gold index: ids to ordinals (core/id-table.ts, compared with a plain
 * Map over many ids, non-ASCII included), trees read back from the spill
 * file, duplicate ids and bad trees reported, folds and seen flags.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { IdTable } from '../src/core/id-table.js';
import { GoldIndex } from '../src/io/gold-index.js';
import type { RejectRecord } from '../src/records.js';

const dir = mkdtempSync(join(tmpdir(), 'sheaf-gold-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('id table', () => {
  it('agrees with a Map on 50,000 ids, ASCII and not, added and looked up', () => {
    const t = new IdTable();
    const m = new Map<string, number>();
    const ids = Array.from({ length: 50000 }, (_, k) => (k % 7 === 0 ? `hütte-${k}-雪` : k % 11 === 0 ? `${k}` : `s${k.toString(36)}`));
    for (const id of ids) {
      const k = t.add(id);
      if (m.has(id)) expect(k).toBe(-1 - m.get(id)!);
      else {
        expect(k).toBe(m.size);
        m.set(id, k);
      }
    }
    // Adding again says where it already is.
    expect(t.add(ids[100])).toBe(-1 - m.get(ids[100])!);
    for (const [id, k] of m) expect(t.get(id)).toBe(k);
    for (const [id, k] of [...m].slice(0, 500)) expect(t.id(k)).toBe(id);
    expect(t.get('no such id')).toBe(-1);
    expect(t.get('')).toBe(-1);
    expect(t.size).toBe(m.size);
  });
});

describe('gold index', () => {
  it('indexes trees by id, reads them back, refuses duplicates and bad trees', async () => {
    const file = join(dir, 'gold.jsonl');
    writeFileSync(file, [
      JSON.stringify({ id: 'a', tree: '(S (NP (NN rope)) (VP (VBD froze)))' }),
      JSON.stringify({ id: 'b', tree: '(S (NP (NN Schnee)) (VP (VBD fiel)))' }),
      JSON.stringify({ id: 'a', tree: '(S (NP (NN kettle)) (VP (VBD leaked)))' }),
      JSON.stringify({ id: 'c', tree: '(S (NP (NN lamp)' }),
    ].join('\n') + '\n');
    const rejects: RejectRecord[] = [];
    const gold = await GoldIndex.build(file, join(dir, 'spill'), (r) => rejects.push(r));
    try {
      expect(gold.size).toBe(2);
      expect(gold.tree(gold.ordinal('b'))).toBe('(S (NP (NN Schnee)) (VP (VBD fiel)))');
      expect(gold.tree(gold.ordinal('a'))).toBe('(S (NP (NN rope)) (VP (VBD froze)))');
      expect(gold.ordinal('c')).toBe(-1);
      expect(rejects.map((r) => [r.id, r.line, r.code])).toEqual([['a', 3, 'duplicate-id'], ['c', 4, 'unbalanced']]);
      expect(rejects[0].reason).toContain('first at line 1');
      expect(gold.markSeen(gold.ordinal('a'))).toBe(true);
      expect(gold.markSeen(gold.ordinal('a'))).toBe(false);
      expect(gold.unseen()).toBe(1);
      expect(gold.fold(gold.ordinal('b'))).toBe(-1);
      gold.setFold(gold.ordinal('b'), 3);
      expect(gold.fold(gold.ordinal('b'))).toBe(3);
    } finally {
      gold.close();
    }
  });
});
