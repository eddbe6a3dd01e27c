import { readFileSync } from 'node:fs';
import { curvesForScript } from '../../shared/reportHtml.js';
import type { SampleResult } from '../../shared/schema.js';
import { notASampleResult, parseResultsJson } from '../../src/batch/merge.js';
import { InputError } from '../../src/errors.js';
import { decodeText } from '../../src/io/decodeText.js';
import { readTextFile } from '../readInput.js';
import { briefOf } from './protocol.js';
import type { OutputEntry } from './writeOutputs.js';

/**
 * A batch's results.json as output entries, one sample at a time: in the layout lumirate writes (one
 * sample per line between `[` and `]`), each sample's JSON stays as the bytes it is in the file and
 * is parsed once, for its brief (and, with `report`, its curves block for report.html), so that a
 * file of a thousand decays with curves never becomes a thousand parsed objects at once. Any other
 * layout is parsed whole. Errors name the file and the line.
 */
export function readResultsEntries(path: string, options: { report: boolean }): OutputEntry[] {
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (err) {
    // Read again the way every command reads a file, for the same error naming the path.
    readTextFile(path);
    throw err;
  }
  const n = bytes.length;
  const ours =
    n >= 4 &&
    bytes[0] === 91 && // [
    bytes[1] === 10 &&
    bytes[n - 3] === 10 &&
    bytes[n - 2] === 93 && // ]
    bytes[n - 1] === 10;
  if (!ours) {
    return parseResultsJson(decodeText(bytes, path), path).map((r) => entryOf(r, JSON.stringify(r), options));
  }
  const entries: OutputEntry[] = [];
  let start = 2;
  let line = 2;
  while (start < n - 2) {
    let end = bytes.indexOf(10, start);
    if (end < 0 || end > n - 3) end = n - 3;
    const last = end === n - 3;
    // Every line but the last ends in the comma that separates it from the next.
    const jsonEnd = last ? end : end - 1;
    if (!last && bytes[jsonEnd] !== 44) {
      throw new InputError('expected one sample result per line, each but the last ending in a comma', {
        file: path,
        line,
      });
    }
    // An empty batch: `[`, an empty line, `]`.
    if (last && jsonEnd === start && entries.length === 0) break;
    const view = bytes.subarray(start, jsonEnd);
    let value: unknown;
    try {
      value = JSON.parse(view.toString('utf8'));
    } catch (err) {
      throw new InputError(
        `not valid JSON (${err instanceof Error ? err.message : String(err)}); was the batch interrupted before it finished?`,
        { file: path, line },
      );
    }
    const why = notASampleResult(value);
    if (why) throw new InputError(`entry ${entries.length + 1}: ${why}`, { file: path, line });
    entries.push(entryOf(value as SampleResult, view, options));
    start = end + 1;
    line++;
  }
  return entries;
}

function entryOf(r: SampleResult, json: string | Buffer, options: { report: boolean }): OutputEntry {
  const block = options.report && r.fit?.curves ? Buffer.from(curvesForScript(r.fit.curves), 'latin1') : null;
  return {
    brief: briefOf(r),
    json: () => (typeof json === 'string' ? json : json.toString('utf8')),
    ...(typeof json === 'string' ? {} : { bytes: () => json }),
    ...(block === null ? {} : { reportCurves: () => block }),
  };
}
