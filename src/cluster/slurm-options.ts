/**
 * `--slurm-opt`: sbatch options passed through as the user wrote them
 * (partition, time, memory, account … are theirs to choose), checked to be
 * options, in their long form, and not ones sheaf sets itself.
 *
 * Pure: no node: imports.
 */
import { UsageError } from '../core/errors.js';

/** Options sheaf sets on every submission; giving them would break how tasks find their work. */
export const RESERVED_SBATCH = ['array', 'dependency', 'chdir', 'output', 'error', 'input', 'parsable', 'wrap', 'export', 'export-file', 'kill-on-invalid-dep'];

const OPTION = /^--([a-z][a-z0-9-]*)(=.*)?$/;

export function checkSlurmOptions(opts: readonly string[]): string[] {
  return opts.map((o) => {
    const m = OPTION.exec(String(o));
    if (!m || /[\0\r\n]/.test(o)) {
      throw new UsageError(`expected each \`--slurm-opt\` to be one sbatch option in its long form, \`--name=value\` or \`--flag\` (e.g. \`--slurm-opt=--partition=main --slurm-opt=--time=02:00:00\`), got \`${o}\``);
    }
    if (RESERVED_SBATCH.includes(m[1])) {
      throw new UsageError(`\`--slurm-opt=${o}\`: sheaf sets \`--${m[1]}\` itself (it submits with ${RESERVED_SBATCH.map((r) => `--${r}`).join(', ')}); leave it out`);
    }
    return o;
  });
}
