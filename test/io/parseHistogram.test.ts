import { describe, expect, it } from 'vitest';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { formatHistogramTable } from '../../src/io/writeTable.js';
import { expectInputError } from './expectInputError.js';

const F = 'decay.csv';
const read = (text: string, extra: Record<string, unknown> = {}) =>
  parseHistogramText(text, { source: F, ...extra });
const arr = (a: Float64Array) => Array.from(a);

// The layout the simulator writes (see src/io/writeTable.ts and FORMATS.md).
const SIMULATOR_FILE = `# sample: demo-A
# bin_width_ns: 0.0122
# period_ns: 12.5
# excitation_nm: 405
time_ns,counts
0,12
0.0122,9
0.0244,7
0.0366,4
`;

describe('layouts', () => {
  it('reads a comma-separated time_ns,counts table with metadata, as the simulator writes it', () => {
    const h = read(SIMULATOR_FILE);
    expect(arr(h.counts)).toEqual([12, 9, 7, 4]);
    expect(h.binWidthNs).toBeCloseTo(0.0122, 12);
    expect(arr(h.timeNs).map((t) => +t.toFixed(10))).toEqual([0, 0.0122, 0.0244, 0.0366]);
    expect(h.metadata).toEqual({
      sample: 'demo-A',
      bin_width_ns: '0.0122',
      period_ns: '12.5',
      excitation_nm: '405',
    });
    expect(h.source).toBe(F);
    expect(h.warnings).toEqual([]);
    expect(h.report).toMatchObject({
      delimiter: 'comma',
      decimalMark: '.',
      hasHeader: true,
      columns: ['time_ns', 'counts'],
      timeColumn: 'time_ns',
      timeUnit: 'ns',
      countsColumn: 'counts',
      layout: 'table',
    });
  });

  it('reads what the table writer writes, for several decays in one file', () => {
    const timeNs = Float64Array.from({ length: 50 }, (_, i) => i * 0.0122);
    const a = Float64Array.from({ length: 50 }, (_, i) => Math.round(1000 * Math.exp(-i / 10)));
    const b = Float64Array.from({ length: 50 }, (_, i) => Math.round(800 * Math.exp(-i / 20)));
    const text = formatHistogramTable(
      {
        timeNs,
        series: [
          { name: 'A-ethanol', counts: a },
          { name: 'A-toluene', counts: b },
        ],
      },
      { sample: 'demo-A' },
    );
    const h = read(text, { column: 'A-toluene' });
    expect(arr(h.counts)).toEqual(arr(b));
    expect(h.source).toBe(`${F}#A-toluene`);
    expect(h.binWidthNs).toBeCloseTo(0.0122, 12);
    expect(read(text, { column: 2 }).counts).toEqual(a);
    // A digit string that is no header name is a 1-based column index, as an editor counts columns.
    expect(read(text, { column: '3' }).counts).toEqual(b);
  });

  it('reads a tab-separated table with a unit in parentheses and CRLF line ends', () => {
    const h = read('time (ps)\tcounts\r\n0\t5\r\n16\t7\r\n32\t2\r\n');
    // 16 ps = 0.016 ns: pico = 1e-12, nano = 1e-9 (SI Brochure, 9th ed. 2019, table 7).
    expect(h.binWidthNs).toBeCloseTo(0.016, 14);
    expect(h.report?.delimiter).toBe('tab');
    expect(h.report?.timeUnit).toBe('ps');
  });

  it('strips a UTF-8 byte-order mark before the header', () => {
    // U+FEFF at the start of a UTF-8 text is a byte-order mark, not content (Unicode Standard §23.8; RFC 3629 §6).
    const h = read('\ufefftime_ns,counts\n0,1\n1,2\n');
    expect(h.report?.columns).toEqual(['time_ns', 'counts']);
  });

  it('reads decimal commas when the separator is a semicolon', () => {
    // ISO 80000-1 allows the comma as decimal sign; spreadsheets in such locales then separate with ';' (common practice).
    const h = read('time_ns;counts\n0,0;10\n0,5;20\n1,0;30\n');
    expect(h.report?.decimalMark).toBe(',');
    expect(h.report?.delimiter).toBe('semicolon');
    expect(h.binWidthNs).toBe(0.5);
    expect(arr(h.counts)).toEqual([10, 20, 30]);
  });

  it('reads decimal commas in a tab-separated table', () => {
    const h = read('time_ns\tcounts\n0,25\t1\n0,5\t2\n0,75\t3\n');
    expect(h.binWidthNs).toBe(0.25);
    expect(h.timeNs[0]).toBe(0.25);
  });

  it('reads whitespace-separated columns with a header like "time (ps)"', () => {
    const h = read('time (ps)   counts\n  0   3\n 50   4\n100   5\n');
    expect(h.report?.delimiter).toBe('whitespace');
    expect(h.binWidthNs).toBeCloseTo(0.05, 14);
    expect(arr(h.counts)).toEqual([3, 4, 5]);
  });

  it.each([
    ['time_ns', 1],
    ['t_ps', 1e-3],
    ['time (ps)', 1e-3],
    ['time [ns]', 1],
    ['time/ns', 1],
    ['time in ps', 1e-3],
    ['Time_us', 1e3],
    ['delay_fs', 1e-6],
  ])('reads the unit from a time column named %s', (name, nsPerUnit) => {
    const h = read(`${name},counts\n0,1\n2,1\n4,1\n`);
    expect(h.binWidthNs).toBeCloseTo(2 * nsPerUnit, 15);
  });

  it('turns a channel column into index × bin width, taking the width from metadata', () => {
    const h = read('# resolution_ps: 25\nchannel,counts\n100,1\n101,2\n102,3\n');
    expect(h.binWidthNs).toBeCloseTo(0.025, 15);
    expect(h.timeNs[0]).toBeCloseTo(2.5, 12);
    expect(h.report?.timeUnit).toBe('channel');
    expect(h.report?.binWidthSource).toMatch(/metadata/);
  });

  it('reads counts alone with the bin width from metadata', () => {
    const h = read('# bin_width_ps: 12.5\n10\n20\n30\n');
    expect(h.report?.layout).toBe('counts');
    expect(h.report?.delimiter).toBe('single column');
    expect(h.binWidthNs).toBe(0.0125);
    expect(arr(h.timeNs)).toEqual([0, 0.0125, 0.025]);
  });

  it('reads counts alone with the bin width given as an option, which wins over metadata with a warning', () => {
    expect(read('counts\n1\n2\n', { binWidthNs: 0.1 }).binWidthNs).toBe(0.1);
    const h = read('# bin_width_ns: 0.2\n1\n2\n', { binWidthNs: 0.1 });
    expect(h.binWidthNs).toBe(0.1);
    expect(h.warnings.join()).toMatch(/overrides/);
  });

  it('reads a headerless two-column table when the first column is matched to the bin width, and says so', () => {
    const h = read('# bin_width_ns: 0.05\n0 1\n50 2\n100 3\n');
    expect(h.report?.timeUnit).toBe('ps');
    expect(h.report?.binWidthSource).toMatch(/inferred/);
    expect(read('0 1\n1 2\n2 3\n', { binWidthNs: 0.05 }).report?.timeUnit).toBe('channel');
    expect(read('# time_unit: ps\n0,1\n10,2\n20,3\n').binWidthNs).toBeCloseTo(0.01, 15);
  });

  it('ignores blank lines, comment lines between rows and a trailing separator', () => {
    const h = read('time_ns,counts,\n\n0,1,\n# note in the middle\n1,2,\n\n');
    expect(arr(h.counts)).toEqual([1, 2]);
    expect(arr(read('# time_unit: ns\n0;1;\n1;2;\n').counts)).toEqual([1, 2]);
  });

  it('reads quoted header names and cells (RFC 4180 §2 quoting)', () => {
    const h = read('"time_ns","counts, raw"\n"0","1"\n"1","2"\n');
    expect(h.report?.countsColumn).toBe('counts, raw');
    expect(arr(h.counts)).toEqual([1, 2]);
  });

  it('accepts a time axis rounded to its printed precision and stores it exactly uniform', () => {
    // A 12.2070 ps channel written to 4 decimals of ns: steps alternate 0.0122 / 0.0123 (0.8 %).
    const w = 0.012207;
    const lines = Array.from({ length: 200 }, (_, i) => `${(i * w).toFixed(4)},${i}`);
    const h = read(`time_ns,counts\n${lines.join('\n')}\n`);
    expect(h.binWidthNs).toBeCloseTo(w, 6);
    for (let i = 1; i < h.timeNs.length; i++)
      expect(h.timeNs[i] - h.timeNs[i - 1]).toBeCloseTo(h.binWidthNs, 12);
  });

  it('warns, once with a count, about counts that are not whole numbers', () => {
    const h = read('time_ns,counts\n0,1.5\n1,2\n2,2.5\n');
    expect(h.warnings).toHaveLength(1);
    expect(h.warnings[0]).toMatch(/^2 counts are not whole numbers \(first on line 2: 1\.5\)/);
    expect(h.warnings[0]).toMatch(/Poisson/);
  });

  it('never shares its arrays between calls (each result is a fresh copy)', () => {
    const a = read(SIMULATOR_FILE);
    a.counts[0] = -1;
    expect(read(SIMULATOR_FILE).counts[0]).toBe(12);
  });
});

