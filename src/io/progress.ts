/**
 * Progress on stderr: a one-line bar when stderr is a TTY (records, rate,
 * ETA when the input size is known), plain lines every few seconds otherwise,
 * nothing when quiet.
 */
export interface ProgressCounts {
  sentences: number;
  candidates: number;
  bytesDone: number;
}

export interface Progress {
  update(c: ProgressCounts): void;
  done(message: string): void;
}

export function createProgress(options: { quiet: boolean; label: string; totalBytes: number | null; stream?: NodeJS.WriteStream }): Progress {
  const out = options.stream ?? process.stderr;
  if (options.quiet) return { update() {}, done() {} };
  const tty = Boolean(out.isTTY);
  const start = Date.now();
  // The first periodic line comes one interval after the start, not at once.
  let last = start;
  const n = (x: number) => x.toLocaleString('en-US');
  const line = (c: ProgressCounts): string => {
    const secs = (Date.now() - start) / 1000;
    const rate = secs > 0 ? Math.round(c.candidates / secs) : 0;
    let eta = '';
    let bar = '';
    if (options.totalBytes && options.totalBytes > 0) {
      const f = Math.min(1, c.bytesDone / options.totalBytes);
      if (f > 0.001) eta = ` ETA ${Math.round(secs / f - secs)} s`;
      const width = 24;
      bar = `[${'#'.repeat(Math.round(f * width)).padEnd(width, '.')}] ${(100 * f).toFixed(0)}% `;
    }
    return `${bar}${n(c.sentences)} sentences, ${n(c.candidates)} candidates, ${n(rate)} candidates/s${eta}`;
  };
  return {
    update(c) {
      const now = Date.now();
      if (now - last < (tty ? 200 : 5000)) return;
      last = now;
      if (tty) out.write(`\r${line(c)}\x1b[K`);
      else out.write(`${options.label}: ${line(c)}\n`);
    },
    done(message) {
      if (tty) out.write('\r\x1b[K');
      out.write(`${message}\n`);
    },
  };
}
