import { join } from 'node:path';
import { SCHEMA_VERSION, type ReportData, type SeriesResult } from '../../shared/schema.js';
import { writeReportStreamed } from '../report.js';
import { packageVersion } from '../version.js';
import { reportCurvesOf, type OutputEntry } from './writeOutputs.js';

/** The report's data for a finished batch's entries (in report order) and series. */
export function batchReportData(entries: OutputEntry[], series: SeriesResult[], title: string): ReportData {
  return {
    schemaVersion: SCHEMA_VERSION,
    title,
    createdUtc: new Date().toISOString(),
    lumirateVersion: packageVersion(),
    samples: entries.map((e) => e.brief),
    series,
  };
}

/**
 * A writer of DIR/report.html from a finished batch's entries (in report order) and series: the
 * summary from the brief results in memory, each sample's curves block read as it is written.
 */
export function reportWriter(
  dir: string,
  title: string,
): (entries: OutputEntry[], series: SeriesResult[]) => Promise<void> {
  return (entries, series) =>
    writeReportStreamed(
      batchReportData(entries, series, title),
      (i) => reportCurvesOf(entries[i]),
      join(dir, 'report.html'),
    );
}
