import { join } from 'node:path';
import { SCHEMA_VERSION, type SampleResult, type SeriesResult } from '../../shared/schema.js';
import { writeReport } from '../report.js';
import { packageVersion } from '../version.js';

/** A writer of DIR/report.html from a finished batch's samples (loaded only when needed) and series. */
export function reportWriter(
  dir: string,
  title: string,
): (samples: () => SampleResult[], series: SeriesResult[]) => void {
  return (samples, series) =>
    writeReport(
      {
        schemaVersion: SCHEMA_VERSION,
        title,
        createdUtc: new Date().toISOString(),
        lumirateVersion: packageVersion(),
        samples: samples(),
        series,
      },
      join(dir, 'report.html'),
    );
}
