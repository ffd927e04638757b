/**
 * Typed errors. Data errors (a bad tree, a bad record) carry where they were
 * found as fields and in the message; setup errors (bad options, unreadable
 * files) carry what was expected. Pure: no node: imports.
 */

export interface Location {
  /** File name as given by the user, or `-` for stdin, or `<string>`. */
  file?: string;
  /** 1-based line. */
  line?: number;
  /** 1-based column (in characters of the decoded text). */
  column?: number;
  /** Record id, where known. */
  id?: string;
}

/** Stable machine-readable reasons; the README lists them. */
export type DataErrorCode =
  | 'unbalanced'
  | 'unexpected-close'
  | 'missing-label'
  | 'empty-constituent'
  | 'empty-tree'
  | 'stray-text'
  | 'invalid-utf8'
  | 'tree-too-long'
  | 'bad-json'
  | 'bad-field'
  | 'yield-mismatch'
  | 'duplicate-id'
  | 'no-gold'
  | 'leak'
  | 'truncated'
  | 'bad-shard'
  /** A whole run, not one record: nothing written, or too many records rejected. */
  | 'nothing-written'
  | 'too-many-rejects';

function where(loc: Location): string {
  const parts: string[] = [];
  if (loc.file !== undefined) parts.push(loc.file);
  if (loc.line !== undefined) parts.push(String(loc.line));
  if (loc.column !== undefined) parts.push(String(loc.column));
  const head = parts.join(':');
  return loc.id !== undefined ? `${head}${head ? ' ' : ''}(id \`${loc.id}\`)` : head;
}

/** A bad input record: named by file, line, column and id. Skippable. */
export class DataError extends Error {
  readonly code: DataErrorCode;
  readonly file?: string;
  readonly line?: number;
  readonly column?: number;
  readonly id?: string;
  /** The message without the location prefix (what rejects.jsonl stores). */
  readonly reason: string;

  constructor(code: DataErrorCode, reason: string, loc: Location = {}, options?: { cause?: unknown }) {
    const w = where(loc);
    super(w ? `${w}: ${reason}` : reason, options);
    this.name = 'DataError';
    this.code = code;
    this.reason = reason;
    this.file = loc.file;
    this.line = loc.line;
    this.column = loc.column;
    this.id = loc.id;
  }

  /** The same error seen from a wider context (e.g. a tree's text inside a file). */
  relocate(loc: Location): DataError {
    return new DataError(this.code, this.reason, {
      file: loc.file ?? this.file,
      line: loc.line ?? this.line,
      column: loc.column ?? this.column,
      id: loc.id ?? this.id,
    }, { cause: this.cause });
  }
}

/** A bad option or an unusable setup: stops the run (exit status 1). */
export class UsageError extends Error {
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = 'UsageError';
  }
}

/**
 * The environment refused a file operation: permission denied, a full disk, a
 * read-only file system, a file where a folder was expected. Not a bug of
 * ours and not bad data: status 1, with the path and what to do.
 */
export class EnvironmentError extends UsageError {
  /** What was being done (`write`, `make`…) and, once a command has said it, how to go on. */
  readonly doing: string;
  readonly then: string;

  constructor(readonly code: string, readonly path: string, message: string, options: { cause?: unknown; doing?: string; then?: string } = {}) {
    super(message, { cause: options.cause });
    this.name = 'EnvironmentError';
    this.doing = options.doing ?? '';
    this.then = options.then ?? '';
  }
}
