import { SCHEMA_VERSION, type SampleResult, type SeriesResult } from '../../shared/schema.js';
import { describe, expect, it } from 'vitest';
import {
  formatErrorsLog,
  formatResultsCsv,
  formatSummaryMarkdown,
  prepareSummaryRow,
} from '../../src/batch/outputs.js';
import { parseCsvCells } from '../../src/batch/csvCells.js';
import { mergeResults, parseResultsJson } from '../../src/batch/merge.js';
import { runSeries } from '../../src/batch/series.js';
import { fakeSample } from './fakeResults.js';

const ok = fakeSample('s1', 4.0213, 0.0342, { temperature_k: '293.15', note: 'a, b' }, { manifestRow: 1 });
const failed = {
  ...fakeSample('s2', 1, 1, { temperature_k: '303.15' }, { manifestRow: 2 }),
  status: 'failed' as const,
  fit: undefined,
  error: "m.csv line 3, column 2: decay file 'x.csv' not found",
};

describe('results.csv', () => {
  it('has one row per sample with full-precision numbers and metadata carried through', () => {
    const csv = formatResultsCsv([ok, failed]);
    const rows = parseCsvCells(csv, 'results.csv');
    const header = rows[0].map((c) => c.value);
    const cell = (r: number, name: string) => rows[r][header.indexOf(name)].value;
    expect(rows).toHaveLength(3);
    expect(cell(1, 'tau1_ns')).toBe('4.0213');
    expect(cell(1, 'tau1_err_ns')).toBe('0.0342');
    expect(cell(1, 'note')).toBe('a, b');
    expect(cell(2, 'status')).toBe('failed');
    expect(cell(2, 'tau1_ns')).toBe('');
    expect(cell(2, 'error')).toBe("m.csv line 3, column 2: decay file 'x.csv' not found");
  });
});

describe('summary.md', () => {
  it('rounds each value to its uncertainty and puts units in the header', () => {
    const md = formatSummaryMarkdown([ok, failed]);
    expect(md).toContain('| Sample | τ₁ (ns) | f₁ | ⟨τ⟩amp (ns) | ⟨τ⟩int (ns) | χ²red |');
    // 0.0342 keeps one significant digit (leading digit 3), the value follows: shared/format.ts rule.
    expect(md).toContain('| s1 | 4.02 ± 0.03 |');
    expect(md).toContain("- s2: m.csv line 3, column 2: decay file 'x.csv' not found");
    expect(md).toContain('1 of 2 samples fitted.');
  });

  it('fills the columns only some samples have, with the same text whether rows were rounded as they arrived', () => {
    const fresh = () => {
      const one = fakeSample('one', 1.234, 0.012);
      const two = fakeSample('two', 4.0213, 0.0342, {}, {
        rates: { qy: 0.5, qyErr: 0.02, krPerS: 1.2e8, krErrPerS: 5e6, knrPerS: 1.2e8, knrErrPerS: 6e6 },
        sb: { krSbPerS: 1.1e8, krRatio: 1.09, krRatioErr: 0.06 },
      } as Partial<SampleResult>);
      two.fit!.components.push({
        ...two.fit!.components[0],
        tauNs: 0.5,
        tauErrNs: 0.01,
        intensityFraction: 0.2,
        intensityFractionErr: 0.01,
      });
      return [one, two, failed];
    };
    const md = formatSummaryMarkdown(fresh());
    const arrived = fresh();
    for (const s of arrived) prepareSummaryRow(s);
    expect(formatSummaryMarkdown(arrived)).toBe(md);
    // The one-component sample has no second lifetime, rates or Strickler–Berg values: dashes.
    expect(md).toContain(
      '| one | 1.234 ± 0.012 | 1.000 | – | – | 1.234 ± 0.012 | 1.234 ± 0.012 | 1.02 | – | – | – | – | – |',
    );
    expect(md).toContain('| two | 4.02 ± 0.03 | 1.000 | 0.500 ± 0.010 | 0.200 ± 0.010 |');
  });

  it('adds a series section with parameters and their errors', () => {
    const q = [0, 0.01, 0.02, 0.03];
    const samples = q.map((c) => fakeSample(`Q${c}`, 4 / (1 + 40 * c), 0.02, { quencher_m: String(c) }));
    const sr = runSeries(samples, { model: 'stern-volmer', x: 'quencher_m' });
    const md = formatSummaryMarkdown(samples, [sr]);
    expect(md).toContain('## Series: stern-volmer against quencher_m');
    expect(md).toMatch(/\| kqPerMPerS \| \(1\.0\d* ± 0\.\d+\)e10 \|/);
  });

  it('prints a count among the series parameters as a whole number', () => {
    const sr: SeriesResult = {
      schemaVersion: SCHEMA_VERSION,
      model: 'efficiency',
      xName: 'temperature_k',
      yName: 'eta',
      parameters: { tauPlateauNs: 8.94, tauPlateauErrNs: 0.005, plateauSamples: 2 },
      points: [],
      chi2Reduced: null,
      dof: 0,
      notes: [],
      warnings: [],
    };
    expect(formatSummaryMarkdown([], [sr])).toContain('| plateauSamples | 2 |');
  });
});

describe('errors.log', () => {
  it('lists each failed sample with its manifest row and error', () => {
    expect(formatErrorsLog([ok, failed])).toBe(
      "s2\trow 2\tm.csv line 3, column 2: decay file 'x.csv' not found\n",
    );
    expect(formatErrorsLog([ok])).toBe('');
  });
});

describe('merge', () => {
  it('joins parts in manifest order', () => {
    const a = fakeSample('a', 1, 0.1, {}, { manifestRow: 3 });
    const b = fakeSample('b', 1, 0.1, {}, { manifestRow: 1 });
    const c = fakeSample('c', 1, 0.1, {}, { manifestRow: 2 });
    const merged = mergeResults([
      { source: 'x/results.json', results: [a] },
      { source: 'y/results.json', results: [c, b] },
    ]);
    expect(merged.map((s) => s.sample)).toEqual(['b', 'c', 'a']);
  });

  it('refuses a sample present in two parts, naming both', () => {
    const a = fakeSample('a', 1, 0.1);
    expect(() =>
      mergeResults([
        { source: 'x/results.json', results: [a] },
        { source: 'y/results.json', results: [a] },
      ]),
    ).toThrow("y/results.json: sample 'a' is also in x/results.json; were the same shards run twice?");
  });

  it('refuses parts computed by different lumirate versions', () => {
    const a = fakeSample('a', 1, 0.1);
    const b = fakeSample('b', 1, 0.1);
    b.provenance = { ...b.provenance, lumirateVersion: '9.9.9' };
    expect(() =>
      mergeResults([
        { source: 'x/results.json', results: [a] },
        { source: 'y/results.json', results: [b] },
      ]),
    ).toThrow("y/results.json: sample 'b' was computed by lumirate 9.9.9, but x/results.json by 0.1.0");
  });

  it('refuses a results file of another schema major version', () => {
    const text = JSON.stringify([{ ...fakeSample('a', 1, 0.1), schemaVersion: '2.0.0' }]);
    expect(() => parseResultsJson(text, 'r.json')).toThrow(
      'r.json: entry 1: schema version 2.0.0 cannot be read by this lumirate',
    );
  });
});
