// A progress line on standard error while a terminal watches: files done, records, MB/s, ETA.
// Nothing at all when standard error is not a terminal (a CI log) or with --quiet.

export class ProgressBar {
  private timer: NodeJS.Timeout | null = null;
  private readonly started = Date.now();
  filesDone = 0;
  records = 0;
  /** Bytes of finished files plus the running files' progress. */
  private doneBytes = 0;
  private running = new Map<number, number>();

  constructor(
    private readonly err: NodeJS.WriteStream | NodeJS.WritableStream,
    private readonly files: number,
    private readonly totalBytes: number,
    private readonly enabled: boolean,
  ) {
    if (enabled) {
      this.draw();
      this.timer = setInterval(() => this.draw(), 250);
      this.timer.unref();
    }
  }

  update(file: number, bytes: number): void {
    this.running.set(file, bytes);
  }

  finish(file: number, bytes: number, records: number): void {
    this.running.delete(file);
    this.doneBytes += bytes;
    this.filesDone++;
    this.records += records;
  }

  line(): string {
    const secs = Math.max(0.001, (Date.now() - this.started) / 1000);
    let bytes = this.doneBytes;
    for (const b of this.running.values()) bytes += b;
    const rate = bytes / secs;
    const share = this.totalBytes > 0 ? Math.min(1, bytes / this.totalBytes) : 0;
    const width = 24;
    const filled = Math.round(share * width);
    const eta = rate > 0 && share < 1 ? (this.totalBytes - bytes) / rate : 0;
    const mmss = (s: number) => `${Math.floor(s / 60)}:${String(Math.floor(s % 60)).padStart(2, '0')}`;
    return `[${'█'.repeat(filled)}${'░'.repeat(width - filled)}] ${this.filesDone}/${this.files} files · ${this.records.toLocaleString('en-US')} records · ${(rate / 1e6).toFixed(1)} MB/s · ETA ${mmss(eta)}`;
  }

  private draw(): void {
    this.err.write(`\r${this.line()}\u001b[K`);
  }

  stop(): void {
    if (this.timer) {
      clearInterval(this.timer);
      this.timer = null;
      this.err.write('\r\u001b[K');
    }
  }
}
