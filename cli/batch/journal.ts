import {
  closeSync,
  existsSync,
  fstatSync,
  fsyncSync,
  openSync,
  readFileSync,
  rmSync,
  writeSync,
} from 'node:fs';
import { BackgroundFlush } from './backgroundFlush.js';
import { ReadBack } from './readBack.js';

/**
 * The batch journal: one JSON line per finished sample, appended as results arrive, so that a killed
 * batch keeps everything it finished and `--resume` can pick up from it. A line is only trusted when
 * it ends in a newline and parses: a kill in the middle of a write leaves at most one torn last line,
 * which is ignored. The data reaches the operating system at every append (so it survives the
 * process being killed); it is flushed to the disk itself at most every `syncEveryMs` and at close,
 * which bounds the loss on a power cut without paying a disk flush per sample. The periodic flushes
 * run in the background (`BackgroundFlush`).
 */
export class Journal {
  private fd: number;
  private offset: number;
  private readonly flush: BackgroundFlush | null;

  /**
   * `syncEveryMs` (default 200) bounds the time between flushes to the disk; Infinity never flushes,
   * for a scratch file that only has to outlive the process's own writes.
   */
  constructor(
    readonly path: string,
    options: { append: boolean; syncEveryMs?: number },
  ) {
    this.fd = openSync(path, options.append ? 'a' : 'w');
    this.offset = options.append ? fstatSync(this.fd).size : 0;
    this.syncEveryMs = options.syncEveryMs ?? 200;
    this.flush = Number.isFinite(this.syncEveryMs) ? new BackgroundFlush(path, this.syncEveryMs) : null;
  }

  private readonly syncEveryMs: number;

  /** Appends one JSON text (no newline inside) and returns where it sits, for reading it back. */
  append(json: string): { offset: number; length: number } {
    return this.appendLine(Buffer.from(json + '\n', 'utf8'));
  }

  /**
   * Appends one line already encoded as UTF-8 and ending in a newline (a worker encodes its result, so
   * the main thread only copies bytes); returns where the line sits, without its newline.
   */
  appendLine(line: Uint8Array): { offset: number; length: number } {
    if (line[line.length - 1] !== 10) throw new Error('a journal line must end in a newline');
    writeSync(this.fd, line);
    const at = { offset: this.offset, length: line.length - 1 };
    this.offset += line.length;
    this.flush?.due();
    return at;
  }

  /** Reads back an appended line's JSON text. */
  read(at: { offset: number; length: number }): string {
    return this.readBytes(at).toString('utf8');
  }

  /** Reads back an appended line as UTF-8 bytes, for copying into another file without decoding. */
  readBytes(at: { offset: number; length: number }): Buffer {
    return Buffer.from(this.readBytesTransient(at));
  }

  private back: ReadBack | null = null;

  /** As `readBytes`, into a buffer that the next call reuses (see `ReadBack`). */
  readBytesTransient(at: { offset: number; length: number }): Uint8Array {
    this.back ??= new ReadBack(this.path);
    return this.back.read(at.offset, at.length);
  }

  close(): void {
    this.flush?.close();
    if (this.fd !== -1) {
      if (this.flush) fsyncSync(this.fd);
      closeSync(this.fd);
      this.fd = -1;
    }
    this.back?.close();
    this.back = null;
  }

  remove(): void {
    this.close();
    rmSync(this.path, { force: true });
  }
}

/**
 * Every complete, parseable line of a journal, as its UTF-8 bytes (a view of the file's) with its
 * parsed value, one at a time (a journal of thousands of samples with curves is never parsed all at
 * once, and its text is not kept as strings); a torn tail is dropped.
 */
export function* readJournal(path: string): Generator<{ bytes: Buffer; value: unknown }> {
  if (!existsSync(path)) return;
  yield* completeJsonLines(readFileSync(path));
}

/**
 * The JSON objects of a file written one per line, as a killed writer left it: a line only counts when
 * it ends in a newline and parses (a line torn by a crash, even one followed by later appends, is
 * skipped: its sample reruns). A comma ending a line (the separator in results.json's temporary copy)
 * is left out, and lines that are not objects (its brackets) are passed over.
 */
export function* completeJsonLines(content: Buffer): Generator<{ bytes: Buffer; value: unknown }> {
  let start = 0;
  for (;;) {
    const end = content.indexOf(10, start);
    if (end < 0) break; // a line without its newline was being written when the process died
    const stop = end > start && content[end - 1] === 44 ? end - 1 : end;
    const bytes = content.subarray(start, stop);
    start = end + 1;
    if (bytes[0] !== 123) continue;
    let value: unknown;
    try {
      value = JSON.parse(bytes.toString('utf8'));
    } catch {
      continue;
    }
    yield { bytes, value };
  }
}
