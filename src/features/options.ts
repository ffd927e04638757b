/**
 * Validates the options of a pipeline block against a small schema before any
 * data is read. Messages name the block and say what was expected; unknown
 * keys list the valid ones.
 */
import { UsageError } from '../core/errors.js';
import { show as showValue } from '../core/show.js';

export type OptionSpec =
  | { type: 'boolean'; default: boolean; doc: string }
  | { type: 'integer'; default: number; min: number; max: number; doc: string }
  | { type: 'number'; default: number; doc: string }
  | { type: 'string'; default: string | null; choices?: readonly string[]; doc: string }
  | { type: 'strings'; default: readonly string[]; choices?: readonly string[]; doc: string }
  | { type: 'string-groups'; default: readonly (readonly string[])[]; doc: string };

export type OptionSchema = Record<string, OptionSpec>;

/** The option values a schema gives (loosely typed; templates narrow them). */
export type OptionValues = Record<string, unknown>;

const show = (v: unknown) => `\`${showValue(v)}\``;

export function checkOptions(given: Record<string, unknown>, schema: OptionSchema, where: string, reserved: readonly string[] = []): OptionValues {
  const out: OptionValues = {};
  for (const key of Object.keys(given)) {
    if (reserved.includes(key)) continue;
    if (!Object.hasOwn(schema, key)) {
      const valid = Object.keys(schema);
      throw new UsageError(`${where}: unknown option \`${key}\`; expected one of: ${valid.length ? valid.map((k) => `\`${k}\``).join(', ') : '(none: this block takes no options)'}`);
    }
  }
  for (const [key, spec] of Object.entries(schema)) {
    const v = Object.hasOwn(given, key) ? given[key] : undefined;
    if (v === undefined) {
      out[key] = spec.default;
      continue;
    }
    const bad = (expected: string): never => {
      throw new UsageError(`${where}: expected \`${key}\` to be ${expected}, got ${show(v)}`);
    };
    switch (spec.type) {
      case 'boolean':
        if (typeof v !== 'boolean') bad('true or false');
        break;
      case 'integer':
        if (typeof v !== 'number' || !Number.isInteger(v) || v < spec.min || v > spec.max) bad(`an integer from ${spec.min} to ${spec.max}`);
        break;
      case 'number':
        if (typeof v !== 'number' || !Number.isFinite(v)) bad('a finite number');
        break;
      case 'string':
        if (typeof v !== 'string') bad('a string');
        if (spec.choices && !spec.choices.includes(v as string)) bad(`one of ${spec.choices.map((c) => `\`${c}\``).join(', ')}`);
        break;
      case 'strings':
        if (!Array.isArray(v) || v.some((x) => typeof x !== 'string')) bad('a list of strings');
        if (spec.choices) {
          for (const x of v as string[]) if (!spec.choices.includes(x)) bad(`a list of ${spec.choices.map((c) => `\`${c}\``).join(', ')}`);
        }
        break;
      case 'string-groups':
        if (!Array.isArray(v) || v.some((g) => !Array.isArray(g) || g.some((x: unknown) => typeof x !== 'string'))) bad('a list of lists of strings');
        break;
    }
    out[key] = v;
  }
  return out;
}

/** The punctuation option shared by templates that skip punctuation (same default as scoring). */
export const PUNCTUATION_OPTION: OptionSpec = { type: 'strings', default: [',', ':', '``', "''", '.'], doc: 'POS labels treated as punctuation' };
