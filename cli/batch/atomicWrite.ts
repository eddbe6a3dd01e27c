import { closeSync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';

/** The temporary name a file is written under before it is renamed into place. */
export function temporaryName(path: string): string {
  return `${path}.tmp-${process.pid}`;
}

/**
 * Writes a file so that it is either absent, the old version or the complete new one, never a
 * fragment: the chunks go to a temporary file in the same directory (rename does not cross file
 * systems), which is flushed to disk and then renamed over the target. On any error the temporary
 * file is removed and the error rethrown.
 */
export function writeFileAtomic(path: string, chunks: string | Iterable<string | Uint8Array>): void {
  const tmp = temporaryName(path);
  const fd = openSync(tmp, 'w');
  try {
    if (typeof chunks === 'string') writeSync(fd, chunks);
    else
      for (const chunk of chunks)
        writeSync(fd, typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk);
    fsyncSync(fd);
    closeSync(fd);
  } catch (err) {
    try {
      closeSync(fd);
    } catch {
      // already closed
    }
    rmSync(tmp, { force: true });
    throw err;
  }
  renameSync(tmp, path);
}
