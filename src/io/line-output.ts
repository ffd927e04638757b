/**
 * Lines to stdout (or any writable stream), in bounded memory: lines are
 * gathered into chunks and written with back-pressure (a slow reader pauses
 * the producer instead of filling memory). A reader that goes away (`| head`
 * closes the pipe: EPIPE) ends the output quietly; `closed` tells the
 * producer to stop.
 */
export class LineOutput {
  private parts: string[] = [];
  private size = 0;
  closed = false;

  constructor(private readonly stream: NodeJS.WritableStream = process.stdout, private readonly chunk = 1 << 16) {
    stream.on('error', (e: NodeJS.ErrnoException) => {
      if (e.code === 'EPIPE') this.closed = true;
      else throw e;
    });
  }

  async line(text: string): Promise<void> {
    if (this.closed) return;
    this.parts.push(text, '\n');
    this.size += text.length + 1;
    if (this.size >= this.chunk) await this.flush();
  }

  async flush(): Promise<void> {
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
  }
}
