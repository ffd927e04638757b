/**
 * Progress on stderr: a one-line bar when stderr is a TTY, plain lines every
 * few seconds otherwise (the first one interval after the start), nothing
 * when quiet. Everything shown counts work *finished* (sentences written or
 * rejected, and the input bytes they came from), never input read ahead;
 * rates and the ETA are averaged over at least the last 10 seconds.
 */
export interface ProgressCounts {
  sentences: number;
  candidates: number;
  /** Input bytes of the records finished so far (of `totalBytes`). */
  bytesDone: number;
}

export interface Progress {
  update(c: ProgressCounts): void;
  done(message: string): void;
}

/** The averaging window of rates, in ms. */
export const RATE_WINDOW_MS = 10_000;

interface Sample {
  t: number;
  candidates: number;
  bytes: number;
}

/**
 * Rates over a sliding window: from the newest sample at least `window` ms
 * old (or the start) to now. Pure; `now` is passed in.
 */
export class RateWindow {
  private samples: Sample[] = [];

  constructor(start: number, private readonly window = RATE_WINDOW_MS) {
    this.samples.push({ t: start, candidates: 0, bytes: 0 });
  }

  /** Records a sample and returns the rates (per second) over the window. */
  add(now: number, candidates: number, bytes: number): { candidates: number; bytes: number } {
    const s = this.samples;
    // Keep one sample a second at most; drop those older than the newest one past the window.
    if (now - s[s.length - 1].t >= 1000) s.push({ t: now, candidates, bytes });
    while (s.length > 2 && now - s[1].t >= this.window) s.shift();
    const from = s[0];
    const secs = (now - from.t) / 1000;
    if (secs <= 0) return { candidates: 0, bytes: 0 };
    return { candidates: (candidates - from.candidates) / secs, bytes: (bytes - from.bytes) / secs };
  }
}

export function createProgress(options: { quiet: boolean; label: string; totalBytes: number | null; stream?: NodeJS.WriteStream; now?: () => number }): Progress {
  const out = options.stream ?? process.stderr;
  if (options.quiet) return { update() {}, done() {} };
  const clock = options.now ?? Date.now;
  const tty = Boolean(out.isTTY);
  const start = clock();
  const rates = new RateWindow(start);
  // The first periodic line comes one interval after the start, not at once.
  let last = start;
  const n = (x: number) => Math.round(x).toLocaleString('en-US');
  const line = (c: ProgressCounts, now: number): string => {
    const r = rates.add(now, c.candidates, c.bytesDone);
    let eta = '';
    let bar = '';
    if (options.totalBytes && options.totalBytes > 0) {
      const f = Math.min(1, c.bytesDone / options.totalBytes);
      if (r.bytes > 0 && now - start >= 2000) eta = `, about ${formatSeconds((options.totalBytes - c.bytesDone) / r.bytes)} left`;
      const width = 24;
      bar = `[${'#'.repeat(Math.floor(f * width)).padEnd(width, '.')}] ${Math.floor(100 * f)}% `;
    }
    return `${bar}${n(c.sentences)} sentences, ${n(c.candidates)} candidates done, ${n(r.candidates)} candidates/s${eta}`;
  };
  return {
    update(c) {
      const now = clock();
      if (now - last < (tty ? 200 : 5000)) return;
      last = now;
      if (tty) out.write(`\r${line(c, now)}\x1b[K`);
      else out.write(`${options.label}: ${line(c, now)}\n`);
    },
    done(message) {
      if (tty) out.write('\r\x1b[K');
      out.write(`${message}\n`);
    },
  };
}

function formatSeconds(s: number): string {
  if (!Number.isFinite(s)) return '?';
  if (s < 90) return `${Math.max(1, Math.round(s))} s`;
  if (s < 5400) return `${Math.round(s / 60)} min`;
  return `${(s / 3600).toFixed(1)} h`;
}
