import { writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readResultsEntries } from '../../cli/batch/readResults.js';
import { resultsJsonChunks } from '../../cli/batch/resultsJsonStream.js';
import { curvesForScript } from '../../shared/reportHtml.js';
import type { SampleResult } from '../../shared/schema.js';
import { InputError } from '../../src/errors.js';
import { errorOf } from './errorOf.js';
import { fakeCurves, fakeSample } from './fakeResults.js';
import { tempDirs } from './tempDirs.js';

const tempDir = tempDirs('lumirate-read-results-');
function file(name: string, content: string): string {
  const d = tempDir();
  writeFileSync(join(d, name), content);
  return join(d, name);
}

const curves = fakeCurves;
const withCurves = (s: SampleResult): SampleResult => ({ ...s, fit: { ...s.fit!, curves } });
const samples = [
  withCurves(fakeSample('a', 1, 0.1)),
  fakeSample('b "é"', 2, 0.1),
  withCurves(fakeSample('c', 3, 0.1)),
];
const asWritten = (results: SampleResult[]) =>
  [...resultsJsonChunks(results.map((r) => ({ brief: r, json: () => JSON.stringify(r) })))].join('');

describe('readResultsEntries', () => {
  it("keeps each sample's JSON as written, its brief without curves, and its report block when asked", () => {
    const entries = readResultsEntries(file('results.json', asWritten(samples)), { report: true });
    expect(entries.map((e) => e.brief.sample)).toEqual(['a', 'b "é"', 'c']);
    entries.forEach((e, k) => {
      expect(e.json()).toBe(JSON.stringify(samples[k]));
      expect(new TextDecoder().decode(e.bytes!())).toBe(JSON.stringify(samples[k]));
      expect(e.brief.fit && 'curves' in e.brief.fit).toBe(false);
    });
    expect(new TextDecoder().decode(entries[0].reportCurves!())).toBe(curvesForScript(curves));
    expect(entries[1].reportCurves).toBeUndefined();
    expect(
      readResultsEntries(file('results.json', asWritten(samples)), { report: false })[0].reportCurves,
    ).toBeUndefined();
  });

  it('reads an empty batch and a file laid out some other way', () => {
    expect(readResultsEntries(file('results.json', asWritten([])), { report: false })).toEqual([]);
    const pretty = readResultsEntries(file('results.json', JSON.stringify(samples, null, 2)), {
      report: false,
    });
    expect(pretty.map((e) => JSON.parse(e.json()))).toEqual(samples);
  });

  it('names the file and line of a sample that does not parse or is not a result', () => {
    const lines = asWritten(samples).split('\n');
    const torn = file(
      'results.json',
      [...lines.slice(0, 2), lines[2].slice(0, 40) + ',', ...lines.slice(3)].join('\n'),
    );
    const e = errorOf(() => readResultsEntries(torn, { report: false }));
    expect(e).toBeInstanceOf(InputError);
    expect((e as InputError).message).toMatch(/results\.json.*line 3.*not valid JSON/);
    const foreign = file('results.json', '[\n{"x":1}\n]\n');
    expect((errorOf(() => readResultsEntries(foreign, { report: false })) as InputError).message).toMatch(
      /line 2.*entry 1: not a sample result/,
    );
  });

  it('reports a missing file as every command does', () => {
    const e = errorOf(() =>
      readResultsEntries(join(tmpdir(), 'no-such-dir-lumirate', 'results.json'), { report: false }),
    );
    expect(e).toBeInstanceOf(InputError);
    expect((e as InputError).message).toMatch(/no such file/);
  });
});
