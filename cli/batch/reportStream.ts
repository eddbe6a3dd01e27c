import {
  CURVE_BLOCK_CLOSING,
  curveBlockOpening,
  REPORT_END,
  reportHeadPieces,
  reportHtmlPieces,
  type ReportAssets,
} from '../../shared/reportHtml.js';
import type { ReportData, SampleResult } from '../../shared/schema.js';
import { byManifestOrder } from '../../src/batch/merge.js';
import { AtomicFile, temporaryName, writeFileAtomicDeferred } from './atomicWrite.js';
import { ReadBack } from './readBack.js';
import { reportCurvesOf, type OutputEntry } from './writeOutputs.js';

/** Results seen before the room for the page's head is set. */
const RESULTS_BEFORE_RESERVING = 16;
/** Margin on the largest summary and curves block seen by then. */
const ROOM_MARGIN = 1.25;
/** Room per series, and per point of one (a series' JSON holds about 200 bytes per point). */
const SERIES_BYTES = 8192;
const SERIES_BYTES_PER_POINT = 512;

function byteLength(piece: string | Uint8Array): number {
  return typeof piece === 'string' ? Buffer.byteLength(piece) : piece.length;
}

function bytesOf(piece: string | Uint8Array): Uint8Array {
  return typeof piece === 'string' ? Buffer.from(piece, 'utf8') : piece;
}

const SPACES = Buffer.alloc(1 << 16, 32);
const NEWLINE = Uint8Array.of(10);

/**
 * `bytes` of blank text, the last a newline, as pieces of one buffer of spaces: the head's unused
 * room is a megabyte or so, and a fresh buffer of that size had to be faulted in page by page.
 */
export function blankPieces(bytes: number): Uint8Array[] {
  const pieces: Uint8Array[] = [];
  for (let left = bytes - 1; left > 0; left -= SPACES.length)
    pieces.push(SPACES.subarray(0, Math.min(left, SPACES.length)));
  if (bytes > 0) pieces.push(NEWLINE);
  return pieces;
}

/**
 * report.html, written while the batch runs. The page's head (styles, the summary of every sample,
 * the first sample's curves and the scripts) comes first in the file but is known only at the end,
 * while the other samples' curves blocks (tens of kilobytes each) arrive all along. So the blocks go
 * into the page's temporary file as they arrive, after room left for the head; at the end the head
 * is written into that room, the rest of the room filled with spaces (blank text between two
 * elements, which the page ignores), and the file renamed into place. Nothing is copied at the end,
 * and the file has been flushed to the disk as it grew.
 *
 * The room is set once the first results are in: the largest summary seen, with a margin, for every
 * sample announced, the largest block for the first sample's, the page's fixed parts, and room for
 * series. When the head turns out larger, or the samples at the end are not the ones announced (a
 * stopped batch), the page is written afresh in order (`reportHtmlPieces`), its blocks read back from
 * this file.
 */
export class ReportStream {
  private readonly file: AtomicFile;
  private readonly slotOf = new Map<string, number>();
  /** Where each sample's block text (without its tags) sits in the file. */
  private readonly blockAt = new Map<string, { offset: number; length: number }>();
  /** Blocks that came before the room was set: copies, written once it is. */
  private readonly waiting: { sample: string; slot: number; bytes: Uint8Array }[] = [];
  /** The block of the first sample in manifest order, which goes into the head. */
  private block0: Uint8Array | null = null;
  private seen = 0;
  private summaryMax = 0;
  private blockMax = 0;
  /** Bytes of room for the head; -1 until set. */
  private room = -1;
  /** End of the blocks written so far. */
  private end = 0;
  /** A sample arrived that was not announced, or twice: the page is written afresh at the end. */
  private unordered = false;
  private readonly back: ReadBack;

  /**
   * `expected`: every sample the batch will output, in any order; `seriesCount`: how many series
   * the batch will fit (their results go into the head too).
   */
  constructor(
    readonly path: string,
    expected: Pick<SampleResult, 'sample' | 'manifestRow'>[],
    private readonly assets: ReportAssets,
    private readonly seriesCount: number,
  ) {
    const order = expected.slice().sort((a, b) => byManifestOrder(a as SampleResult, b as SampleResult));
    order.forEach((e, i) => {
      if (this.slotOf.has(e.sample)) this.unordered = true;
      this.slotOf.set(e.sample, i);
    });
    // Not report.html's own temporary name: a page written afresh at the end goes there.
    this.file = new AtomicFile(path, temporaryName(`${path}.body`)).flushWhileWriting(250);
    this.back = new ReadBack(this.file.temporaryPath);
  }

