import { closeSync, fsync, openSync } from 'node:fs';

/**
 * Flushes a file that is being written to the disk itself, on a thread of Node's pool, at most every
 * `everyMs` and one flush at a time. A flush of tens of megabytes takes tens of milliseconds, which on
 * the batch's own thread would leave the workers waiting for their next sample; flushing as the file
 * grows also leaves little for the final, blocking flush. It goes through a read-only descriptor of
 * its own (fsync flushes the file, whichever descriptor names it), which it closes once no flush is
 * running, so that the writer may close or rename the file at any time.
 */
export class BackgroundFlush {
  private fd = -1;
  private running = false;
  private closeWhenDone = false;
  private last = Date.now();

  constructor(
    private readonly path: string,
    private readonly everyMs: number,
  ) {}

  /** Starts a flush when `everyMs` have passed since the last one started and none is running. */
  due(): void {
    const now = Date.now();
    if (this.running || this.closeWhenDone || now - this.last < this.everyMs) return;
    this.last = now;
    if (this.fd === -1) this.fd = openSync(this.path, 'r');
    this.running = true;
    fsync(this.fd, () => {
      this.running = false;
      if (this.closeWhenDone) this.close();
    });
  }

  /** No more flushes; the descriptor is closed now, or when the running flush ends. */
  close(): void {
    this.closeWhenDone = true;
    if (this.running) return;
    if (this.fd !== -1) closeSync(this.fd);
    this.fd = -1;
  }
}
