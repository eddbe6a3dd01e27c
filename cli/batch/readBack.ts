import { closeSync, openSync, readSync } from 'node:fs';

/**
 * Reads stretches of a file back while it is being written (a stream's temporary copy), each into a
 * buffer that the next read reuses: for copying them into another file one after another, which a
 * fresh buffer per stretch of 100 kB would slow several times. The descriptor keeps the file
 * readable after it is renamed or removed; once closed, a (rare) later read opens `laterPath`, the
 * finished file holding the same bytes, when one is given.
 */
export class ReadBack {
  private fd: number;
  private scratch = Buffer.allocUnsafe(0);

  constructor(
    path: string,
    private readonly laterPath?: string,
  ) {
    this.fd = openSync(path, 'r');
  }

  /** `length` bytes from `offset`, valid until the next read. */
  read(offset: number, length: number): Uint8Array {
    if (this.scratch.length < length) this.scratch = Buffer.allocUnsafe(Math.max(length, 1 << 20));
    if (this.fd === -1 && this.laterPath === undefined) throw new Error('read after the file was closed');
    const fd = this.fd !== -1 ? this.fd : openSync(this.laterPath!, 'r');
    try {
      readSync(fd, this.scratch, 0, length, offset);
    } finally {
      if (fd !== this.fd) closeSync(fd);
    }
    return this.scratch.subarray(0, length);
  }

  close(): void {
    if (this.fd === -1) return;
    closeSync(this.fd);
    this.fd = -1;
  }
}