describe('bad input', () => {
  it('refuses an empty file', () => {
    expectInputError(() => read(''), { file: F, match: /is empty/ });
    expectInputError(() => read('\n\r\n  \n'), { file: F, match: /is empty/ });
  });

  it('refuses a file of comments only', () => {
    expectInputError(() => read('# sample: x\n# nothing else\n'), { file: F, match: /only comment lines/ });
  });

  it('refuses a header without data, naming the header line', () => {
    expectInputError(() => read('# a: 1\ntime_ns,counts\n'), { file: F, line: 2, match: /no data rows/ });
  });

  it('refuses binary data, naming the byte', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n\u0000\u0001'), {
      file: F,
      match: /not a text table \(binary data at byte 19/,
    });
    const garbage = Array.from({ length: 400 }, (_, i) => String.fromCharCode((i * 37) % 32)).join('');
    expectInputError(() => read(`x${garbage}`), { file: F, match: /binary data at byte/ });
    expectInputError(() => read(`time_ns,counts\n0,1\n1,2${'\ufffd'.repeat(80)}\n`), {
      file: F,
      match: /binary data at byte 22/,
    });
  });

  it('refuses a cell that is not a number, naming line, column and text', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n1,abc\n'), {
      file: F,
      line: 3,
      column: 2,
      match: /'abc' is not a count/,
    });
    expectInputError(() => read('time_ns,counts\n0,1\nx,2\n'), {
      file: F,
      line: 3,
      column: 1,
      match: /'x' is not a time/,
    });
    expectInputError(() => read('time_ns,counts\n0,1\n1,\n'), {
      file: F,
      line: 3,
      column: 2,
      match: /empty cell/,
    });
    expectInputError(() => read('time_ns,counts\n0,1\n1,NaN\n'), { file: F, line: 3, column: 2 });
    expectInputError(() => read('time_ns,counts\n0,1\n1,Infinity\n'), { file: F, line: 3, column: 2 });
  });

  it('refuses a decimal point in a decimal-comma file, and the other way round, with a hint', () => {
    expectInputError(() => read('time_ns;counts\n0,5;1\n1.0;2\n'), {
      file: F,
      line: 3,
      column: 1,
      match: /mixes decimal marks/,
    });
    expectInputError(() => read('time_ns counts\n0.5 1\n1 1,5\n'), {
      file: F,
      line: 3,
      column: 2,
      match: /mixes/,
    });
  });

  it('refuses negative counts', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n1,-3\n'), {
      file: F,
      line: 3,
      column: 2,
      match: /negative/,
    });
  });

  it('refuses absurd magnitudes over 1e15 counts', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n1,2e15\n'), {
      file: F,
      line: 3,
      column: 2,
      match: /exceeds 1e\+15/,
    });
    expectInputError(() => read('time_ns,counts\n0,1\n1,1e400\n'), {
      file: F,
      line: 3,
      column: 2,
      match: /finite/,
    });
    expect(read('time_ns,counts\n0,1\n1,1e15\n').counts[1]).toBe(1e15);
  });

  it('refuses ragged rows, naming the line and the widths', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n1,2,3\n2,3\n'), {
      file: F,
      line: 3,
      match: /3 fields but the header has 2/,
    });
    expectInputError(() => read('time_ns,counts\n0,1\n1\n'), {
      file: F,
      line: 3,
      match: /1 field but the header has 2/,
    });
  });

  it('refuses a time axis that does not increase, naming the first offending line', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n1,1\n1,1\n3,1\n'), {
      file: F,
      line: 4,
      column: 1,
      match: /strictly increasing/,
    });
    expectInputError(() => read('time_ns,counts\n2,1\n1,1\n0,1\n'), {
      file: F,
      line: 3,
      match: /does not increase/,
    });
  });

  it('refuses a time axis with a gap or an uneven step beyond 0.1 %', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n1,1\n2,1\n4,1\n5,1\n'), {
      file: F,
      line: 5,
      match: /uniform within 0\.1 %/,
    });
    // Printed to 1e-5, a step of 1.002 against 1.000 is 0.2 % off and cannot be rounding; 1.0005 (0.05 %) passes.
    expectInputError(() => read('time_ns,counts\n0.00000,1\n1.00000,1\n2.00000,1\n3.00200,1\n4.00200,1\n'), {
      file: F,
      line: 5,
      match: /uniform/,
    });
    expect(
      read('time_ns,counts\n0.00000,1\n1.00000,1\n2.00000,1\n3.00050,1\n4.00050,1\n').counts.length,
    ).toBe(5);
  });

  it('refuses a bin-width metadata line that disagrees with the time axis, naming both and the metadata line', () => {
    expectInputError(() => read('# bin_width_ps: 20\ntime_ns,counts\n0,1\n0.01,2\n'), {
      file: F,
      line: 1,
      match: /0\.02 ns.*disagrees.*0\.01 ns/,
    });
    expectInputError(() => read('time_ns,counts\n0,1\n0.01,2\n', { binWidthNs: 0.011 }), {
      file: F,
      match: /disagrees/,
    });
  });

  it('refuses counts alone without any bin width, saying what to add', () => {
    expectInputError(() => read('1\n2\n3\n'), {
      file: F,
      match: /no time column and no bin width.*bin_width_ns/,
    });
  });

  it('refuses a time column without a unit rather than guessing one', () => {
    expectInputError(() => read('time,counts\n0,1\n1,2\n'), {
      file: F,
      line: 1,
      column: 1,
      match: /names no unit/,
    });
    expectInputError(() => read('time_weeks,counts\n0,1\n1,2\n'), {
      file: F,
      line: 1,
      column: 1,
      match: /'weeks' is not a time unit/,
    });
  });

  it('refuses a headerless table whose time unit cannot be known', () => {
    expectInputError(() => read('0,1\n1,2\n'), {
      file: F,
      line: 1,
      column: 1,
      match: /no header.*time_unit/,
    });
    expectInputError(() => read('0,1\n7,2\n', { binWidthNs: 0.05 }), { file: F, line: 1 });
  });

  it('lists the choices when several counts columns are present and none is chosen, or a wrong one is', () => {
    const text = 'time_ns,A,B\n0,1,2\n1,3,4\n';
    expectInputError(() => read(text), {
      file: F,
      line: 1,
      match: /several counts columns; choose one of 'A' \(2\), 'B' \(3\)/,
    });
    expectInputError(() => read(text, { column: 'C' }), { file: F, line: 1, match: /no column 'C'/ });
    expectInputError(() => read(text, { column: 9 }), { file: F, line: 1, match: /no column 9/ });
    expectInputError(() => read(text, { column: 1 }), { file: F, line: 1, match: /is the time axis/ });
  });

  it('refuses a file with a single data row, two time columns, a repeated header name, or a bad bin-width option', () => {
    expectInputError(() => read('time_ns,counts\n0,1\n'), { file: F, line: 2, match: /only one data row/ });
    expectInputError(() => read('time_ns,t_ps,counts\n0,0,1\n1,1000,2\n'), { file: F, line: 1, column: 2 });
    expectInputError(() => read('time_ns,a,A\n0,0,1\n1,1,2\n'), {
      file: F,
      line: 1,
      column: 3,
      match: /twice/,
    });
    expectInputError(() => read('1\n2\n', { binWidthNs: -1 }), { file: F, match: /not a positive number/ });
  });

  it('refuses a lone arrival-time column, pointing to the arrival reader', () => {
    expectInputError(() => read('arrival_ps\n12\n40\n'), { file: F, line: 1, match: /arrival list/ });
  });

  it('refuses a quoted field that runs past its line', () => {
    expectInputError(() => read('time_ns,counts\n0,"1\n1,2"\n'), {
      file: F,
      line: 2,
      match: /unterminated quoted field/,
    });
  });

  it('refuses channels that are not consecutive whole numbers', () => {
    expectInputError(() => read('channel,counts\n0,1\n2,1\n', { binWidthNs: 1 }), {
      file: F,
      line: 3,
      match: /consecutive/,
    });
    expectInputError(() => read('channel,counts\n0,1\n1.5,1\n', { binWidthNs: 1 }), {
      file: F,
      line: 3,
      match: /whole number/,
    });
  });
});

describe('extreme axes', () => {
  it('refuses times that overflow in ns or whose step vanishes in their rounding', () => {
    expectInputError(() => read('time_s,counts\n0,1\n1e300,2\n'), {
      file: F,
      match: /cannot be represented/,
    });
    expectInputError(() => read('channel,counts\n1e300,1\n1.0000000000000002e300,2\n', { binWidthNs: 1 }), {
      file: F,
    });
  });
});
