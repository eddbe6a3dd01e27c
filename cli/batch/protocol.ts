import type { SampleResult } from '../../shared/schema.js';
import type { InputLocation } from '../../src/errors.js';
import type { SampleInputs } from '../../src/batch/sampleRecord.js';
import type { SampleSettings } from '../../src/batch/settings.js';

/** A file a worker reads for a sample: where it is, and which manifest cell or setting named it. */
export interface FileToRead {
  role: keyof SampleInputs;
  absolutePath: string;
  /** As written, for messages. */
  written: string;
  where: InputLocation;
}

export interface MemberTask {
  settings: SampleSettings;
  files: FileToRead[];
}

/** One unit of work: a lone sample, or a group fitted with linked lifetimes. */
export interface WorkTask {
  id: number;
  kind: 'sample' | 'group';
  members: MemberTask[];
}

/**
 * What comes back for each member: the full result as a line of JSON in UTF-8 (ending in a newline,
 * ready for results.json), the result without curves as script-safe JSON text (`briefJson` made
 * `scriptSafeJson`: the batch's thread reads the result from it, and it is that sample's part of the
 * report's summary as it stands) and, when a report is wanted, the sample's curves block for it
 * (`curvesForScript`, also as a UTF-8 line). The byte lines are in shared buffers (see `lineToSend`
 * in the worker); the main thread copies them to files and hands the buffers back.
 */
export interface MemberReply {
  json: Uint8Array;
  briefJson: string;
  reportCurves?: Uint8Array;
}

export interface WorkReply {
  id: number;
  results: MemberReply[];
}

export interface WorkerSetup {
  lumirateVersion: string;
  /** Leave the plotting curves out of results.json (smaller files for very large batches). */
  curves: boolean;
  /** Make each sample's curves block for report.html (in the worker, in parallel). */
  report?: boolean;
}

/** A result without its plotting curves: what the main thread keeps in memory for tables and series. */
export function briefOf(result: SampleResult): SampleResult {
  if (!result.fit) return result;
  const { curves: _curves, ...fit } = result.fit;
  return { ...result, fit: fit as SampleResult['fit'] };
}
