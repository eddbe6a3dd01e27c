import { closeSync, fsync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { promisify } from 'node:util';
import { BackgroundFlush } from './backgroundFlush.js';

const fsyncOffThread = promisify(fsync);

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

  /** `temporaryPath`: default `temporaryName(path)`. */
  constructor(
    readonly path: string,
    temporaryPath?: string,
  ) {
    this.temporaryPath = temporaryPath ?? temporaryName(path);
    this.fd = openSync(this.temporaryPath, 'w');
  }

  write(chunk: string | Uint8Array): void {
    const bytes = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk;
    for (let done = 0; done < bytes.length;) done += writeSync(this.fd, bytes, done, bytes.length - done);
    this.flush?.due();
  }

  /** Writes all of `bytes` at `position` in the file (which grows as needed). */
  writeAt(bytes: Uint8Array, position: number): void {
    for (let done = 0; done < bytes.length;)
      done += writeSync(this.fd, bytes, done, bytes.length - done, position + done);
    this.flush?.due();
  }

  /**
   * Writes pieces of text and bytes one after another, from `position` (from the file's current
   * offset when omitted), gathered in one buffer kept for every file: text is encoded straight into
   * it and small byte pieces are copied, so that thousands of pieces (a report's summary, a table's
   * rows) make a few large writes and no buffer of their own. Returns the number of bytes written.
   */
  writePieces(pieces: Iterable<string | Uint8Array>, position?: number): number {
    const buffer = pieceBuffer();
    let used = 0;
    let written = 0;
    const out = (bytes: Uint8Array) => {
      if (position === undefined) this.write(bytes);
      else this.writeAt(bytes, position + written);
      written += bytes.length;
    };
    const flush = () => {
      if (used) out(buffer.subarray(0, used));
      used = 0;
    };
    for (const piece of pieces) {
      if (typeof piece === 'string') {
        // UTF-8 takes at most 3 bytes per UTF-16 unit: text sure to fit is encoded without measuring.
        if (3 * piece.length > buffer.length - used) {
          flush();
          if (3 * piece.length > buffer.length) {
            out(Buffer.from(piece, 'utf8'));
            continue;
          }
        }
        used += buffer.write(piece, used, 'utf8');
      } else if (piece.length > buffer.length - used) {
        flush();
        if (piece.length > buffer.length >> 1) out(piece);
        else {
          buffer.set(piece, used);
          used = piece.length;
        }
      } else {
        buffer.set(piece, used);
        used += piece.length;
      }
    }
    flush();
    return written;
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

  /**
   * As `commit`, with the flush to disk done on the I/O threads, so that this thread can write other
   * files meanwhile (a batch's report is tens of megabytes). The file is in place when the promise
   * resolves; on failure the temporary file is removed and the promise rejects.
   */
  async commitDeferred(): Promise<void> {
    this.flush?.close();
    try {
      await fsyncOffThread(this.fd);
      closeSync(this.fd);
      this.fd = -1;
      renameSync(this.temporaryPath, this.path);
    } catch (err) {
      this.abort();
      throw err;
    }
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
  const file = writeChunks(path, chunks);
  try {
    file.commit();
  } catch (err) {
    file.abort();
    throw err;
  }
}

/**
 * As `writeFileAtomic`, with the flush to disk and the rename deferred (see `commitDeferred`): the
 * text is written before this returns (a failure to write throws here), the file is in place when
 * the promise resolves.
 */
export function writeFileAtomicDeferred(
  path: string,
  chunks: string | Iterable<string | Uint8Array>,
): Promise<void> {
  return writeChunks(path, chunks).commitDeferred();
}

/** Bytes `AtomicFile.writePieces` gathers into one write. */
const PIECE_BUFFER_BYTES = 1 << 20;
let pieceBufferKept: Buffer | null = null;
function pieceBuffer(): Buffer {
  pieceBufferKept ??= Buffer.allocUnsafe(PIECE_BUFFER_BYTES);
  return pieceBufferKept;
}

/** The chunks written to a new temporary file, not yet committed; removed again if writing fails. */
function writeChunks(path: string, chunks: string | Iterable<string | Uint8Array>): AtomicFile {
  const file = new AtomicFile(path);
  try {
    if (typeof chunks === 'string') file.write(chunks);
    else file.writePieces(chunks);
    return file;
  } catch (err) {
    file.abort();
    throw err;
  }
}