  /**
   * A finished sample: its summary text in the page (`prepareReportSample`) and its curves block as
   * the worker wrote it, if any. The block's bytes are used (or copied) before this returns.
   */
  add(sample: string, summaryText: string, block?: Uint8Array): void {
    this.seen++;
    this.summaryMax = Math.max(this.summaryMax, Buffer.byteLength(summaryText));
    if (block) {
      this.blockMax = Math.max(this.blockMax, block.length);
      let slot = this.slotOf.get(sample);
      if (slot === undefined || this.blockAt.has(sample)) {
        this.unordered = true;
        slot = -1;
      }
      if (slot === 0) this.block0 = block.slice();
      else if (this.room < 0) this.waiting.push({ sample, slot, bytes: block.slice() });
      else this.writeBlock(sample, slot, block);
    }
    if (this.room < 0 && this.seen >= Math.min(RESULTS_BEFORE_RESERVING, this.slotOf.size)) this.setRoom();
  }

  private setRoom(): void {
    const a = this.assets;
    // The scripts and styles, and 4 kB for the tags, the title and the summary's other fields.
    const fixed = 4096 + [a.appJs, a.appCss, a.uplotJs, a.uplotCss].reduce((n, s) => n + byteLength(s), 0);
    const samples = this.slotOf.size;
    this.room = Math.ceil(
      fixed +
        samples * (ROOM_MARGIN * this.summaryMax + 64) +
        ROOM_MARGIN * this.blockMax +
        this.seriesCount * (samples * SERIES_BYTES_PER_POINT + SERIES_BYTES),
    );
    this.end = this.room;
    for (const w of this.waiting.splice(0)) this.writeBlock(w.sample, w.slot, w.bytes);
  }

  /** Appends `bytes` after the blocks written so far. */
  private put(bytes: Uint8Array): void {
    this.file.writeAt(bytes, this.end);
    this.end += bytes.length;
  }

  private writeBlock(sample: string, slot: number, block: Uint8Array): void {
    this.put(bytesOf(curveBlockOpening(slot)));
    this.blockAt.set(sample, { offset: this.end, length: block.length });
    this.put(block);
    this.put(bytesOf(CURVE_BLOCK_CLOSING));
  }

  /** A block written to the file, in a buffer the next call reuses; null when there is none. */
  private blockFromFile(sample: string): Uint8Array | null {
    const at = this.blockAt.get(sample);
    if (!at) return null;
    return this.back.read(at.offset, at.length);
  }

  /** A sample's block, wherever it is: in this file, held for the head, or made from its JSON. */
  private blockOf(e: OutputEntry): string | Uint8Array | null {
    const sample = e.brief.sample;
    if (this.slotOf.get(sample) === 0 && this.block0) return this.block0;
    return this.blockFromFile(sample) ?? reportCurvesOf(e);
  }

  /**
   * Completes the page for `ordered` (every output entry, in manifest order; `data.samples` are their
   * brief results) and puts it in place; resolves once it is on disk.
   */
  finish(ordered: OutputEntry[], data: ReportData): Promise<void> {
    try {
      if (this.room < 0) this.setRoom();
      const inPlace =
        !this.unordered &&
        ordered.length === this.slotOf.size &&
        ordered.every((e, k) => this.slotOf.get(e.brief.sample) === k);
      if (inPlace) {
        // Results not made by this run's workers (reused by --resume) get their blocks now.
        for (let k = 1; k < ordered.length; k++) {
          const e = ordered[k];
          if (this.blockAt.has(e.brief.sample)) continue;
          const block = reportCurvesOf(e);
          if (block !== null) this.writeBlock(e.brief.sample, k, bytesOf(block));
        }
        const first = ordered.length ? this.blockOf(ordered[0]) : null;
        // The head piece by piece (a summary of megabytes is never one string).
        const head = Array.from(reportHeadPieces(this.assets, data, first));
        const headBytes = head.reduce((n, p) => n + byteLength(p), 0);
        if (headBytes <= this.room) {
          this.put(bytesOf(REPORT_END));
          head.push(...blankPieces(this.room - headBytes));
          this.file.writePieces(head, 0);
          this.back.close();
          return this.file.commitDeferred();
        }
      }
      // Written afresh, in order; this file is read for the blocks meanwhile, then removed.
      const written = writeFileAtomicDeferred(
        this.path,
        reportHtmlPieces(this.assets, data, (i) => this.blockOf(ordered[i])),
      );
      this.abort();
      return written;
    } catch (err) {
      this.abort();
      throw err;
    }
  }

  /** Removes the temporary file (the batch failed, or the page was written afresh). */
  abort(): void {
    this.file.abort();
    this.back.close();
  }
}
