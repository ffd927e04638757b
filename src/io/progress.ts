/**
 * Progress on stderr: a one-line bar when stderr is a TTY (sentences,
 * candidates/s, ETA when the input size is known), plain lines every few
 * seconds otherwise, nothing when quiet.
 */
export interface Progress {
  update(sentences: number, candidates: number, bytesDone: number): void;
  done(message: string): void;
}

export function createProgress(options: { quiet: boolean; totalBytes: number | null; stream?: NodeJS.WriteStream }): Progress {
  const out = options.stream ?? process.stderr;
  if (options.quiet) return { update() {}, done() {} };
  const tty = Boolean(out.isTTY);
  const start = Date.now();
  let last = 0;
  const line = (sentences: number, candidates: number, bytesDone: number): string => {
    const secs = (Date.now() - start) / 1000;
    const rate = secs > 0 ? Math.round(candidates / secs) : 0;
    let eta = '';
    let bar = '';
    if (options.totalBytes && options.totalBytes > 0) {
      const f = Math.min(1, bytesDone / options.totalBytes);
      if (f > 0.001) eta = ` ETA ${Math.round(secs / f - secs)}s`;
      const width = 24;
      bar = `[${'#'.repeat(Math.round(f * width)).padEnd(width, '.')}] ${(100 * f).toFixed(0)}% `;
    }
    return `${bar}${sentences.toLocaleString('en-US')} sentences, ${candidates.toLocaleString('en-US')} candidates, ${rate.toLocaleString('en-US')} candidates/s${eta}`;
  };
  return {
    update(sentences, candidates, bytesDone) {
      const now = Date.now();
      if (now - last < (tty ? 200 : 5000)) return;
      last = now;
      if (tty) out.write(`\r${line(sentences, candidates, bytesDone)}\x1b[K`);
      else out.write(`sheaf prepare: ${line(sentences, candidates, bytesDone)}\n`);
    },
    done(message) {
      if (tty) out.write('\r\x1b[K');
      out.write(`${message}\n`);
    },
  };
}
