import { isCompatibleSchema, isSampleResult, type SampleResult } from '../../shared/schema.js';
import { InputError } from '../errors.js';

/** One batch output to merge: where it came from (for messages) and its parsed results.json. */
export interface MergePart {
  source: string;
  results: unknown;
}

/** Reads and checks the text of a results.json: an array of sample results of a readable schema. */
export function parseResultsJson(text: string, source: string): SampleResult[] {
  let data: unknown;
  try {
    data = JSON.parse(text);
  } catch (err) {
    throw new InputError(
      `not valid JSON (${err instanceof Error ? err.message : String(err)}); was the batch interrupted before it finished?`,
      {
        file: source,
      },
    );
  }
  if (!Array.isArray(data)) throw new InputError('expected an array of sample results', { file: source });
  data.forEach((item, k) => {
    const why = notASampleResult(item);
    if (why) throw new InputError(`entry ${k + 1}: ${why}`, { file: source });
  });
  return data as SampleResult[];
}

/** Why a parsed entry of a results.json is not a sample result this lumirate reads, or null when it is. */
export function notASampleResult(item: unknown): string | null {
  if (isSampleResult(item)) return null;
  const v = (item as { schemaVersion?: unknown })?.schemaVersion;
  return v !== undefined && !isCompatibleSchema(v)
    ? `schema version ${String(v)} cannot be read by this lumirate`
    : 'not a sample result';
}

/** Manifest order: by row, then by id for results that carry no row. */
export function byManifestOrder(a: SampleResult, b: SampleResult): number {
  const ra = a.manifestRow ?? Number.MAX_SAFE_INTEGER;
  const rb = b.manifestRow ?? Number.MAX_SAFE_INTEGER;
  return ra - rb || (a.sample < b.sample ? -1 : a.sample > b.sample ? 1 : 0);
}

/**
 * Joins shard outputs into one list in manifest order. Refuses a sample that appears in two parts and
 * parts written by different lumirate versions (their numbers need not agree).
 */
export function mergeResults(parts: MergePart[]): SampleResult[] {
  if (parts.length === 0) throw new InputError('nothing to merge: give at least one batch output directory');
  const seen = new Map<string, string>();
  let version: { v: string; source: string } | null = null;
  const all: SampleResult[] = [];
  for (const part of parts) {
    const results = Array.isArray(part.results) ? (part.results as SampleResult[]) : [];
    for (const s of results) {
      const v = s.provenance?.lumirateVersion;
      if (version === null) version = { v, source: part.source };
      else if (v !== version.v) {
        throw new InputError(
          `sample '${s.sample}' was computed by lumirate ${v}, but ${version.source} by ${version.v}; rerun one of them so all parts agree`,
          { file: part.source },
        );
      }
      const before = seen.get(s.sample);
      if (before !== undefined) {
        throw new InputError(`sample '${s.sample}' is also in ${before}; were the same shards run twice?`, {
          file: part.source,
        });
      }
      seen.set(s.sample, part.source);
      all.push(s);
    }
  }
  return all.sort(byManifestOrder);
}
