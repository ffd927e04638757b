/**
 * Fuzzing the record checks synchronously (many cases, fast): decoded n-best
 * records of any shape (wrong types, missing and extra fields, huge and
 * non-finite numbers, deep nesting, lone surrogates, prototype-named keys),
 * bracket splitting and tree checking of damaged text, and the test that
 * tells a JSON array from JSON Lines starting with `[`. Each case ends as a
 * checked value or a typed, located reject; no other exception; no change to
 * Object.prototype.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DataError } from '../../src/core/errors.js';
import { createVocabulary } from '../../src/core/interner.js';
import { checkTree } from '../../src/core/read-brackets.js';
import { BracketSplitter, isSplitError } from '../../src/core/split-brackets.js';
import { TreeBuilder } from '../../src/core/tree.js';
import { loneSurrogateAt } from '../../src/core/well-formed.js';
import { looksLikeJsonLines } from '../../src/io/read-nbest.js';
import { checkNbestRecord } from '../../src/stages/read-nbest.js';
import { damage, damageArb, nbestRecordText, treebankArb } from './arbitraries.js';
import { prototypeSnapshot, runs, timed } from './settings.js';

const before = prototypeSnapshot();
const TREES = ['(S (NP (DT the) (NN warden)) (VP (VBD logged)))', '(S (NN rope)', '()', '(S (NN \ud800))', '((S (NN lamp)))'];

describe('fuzz: n-best record checks', () => {
  it('any decoded value: a record the rest of prepare may trust, or a bad-json / bad-field reject naming file and line', () => {
    fc.assert(fc.property(nbestRecordText(TREES), fc.integer({ min: 0, max: 3 }), fc.nat({ max: 5 }), (text, max, line) => {
      let value: unknown;
      try {
        value = JSON.parse(text);
      } catch {
        return; // not JSON: the reader rejects the line before this check (covered in readers.test.ts)
      }
      const item = timed(() => checkNbestRecord(value, 'd.jsonl', line, 7, max));
      if ('reject' in item) {
        expect(item.reject.file).toBe('d.jsonl');
        expect(item.reject.line).toBe(line > 0 ? line : null);
        expect(['bad-json', 'bad-field']).toContain(item.reject.code);
        expect(item.reject.reason.length).toBeLessThan(400);
        if (line === 0) expect(item.reject.reason).toContain('(array element 7)');
      } else {
        const r = item.record;
        expect(loneSurrogateAt(r.id)).toBe(-1);
        expect(r.fold === null || (Number.isSafeInteger(r.fold) && r.fold >= 0)).toBe(true);
        if (max > 0) expect(r.candidates.length).toBeLessThanOrEqual(max);
        for (const c of r.candidates) {
          expect(typeof c.tree).toBe('string');
          expect(loneSurrogateAt(c.tree)).toBe(-1);
          expect(Number.isFinite(Math.fround(c.score))).toBe(true);
        }
      }
      expect(prototypeSnapshot()).toBe(before);
    }), runs(24000));
  });
});

describe('fuzz: splitting and checking bracketed text', () => {
  it('damaged text in random pieces: trees that check, or errors with lines inside the text; one outcome per tree position', () => {
    fc.assert(fc.property(treebankArb, damageArb, fc.array(fc.integer({ min: 1, max: 200 }), { minLength: 1, maxLength: 5 }), ({ text }, edits, sizes) => {
      const t = damage(Buffer.from(text), edits).toString('utf8');
      const lines = t.split('\n').length;
      const splitter = new BracketSplitter();
      const vocab = createVocabulary();
      const builder = new TreeBuilder(vocab);
      let positions = 0;
      const check = (items: ReturnType<BracketSplitter['push']>) => {
        for (const item of items) {
          if (isSplitError(item)) {
            expect(item.error).toBeInstanceOf(DataError);
            expect(item.line).toBeGreaterThanOrEqual(1);
            expect(item.endLine).toBeLessThanOrEqual(lines);
            if (item.tree) positions++;
            continue;
          }
          positions++;
          expect(item.line).toBeGreaterThanOrEqual(1);
          expect(item.text.startsWith('(') && item.text.endsWith(')')).toBe(true);
          try {
            checkTree(item.text, vocab, builder);
          } catch (e) {
            if (!(e instanceof DataError)) throw e;
            expect(e.line).toBeGreaterThanOrEqual(1);
          }
        }
      };
      timed(() => {
        let i = 0;
        for (let k = 0; i < t.length; k++) {
          const n = sizes[k % sizes.length];
          check(splitter.push(t.slice(i, i + n)));
          i += n;
        }
        check(splitter.end());
      });
      // No more positions than `(` that could start a tree.
      expect(positions).toBeLessThanOrEqual((t.match(/\(/g) ?? []).length);
    }), runs(16000));
  });
});

describe('fuzz: a JSON array or JSON Lines starting with `[`', () => {
  it('arrays laid out any way are arrays; JSON Lines whose first record is an array are JSON Lines', () => {
    fc.assert(fc.property(fc.array(nbestRecordText(TREES.slice(0, 2)).filter((x) => { try { JSON.parse(x); return true; } catch { return false; } }), { minLength: 1, maxLength: 5 }), fc.constantFrom(',', ',\n', ',\n  ', '\n,'), fc.jsonValue({ maxDepth: 2 }).filter(Array.isArray), (recs, sep, first) => {
      const array = `[${recs.map((r) => r.replace(/\n/g, ' ')).join(sep)}]\n`;
      expect(looksLikeJsonLines(Buffer.from(array))).toBe(false);
      const lines = [JSON.stringify(first), ...recs.map((r) => r.replace(/\n/g, ' '))].join('\n') + '\n';
      expect(looksLikeJsonLines(Buffer.from(lines))).toBe(true);
    }), runs(3000));
  });
});
