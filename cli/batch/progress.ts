/**
 * A one-line progress bar on a terminal: done/total, samples per second, time left. Redrawn at most
 * ten times a second; draws nothing when the stream is not a terminal or when asked to be quiet.
 */
export class ProgressBar {
  private readonly start = Date.now();
  private lastDraw = 0;
  private drawn = false;

  constructor(
    private readonly total: number,
    private readonly stream: NodeJS.WriteStream,
    private readonly enabled: boolean,
  ) {}

  static for(total: number, quiet: boolean, stream: NodeJS.WriteStream = process.stderr): ProgressBar {
    return new ProgressBar(total, stream, !quiet && stream.isTTY === true && total > 0);
  }

  update(done: number, failed: number): void {
    if (!this.enabled) return;
    const now = Date.now();
    if (now - this.lastDraw < 100 && done < this.total) return;
    this.lastDraw = now;
    const seconds = (now - this.start) / 1000;
    const rate = seconds > 0 ? done / seconds : 0;
    const left = rate > 0 ? (this.total - done) / rate : NaN;
    const width = Math.max(10, Math.min(40, (this.stream.columns ?? 80) - 50));
    const filled = Math.round((width * done) / this.total);
    const bar = '#'.repeat(filled) + '.'.repeat(width - filled);
    const failedText = failed ? `, ${failed} failed` : '';
    const line = `[${bar}] ${done}/${this.total}${failedText}  ${rate.toFixed(rate < 10 ? 1 : 0)}/s  ${formatSeconds(left)} left`;
    this.stream.write(`\r${line}\x1b[K`);
    this.drawn = true;
  }

  /** Ends the bar's line so that what follows starts on a fresh one. */
  finish(): void {
    if (this.drawn) this.stream.write('\n');
    this.drawn = false;
  }
}

function formatSeconds(s: number): string {
  if (!Number.isFinite(s)) return '–';
  if (s < 60) return `${Math.ceil(s)} s`;
  const m = Math.floor(s / 60);
  if (m < 60) return `${m} min ${Math.round(s - 60 * m)} s`;
  return `${Math.floor(m / 60)} h ${m % 60} min`;
}
