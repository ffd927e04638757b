/**
 * Lines to stdout (or any writable stream), in bounded memory: lines are
 * gathered into chunks and written with back-pressure (a slow reader pauses
 * the producer instead of filling memory). A reader that goes away (`| head`
 * closes the pipe: EPIPE) ends the output quietly; `closed` tells the
 * producer to stop; any other write error (a full disk) is thrown by the
 * next call.
 */
import { environmentError } from './fs-faults.js';
export class LineOutput {
  private parts: string[] = [];
  private size = 0;
  private failure: unknown = null;
  closed = false;

  constructor(private readonly stream: NodeJS.WritableStream = process.stdout, private readonly chunk = 1 << 16, private readonly name = 'stdout') {
    stream.on('error', (e: NodeJS.ErrnoException) => {
      this.closed = true;
      // Any other failure (a full disk behind `> file`) is reported by the next call, as an error the CLI explains.
      if (e.code !== 'EPIPE') this.failure = environmentError(e, this.name, 'write to');
    });
  }

  async line(text: string): Promise<void> {
    if (this.failure) throw this.failure;
    if (this.closed) return;
    this.parts.push(text, '\n');
    this.size += text.length + 1;
    if (this.size >= this.chunk) await this.flush();
  }

  async flush(): Promise<void> {
    if (this.failure) throw this.failure;
    if (this.size === 0 || this.closed) return;
    const data = this.parts.join('');
    this.parts = [];
    this.size = 0;
    if (!this.stream.write(data)) {
      await new Promise<void>((resolve) => {
        const done = () => {
          this.stream.off('drain', done);
          this.stream.off('error', done);
          this.stream.off('close', done);
          resolve();
        };
        this.stream.on('drain', done);
        this.stream.on('error', done);
        this.stream.on('close', done);
      });
    }
    if (this.failure) throw this.failure;
  }
}
