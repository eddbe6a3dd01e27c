import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { SampleResult } from '../../shared/schema.js';
import { byManifestOrder } from '../../src/batch/merge.js';
import { AtomicFile, temporaryName, writeFileAtomicDeferred } from './atomicWrite.js';
import { completeJsonLines } from './journal.js';
import { ReadBack } from './readBack.js';
import { SpareBuffers, roomFor } from './spareBuffers.js';
import type { OutputEntry } from './writeOutputs.js';

/** Bytes of out-of-order results kept in memory before later ones are left in the journal. */
const DEFAULT_MAX_HELD_BYTES = 32 * 1024 * 1024;

/**
 * results.json, written while the batch runs instead of copied out of the journal at the end: each
 * sample goes into the file's temporary copy as soon as every sample before it in manifest order has
 * arrived. Workers finish a little out of order, so a result that comes early waits, with its bytes
 * in memory up to `maxHeldBytes` in all; one past that bound is left to the caller (who keeps it in
 * the journal). `finish` adds the samples still waiting (a stopped batch leaves gaps) and puts the
 * file in place; the text is the same as `resultsJsonChunks` makes from all entries at the end (and
 * when the samples that arrived do not match those announced, that is how it is written).
 *
 * The temporary copy also serves a killed batch: its complete lines are results (see
 * `readUnfinishedResults`). An entry whose line the stream wrote or holds reads its text from there.
 */
export class ResultsJsonStream {
  private readonly file: AtomicFile;
  private readonly slotOf = new Map<string, number>();
  private readonly entries: (OutputEntry | undefined)[];
  private readonly held: (Uint8Array | undefined)[];
  private heldBytes = 0;
  private next = 0;
  private written = 0;
  /** The samples did not arrive as announced: the file is written whole at the end. */
  private unordered = false;
  /** Bytes in the temporary copy so far. */
  private offset = 0;
  /** For reading written lines back (an entry's `json`/`bytes`). */
  private readonly back: ReadBack;
  /** Buffers of held lines already written, to hold later ones in. */
  private readonly spare = new SpareBuffers<ArrayBuffer>();

  /** `expected`: every sample the batch will output, in any order. */
  constructor(
    readonly path: string,
    expected: Pick<SampleResult, 'sample' | 'manifestRow'>[],
    private readonly maxHeldBytes = DEFAULT_MAX_HELD_BYTES,
  ) {
    const order = expected.slice().sort((a, b) => byManifestOrder(a as SampleResult, b as SampleResult));
    order.forEach((e, i) => {
      if (this.slotOf.has(e.sample)) this.unordered = true;
      this.slotOf.set(e.sample, i);
    });
    this.entries = new Array(order.length);
    this.held = new Array(order.length);
    this.file = new AtomicFile(path).flushWhileWriting(250);
    this.back = new ReadBack(this.file.temporaryPath, path);
    this.put('[\n');
  }

  private put(chunk: string | Uint8Array): void {
    this.file.write(chunk);
    this.offset += typeof chunk === 'string' ? Buffer.byteLength(chunk) : chunk.length;
  }

  /** Points an entry's `json`/`bytes` at a stretch of the temporary copy. */
  private readFromFile(e: OutputEntry, offset: number, length: number): void {
    e.bytes = () => this.back.read(offset, length);
    e.json = () => Buffer.from(this.back.read(offset, length)).toString('utf8');
  }

