import type { SampleResult } from '../../shared/schema.js';
import { byManifestOrder } from '../../src/batch/merge.js';
import { AtomicFile, writeFileAtomicDeferred } from './atomicWrite.js';
import type { OutputEntry } from './writeOutputs.js';

/** Bytes of out-of-order results kept in memory before later ones are left in the journal. */
const DEFAULT_MAX_HELD_BYTES = 32 * 1024 * 1024;

/**
 * results.json, written while the batch runs instead of copied out of the journal at the end: each
 * sample goes into the file's temporary copy as soon as every sample before it in manifest order has
 * arrived. Workers finish a little out of order, so a result that comes early waits, with its bytes
 * in memory up to `maxHeldBytes` in all, beyond that in the journal. `finish` adds the samples still
 * waiting (a stopped batch leaves gaps) and puts the file in place; the text is the same as
 * `resultsJsonChunks` makes from all entries at the end (and when the samples that arrived do not
 * match those announced, that is how it is written).
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
    this.file = new AtomicFile(path).flushWhileWriting(1000);
    this.file.write('[\n');
  }

  /**
   * A finished sample, with its JSON line (ending in a newline) when it is at hand. Returns true when
   * the line is kept for later (the caller must then leave its bytes alone), false when it was
   * written or not needed.
   */
  add(entry: OutputEntry, line?: Uint8Array): boolean {
    if (this.unordered) return false;
    const at = this.slotOf.get(entry.brief.sample);
    if (at === undefined || this.entries[at] || at < this.next) {
      this.unordered = true;
      return false;
    }
    this.entries[at] = entry;
    if (line && (at === this.next || this.heldBytes + line.length <= this.maxHeldBytes)) {
      this.held[at] = line;
      this.heldBytes += line.length;
    }
    while (this.next < this.entries.length && this.entries[this.next]) this.writeSlot(this.next++);
    return this.held[at] !== undefined;
  }

  private writeSlot(i: number): void {
    const e = this.entries[i]!;
    if (this.written++) this.file.write(',\n');
    const line = this.held[i];
    if (line) {
      this.file.write(line.subarray(0, line.length - 1));
      this.held[i] = undefined;
      this.heldBytes -= line.length;
    } else this.file.write(e.bytes ? e.bytes() : e.json());
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
        this.file.abort();
        return writeFileAtomicDeferred(this.path, resultsJsonChunks(ordered));
      }
      for (let i = this.next; i < this.entries.length; i++) if (this.entries[i]) this.writeSlot(i);
      this.file.write('\n]\n');
    } catch (err) {
      this.file.abort();
      throw err;
    }
    return this.file.commitDeferred();
  }

  /** Removes the temporary copy (the batch failed before its outputs were written). */
  abort(): void {
    this.file.abort();
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
