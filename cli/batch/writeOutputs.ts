import { readdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { curvesForScript } from '../../shared/reportHtml.js';
import { SCHEMA_VERSION, type SampleResult, type SeriesResult } from '../../shared/schema.js';
import { formatErrorsLog, formatResultsCsv, formatSummaryMarkdown } from '../../src/batch/outputs.js';
import { byManifestOrder } from '../../src/batch/merge.js';
import { writeFileAtomicDeferred } from './atomicWrite.js';
import { resultsJsonChunks, type ResultsJsonStream } from './resultsJsonStream.js';

/** The files a batch leaves in its output directory. */
export const OUTPUT_FILES = [
  'results.json',
  'results.csv',
  'summary.md',
  'errors.log',
  'series.json',
  'report.html',
] as const;

/** One finished sample: its brief result (no curves) and a way to get its full JSON text. */
export interface OutputEntry {
  brief: SampleResult;
  json: () => string;
  /**
   * The same JSON as UTF-8 bytes, when they can be had without encoding (straight from the journal),
   * valid until the next call of any entry's `bytes` (they are copied into a file at once).
   */
  bytes?: () => Uint8Array;
  /** Its curves block for report.html, when its worker made one (see `reportCurvesOf`); as `bytes`. */
  reportCurves?: () => Uint8Array;
}

/** Removes temporary files left by a killed run (their writer is gone; the real files are intact). */
export function removeStaleTemporaries(dir: string): void {
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return;
  }
  for (const name of names) {
    if (/\.tmp-\d+$/.test(name) && !name.endsWith(`.tmp-${process.pid}`))
      rmSync(join(dir, name), { force: true });
  }
}

/**
 * Writes results.json (streamed one sample at a time, so a large batch never sits in memory as one
 * string; or completed, when the batch wrote it as it ran), results.csv, summary.md, errors.log,
 * series.json when there are series, and the report; each one atomically. Samples appear in manifest
 * order. Each file's text is written on this thread; the flushes to disk run on the I/O threads, the
 * report's (the largest) first, while the tables are formatted. Resolves when every file is in place;
 * when any fails, rejects with the first error once the others have settled.
 */
export async function writeBatchOutputs(
  dir: string,
  entries: OutputEntry[],
  series: SeriesResult[],
  options: {
    title: string;
    writeReport?: (entries: OutputEntry[], series: SeriesResult[]) => Promise<void>;
    /** results.json as the batch has been writing it while it ran, to complete. */
    resultsJson?: ResultsJsonStream;
  },
): Promise<void> {
  const ordered = entries.slice().sort((a, b) => byManifestOrder(a.brief, b.brief));
  const briefs = ordered.map((e) => e.brief);
  const writing: Promise<void>[] = [];
  const start = (write: () => Promise<void>) => {
    try {
      writing.push(write());
    } catch (err) {
      writing.push(Promise.reject(err));
    }
  };
  const report = options.writeReport;
  if (report) start(() => report(ordered, series));
  const stream = options.resultsJson;
  start(() =>
    stream
      ? stream.finish(ordered)
      : writeFileAtomicDeferred(join(dir, 'results.json'), resultsJsonChunks(ordered)),
  );
  start(() => writeFileAtomicDeferred(join(dir, 'results.csv'), formatResultsCsv(briefs)));
  start(() =>
    writeFileAtomicDeferred(join(dir, 'summary.md'), formatSummaryMarkdown(briefs, series, options.title)),
  );
  start(() => writeFileAtomicDeferred(join(dir, 'errors.log'), formatErrorsLog(briefs)));
  if (series.length)
    start(() =>
      writeFileAtomicDeferred(
        join(dir, 'series.json'),
        JSON.stringify({ schemaVersion: SCHEMA_VERSION, series }, null, 2) + '\n',
      ),
    );
  else rmSync(join(dir, 'series.json'), { force: true });
  const failed = (await Promise.allSettled(writing)).find((r) => r.status === 'rejected');
  if (failed) throw failed.reason;
}

/**
 * A sample's curves block for report.html: the one its worker made, else packed from its JSON text
 * (a result reused by --resume or merged from shards), which is parsed for that and then dropped, so a
 * batch of thousands never has all its curves in memory at the same time.
 */
export function reportCurvesOf(e: OutputEntry): string | Uint8Array | null {
  if (e.reportCurves) return e.reportCurves();
  if (!e.brief.fit) return null;
  const curves = (JSON.parse(e.json()) as SampleResult).fit?.curves;
  return curves ? curvesForScript(curves) : null;
}
