/**
 * Output folders: every command that writes a folder claims it here first.
 * A new or empty folder is taken; a folder holding this command's own output
 * is taken (re-runs are incremental: jackknife redoes stale folds, prepare
 * resumes or finds itself up to date); a folder holding another command's
 * output, or files that are no sheaf output at all, is refused unless
 * `--force`, naming what is there; a path that is a file is a usage error.
 * What counts as whose output is read from the files each command writes.
 */
import { readdirSync, statSync } from 'node:fs';
import { EnvironmentError, UsageError } from '../core/errors.js';
import { makeFolder } from './fs-faults.js';

export type OutputKind = 'plan' | 'nbest' | 'shards' | 'model' | 'demo';

interface KindInfo {
  command: string;
  /** Names (files or folders) only this kind of output holds. */
  marks: RegExp;
}

const KINDS: Record<OutputKind, KindInfo> = {
  plan: { command: 'sheaf split', marks: /^(folds\.json|heldout-\d+\.jsonl|train-\d+\.jsonl)(\.tmp)?$/ },
  nbest: { command: 'sheaf jackknife', marks: /^(jackknife\.json(\.tmp)?|models|logs)$/ },
  shards: { command: 'sheaf prepare', marks: /^(manifest\.json|journal\.jsonl|shard-\d{5}\.(counts\.|part\.)?msgpack(\.gz)?|part\.json|rejects\.positions|part-keys\.jsonl|\.gold-spill)(\.tmp)?$/ },
  model: { command: 'sheaf train', marks: /^(model\.json|weights\.msgpack)(\.tmp)?$/ },
  demo: { command: 'sheaf demo', marks: /^(plan|nbest|train-shards|dev-shards|test-shards|model)$/ },
};

/** Files every sheaf output may hold, whoever wrote it (slurm/: what `--engine slurm` submitted). */
const SHARED = /^((rejects\.jsonl|names\.json|pipeline-files\.msgpack)(\.tmp)?|slurm)$/;

export interface Claim {
  /** The folder did not exist or was empty. */
  fresh: boolean;
}

/** Whose output a folder's entries look like, by the marks they carry (several when mixed). */
export function outputKinds(entries: readonly string[]): OutputKind[] {
  return (Object.keys(KINDS) as OutputKind[]).filter((k) => entries.some((e) => KINDS[k].marks.test(e)));
}

/**
 * Claims `dir` for a command writing output of `kind` (see the file comment);
 * `option` is how the command names the folder in messages (`-o`, `--out`).
 */
export function claimOutputFolder(dir: string, kind: OutputKind, o: { force?: boolean; option?: string } = {}): Claim {
  const option = o.option ?? '-o';
  let st;
  try {
    st = statSync(dir);
  } catch {
    try {
      makeFolder(dir);
    } catch (e) {
      if (e instanceof EnvironmentError) throw e;
      throw new UsageError(`cannot make the output folder \`${dir}\` (given to \`${option}\`): ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}; choose a folder you can write to`, { cause: e });
    }
    return { fresh: true };
  }
  if (!st.isDirectory()) throw new UsageError(`\`${dir}\` (given to \`${option}\`) is a file; expected a folder for ${KINDS[kind].command} to write its files in`);
  const entries = readdirSync(dir);
  if (entries.length === 0) return { fresh: true };
  if (o.force) return { fresh: false };
  const kinds = outputKinds(entries);
  const others = kinds.filter((k) => k !== kind);
  // A demo folder's sub-folders are each claimed by their own command.
  if (kinds.includes(kind) && others.length === 0) return { fresh: false };
  const foreign = entries.filter((e) => !SHARED.test(e));
  if (others.length === 0 && foreign.length === 0) return { fresh: false };
  if (others.length > 0) {
    const whose = others.map((k) => `${KINDS[k].command}`).join(' and ');
    throw new UsageError(`\`${dir}\` (given to \`${option}\`) holds the output of ${whose}; ${KINDS[kind].command} would mix its files into it. Choose another folder, or add --force to write there anyway`);
  }
  const shown = (foreign.length > 0 ? foreign : entries).slice(0, 3).map((e) => `\`${e}\``).join(', ');
  throw new UsageError(`\`${dir}\` (given to \`${option}\`) is not empty and holds no output of ${KINDS[kind].command} (it has ${entries.length.toLocaleString('en-US')} entr${entries.length === 1 ? 'y' : 'ies'}, such as ${shown}). Choose a new or empty folder, or add --force to write there anyway`);
}
