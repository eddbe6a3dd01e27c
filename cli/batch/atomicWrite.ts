import { closeSync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { BackgroundFlush } from './backgroundFlush.js';

/** The temporary name a file is written under before it is renamed into place. */
export function temporaryName(path: string): string {
  return `${path}.tmp-${process.pid}`;
}

/**
 * A file written so that it is either absent, the old version or the complete new one, never a
 * fragment: the chunks go to a temporary file in the same directory (rename does not cross file
 * systems), which `commit` flushes to disk and renames over the target; `abort` removes it.
 */
export class AtomicFile {
  private fd: number;
  readonly temporaryPath: string;

  constructor(readonly path: string) {
    this.temporaryPath = temporaryName(path);
    this.fd = openSync(this.temporaryPath, 'w');
  }

  write(chunk: string | Uint8Array): void {
    writeSync(this.fd, typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk);
    this.flush?.due();
  }

  private flush: BackgroundFlush | null = null;

  /**
   * For a file written over a long time: flush what has been written to the disk in the background,
   * at most every `everyMs`, so that the final flush in `commit` has little left to do.
   */
  flushWhileWriting(everyMs: number): this {
    this.flush = new BackgroundFlush(this.temporaryPath, everyMs);
    return this;
  }

  commit(): void {
    this.flush?.close();
    fsyncSync(this.fd);
    closeSync(this.fd);
    this.fd = -1;
    renameSync(this.temporaryPath, this.path);
  }

  /** Removes the temporary file (after an error); the target is left as it was. */
  abort(): void {
    this.flush?.close();
    if (this.fd !== -1) {
      try {
        closeSync(this.fd);
      } catch {
        // already closed
      }
      this.fd = -1;
    }
    rmSync(this.temporaryPath, { force: true });
  }
}

/**
 * Writes a file atomically (see `AtomicFile`). On any error the temporary file is removed and the
 * error rethrown.
 */
export function writeFileAtomic(path: string, chunks: string | Iterable<string | Uint8Array>): void {
  const file = new AtomicFile(path);
  try {
    if (typeof chunks === 'string') file.write(chunks);
    else for (const chunk of chunks) file.write(chunk);
    file.commit();
  } catch (err) {
    file.abort();
    throw err;
  }
}
