/**
 * A base parser of the user's, run as commands: `--train-cmd` and
 * `--parse-cmd` are templates with the placeholders {train} (the training
 * treebank, one bracketed tree per line), {model} (a folder for the
 * parser's model), {input} (sentences, one per line, tokens separated by
 * single spaces), {output} (the file the parser writes) and {nbest}. A
 * template is split into arguments at white space (quotes group) and run as
 * an argument array, never through a shell, so file names with shell
 * metacharacters run nothing extra.
 *
 * The output is either our n-best dump format (JSON Lines with
 * `candidates`, one line per input sentence, in order) or blocks of
 * `score<TAB>tree` lines, one block per input sentence, blocks separated by
 * one empty line.
 */
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, openSync, closeSync, readFileSync, statSync } from 'node:fs';
import { basename } from 'node:path';
import { UsageError } from '../core/errors.js';
import type { CandidateText } from '../records.js';

export interface ExternalParser {
  /** How lists made by it are labelled (`source.parser`). */
  name: string;
  train: string[];
  parse: string[];
  /** Digest of the templates and of the files they name. */
  digest: string;
}

/** Splits a template into arguments: white space separates, '…' and "…" group. */
export function splitTemplate(t: string): string[] {
  const out: string[] = [];
  let cur = '';
  let quote = '';
  let has = false;
  for (const ch of t) {
    if (quote) {
      if (ch === quote) quote = '';
      else cur += ch;
    } else if (ch === '"' || ch === "'") {
      quote = ch;
      has = true;
    } else if (/\s/.test(ch)) {
      if (has || cur) out.push(cur);
      cur = '';
      has = false;
    } else {
      cur += ch;
      has = true;
    }
  }
  if (quote) throw new UsageError(`expected the quote ${quote} in the command template \`${t}\` to be closed`);
  if (has || cur) out.push(cur);
  return out;
}

const PLACEHOLDER = /\{(\w+)\}/g;

function check(args: string[], what: string, needs: string[], allowed: string[]): void {
  if (args.length === 0) throw new UsageError(`expected \`${what}\` to be a command, got an empty template`);
  const used = new Set<string>();
  for (const a of args) for (const m of a.matchAll(PLACEHOLDER)) used.add(m[1]);
  for (const u of used) if (!allowed.includes(u)) throw new UsageError(`\`${what}\`: unknown placeholder {${u}}; the placeholders are ${allowed.map((x) => `{${x}}`).join(', ')}`);
  for (const n of needs) if (!used.has(n)) throw new UsageError(`\`${what}\` must use the placeholder {${n}}; the placeholders are ${allowed.map((x) => `{${x}}`).join(', ')}`);
}

export function externalParser(trainCmd: string, parseCmd: string): ExternalParser {
  const train = splitTemplate(trainCmd);
  const parse = splitTemplate(parseCmd);
  check(train, '--train-cmd', ['train', 'model'], ['train', 'model', 'nbest']);
  check(parse, '--parse-cmd', ['model', 'input', 'output'], ['model', 'input', 'output', 'nbest']);
  const h = createHash('sha256').update(JSON.stringify({ train, parse }));
  // Files the commands name (the parser's program, its settings) change its models too.
  for (const a of [...train, ...parse]) {
    if (PLACEHOLDER.test(a)) {
      PLACEHOLDER.lastIndex = 0;
      continue;
    }
    if (existsSync(a) && statSync(a).isFile()) h.update('\0').update(a).update('\0').update(readFileSync(a));
  }
  const program = parse.find((a, k) => k > 0 && existsSync(a) && statSync(a).isFile()) ?? parse[0];
  return { name: `external:${basename(program)}`, train, parse, digest: `sha256:${h.digest('hex')}` };
}

function fill(args: string[], values: Record<string, string>): string[] {
  return args.map((a) => a.replace(PLACEHOLDER, (_, k: string) => values[k]));
}

/** Runs one command; stderr goes to `log`. Rejects with a message naming the command, status and log. */
export function runCommand(args: string[], log: string, what: string): Promise<void> {
  return new Promise((resolve, reject) => {
    const fd = openSync(log, 'w');
    let child;
    try {
      child = spawn(args[0], args.slice(1), { stdio: ['ignore', 'ignore', fd] });
    } catch (e) {
      closeSync(fd);
      reject(new UsageError(`${what}: cannot run \`${args[0]}\`: ${(e as Error).message}`));
      return;
    }
    child.on('error', (e) => {
      closeSync(fd);
      reject(new UsageError(`${what}: cannot run \`${args[0]}\`: ${e.message} (is it installed and on the PATH?)`));
    });
    child.on('close', (code, signal) => {
      try {
        closeSync(fd);
      } catch {
        // closed by the error handler
      }
      if (code === 0) resolve();
      else reject(new UsageError(`${what}: \`${args.join(' ')}\` ${signal ? `was stopped by ${signal}` : `exited with status ${code}`}; its stderr is in ${log}`));
    });
  });
}

export async function trainExternal(p: ExternalParser, trainFile: string, modelDir: string, nbest: number, log: string, what: string): Promise<void> {
  await runCommand(fill(p.train, { train: trainFile, model: modelDir, nbest: String(nbest) }), log, what);
}

export async function parseExternal(p: ExternalParser, modelDir: string, input: string, output: string, nbest: number, log: string, what: string): Promise<void> {
  await runCommand(fill(p.parse, { model: modelDir, input, output, nbest: String(nbest) }), log, what);
}

/** The lists an external parser wrote, one per input sentence, cut to `nbest`. */
export function readExternalOutput(file: string, sentences: number, nbest: number, what: string): CandidateText[][] {
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new UsageError(`${what}: the parser wrote no output file \`${file}\` (${(e as Error).message})`);
  }
  const lists: CandidateText[][] = [];
  const first = text.trimStart()[0];
  if (first === '{') {
    text.split('\n').forEach((line, k) => {
      if (!line.trim()) return;
      let r: { candidates?: unknown };
      try {
        r = JSON.parse(line);
      } catch (e) {
        throw new UsageError(`${what}: ${file}:${k + 1}: expected one JSON object per line: ${(e as Error).message}`);
      }
      if (!Array.isArray(r.candidates)) throw new UsageError(`${what}: ${file}:${k + 1}: expected \`candidates\`, a list of {"tree", "score"}`);
      lists.push((r.candidates as CandidateText[]).slice(0, nbest));
    });
  } else {
    let cur: CandidateText[] = [];
    const lines = text.split('\n');
    if (lines.length > 0 && lines[lines.length - 1] === '') lines.pop();
    lines.forEach((line, k) => {
      if (line.trim() === '') {
        lists.push(cur.slice(0, nbest));
        cur = [];
        return;
      }
      const tab = line.indexOf('\t');
      const score = Number(line.slice(0, tab));
      if (tab < 0 || !Number.isFinite(score)) throw new UsageError(`${what}: ${file}:${k + 1}: expected \`score<TAB>tree\`, got \`${line.slice(0, 60)}\``);
      cur.push({ tree: line.slice(tab + 1), score });
    });
    if (cur.length > 0 || (lines.length > 0 && lines[lines.length - 1].trim() !== '')) lists.push(cur.slice(0, nbest));
  }
  if (lists.length !== sentences) throw new UsageError(`${what}: expected ${sentences} n-best lists in \`${file}\` (one per input sentence), got ${lists.length}`);
  return lists;
}