  /**
   * A finished sample, with its JSON line (ending in a newline) when it is at hand. Says what became
   * of the line: 'written' into the file, 'held' in memory (a copy) until the samples before it
   * arrive, or 'left' to the caller, who keeps it
   * where the entry's `json`/`bytes` can read it (past the memory bound, or when the samples do not
   * arrive as announced). The stream points the entry's `json`/`bytes` at the copy it writes or holds.
   * The caller's bytes are not used after this returns.
   */
  add(entry: OutputEntry, line?: Uint8Array): 'written' | 'held' | 'left' {
    if (this.unordered) return 'left';
    const at = this.slotOf.get(entry.brief.sample);
    if (at === undefined || this.entries[at] || at < this.next) {
      this.unordered = true;
      return 'left';
    }
    this.entries[at] = entry;
    const kept =
      line !== undefined && (at === this.next || this.heldBytes + line.length <= this.maxHeldBytes);
    // The next one in order is written at once; one that must wait is kept in a copy of its own, so
    // that the caller's buffer (a worker's, written into again) is free as soon as this returns.
    if (kept) this.hold(at, entry, at === this.next ? line : this.copyOf(line));
    while (this.next < this.entries.length && this.entries[this.next]) this.writeSlot(this.next++);
    return !kept ? 'left' : this.held[at] ? 'held' : 'written';
  }

  private copyOf(line: Uint8Array): Uint8Array {
    const copy = new Uint8Array(
      this.spare.take(line.length) ?? new ArrayBuffer(roomFor(line.length)),
      0,
      line.length,
    );
    copy.set(line);
    return copy;
  }

  private hold(at: number, entry: OutputEntry, line: Uint8Array): void {
    this.held[at] = line;
    this.heldBytes += line.length;
    const text = line.subarray(0, line.length - 1);
    entry.bytes = () => text;
    entry.json = () => Buffer.from(text).toString('utf8');
  }

  private writeSlot(i: number): void {
    const e = this.entries[i]!;
    if (this.written++) this.put(',\n');
    const line = this.held[i];
    const start = this.offset;
    if (line) {
      this.put(line.subarray(0, line.length - 1));
      this.held[i] = undefined;
      this.heldBytes -= line.length;
    } else this.put(e.bytes ? e.bytes() : e.json());
    this.readFromFile(e, start, this.offset - start);
    // The entry now reads its text from the file: a copy held for it can take a later line.
    if (line && line.buffer instanceof ArrayBuffer) this.spare.give(line.buffer);
  }

  /** Completes the file and renames it into place. `ordered`: all entries, in manifest order. */
  finish(ordered: OutputEntry[]): Promise<void> {
    try {
      const arrived = this.entries.filter((e): e is OutputEntry => e !== undefined);
      if (
        this.unordered ||
        arrived.length !== ordered.length ||
        arrived.some((e, k) => e.brief.sample !== ordered[k].brief.sample)
      ) {
        // The entries read from the old copy while the new one is written and after: gone from the
        // folder, it stays readable through the descriptor, which is left open for them.
        this.file.abort();
        return writeFileAtomicDeferred(this.path, resultsJsonChunks(ordered));
      }
      for (let i = this.next; i < this.entries.length; i++) if (this.entries[i]) this.writeSlot(i);
      this.put('\n]\n');
    } catch (err) {
      this.abort();
      throw err;
    }
    return this.file.commitDeferred().finally(() => this.back.close());
  }

  /** Removes the temporary copy (the batch failed before its outputs were written). */
  abort(): void {
    this.file.abort();
    this.back.close();
  }
}

/** results.json from all entries at once, one sample per line, in the order given. */
export function* resultsJsonChunks(entries: OutputEntry[]): Generator<string | Uint8Array> {
  yield '[\n';
  for (let k = 0; k < entries.length; k++) {
    if (k) yield ',\n';
    const e = entries[k];
    yield e.bytes ? e.bytes() : e.json();
  }
  yield '\n]\n';
}

/**
 * The results in the temporary copies of results.json that killed batches left in `dir` (not this
 * process's own): every complete line that parses, as `readJournal` reads the journal. Read by
 * `--resume` before the copies are cleared.
 */
export function* readUnfinishedResults(dir: string): Generator<{ bytes: Buffer; value: unknown }> {
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return;
  }
  const mine = temporaryName('results.json');
  for (const name of names) {
    if (!/^results\.json\.tmp-\d+$/.test(name) || name === mine) continue;
    let content: Buffer;
    try {
      content = readFileSync(join(dir, name));
    } catch {
      continue;
    }
    yield* completeJsonLines(content);
  }
}
