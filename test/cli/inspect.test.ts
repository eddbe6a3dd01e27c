import { mkdtempSync, mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import { readAllHistograms, readHistogramFile, readSpectrumFile } from '../../cli/readInput.js';
import { inspectHistogram } from '../../cli/commands/inspect.js';
import { runCli } from './runCli.js';

/** Runs `lumirate inspect …` as a user would, returning exit code, stdout and stderr. */
const inspect = (...args: string[]) => runCli(['inspect', ...args], { cwd: dir });

let dir = '';
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'lumirate-inspect-'));
  writeFileSync(
    join(dir, 'decay.csv'),
    '# sample: demo-A\n# bin_width_ns: 0.0122\n# period_ns: 12.5\n# excitation_nm: 405\ntime_ns,counts\n0,12\n0.0122,90\n0.0244,70\n0.0366,4\n',
  );
  writeFileSync(join(dir, 'multi.csv'), 'time_ns,A-ethanol,A-toluene\n0,1,5\n0.5,2,6\n1,3,7\n');
  writeFileSync(join(dir, 'counts.txt'), '10\n20\n30.5\n');
  writeFileSync(join(dir, 'arrivals.txt'), 'arrival_ps\n0\n150\n250\n260\n');
  writeFileSync(
    join(dir, 'abs.csv'),
    '# concentration_M: 1e-5\n# path_length_cm: 1\nwavelength_nm,absorbance\n450,0.5\n400,0.1\n',
  );
  writeFileSync(join(dir, 'bad.csv'), 'time_ns,counts\n0,1\n0.5,abc\n');
  writeFileSync(join(dir, 'binary.dat'), Buffer.from([0x23, 0x00, 0xff, 0x10]));
  mkdirSync(join(dir, 'folder'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('lumirate inspect', () => {
  it('prints the inspection as JSON on stdout with channels, bin width, total and peak counts, warnings', async () => {
    const r = await inspect('decay.csv', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j).toMatchObject({
      channels: 4,
      totalCounts: 176,
      peakCounts: 90,
      peakChannel: 1,
      periodNs: 12.5,
      warnings: [],
    });
    expect(j.binWidthNs).toBeCloseTo(0.0122, 12);
    expect(j.metadata).toMatchObject({ sample: 'demo-A', excitation_nm: '405' });
    expect(j).toMatchObject({ sample: 'demo-A', excitationNm: 405, emissionNm: null, countRatePerS: null });
    expect(j).toMatchObject({
      delimiter: 'comma',
      decimalMark: '.',
      timeColumn: 'time_ns',
      timeUnit: 'ns',
      countsColumn: 'counts',
    });
  });

  it('prints a readable report of what was inferred without --json', async () => {
    const r = await inspect('decay.csv');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/layout\s+table: time column 'time_ns' \(ns\), counts column 'counts'/);
    expect(r.stdout).toMatch(/bin width\s+0\.0122 ns/);
    expect(r.stdout).toMatch(/channels\s+4/);
    expect(r.stdout).toMatch(/total 176, peak 90/);
  });

  it('shows every decay of a multi-decay file, or the one chosen by file#column or --column', async () => {
    const all = JSON.parse((await inspect('multi.csv', '--json')).stdout);
    expect(all).toHaveLength(2);
    expect(all[0]).toMatchObject({
      source: 'multi.csv#A-ethanol',
      countsColumn: 'A-ethanol',
      totalCounts: 6,
    });
    expect(all[1]).toMatchObject({
      source: 'multi.csv#A-toluene',
      countsColumn: 'A-toluene',
      totalCounts: 18,
    });
    // The choice of one decay, read in-process through the helpers every command uses.
    expect(readHistogramFile(join(dir, 'multi.csv#A-toluene')).source).toBe(
      `${join(dir, 'multi.csv')}#A-toluene`,
    );
    expect(readAllHistograms(`${join(dir, 'multi.csv')}#A-toluene`).map((h) => h.counts[0])).toEqual([5]);
    expect(readHistogramFile(join(dir, 'multi.csv'), { column: 2 }).counts).toEqual(
      Float64Array.from([1, 2, 3]),
    );
  });

  it('takes the bin width of a counts-only file from --bin-width-ns and puts warnings on stderr', async () => {
    const r = await inspect('counts.txt', '--bin-width-ns', '0.025', '--json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.stdout);
    expect(j).toMatchObject({ channels: 3, binWidthNs: 0.025, totalCounts: 60.5 });
    expect(j.warnings).toHaveLength(1);
    expect(r.stderr).toMatch(/^warning: 1 count is not a whole number/);
  });

  it('histograms an arrival list with --arrivals and --range-ns', async () => {
    const j = JSON.parse(
      (await inspect('arrivals.txt', '--arrivals', '--bin-width-ns', '0.1', '--range-ns', '0:0.4', '--json'))
        .stdout,
    );
    expect(j).toMatchObject({
      layout: 'arrivals',
      channels: 4,
      totalCounts: 4,
      peakCounts: 2,
      peakChannel: 2,
    });
  });

  it('reads a spectrum with --spectrum, converting absorbance to ε', async () => {
    const j = JSON.parse((await inspect('abs.csv', '--spectrum', 'absorption', '--json')).stdout);
    // Beer–Lambert (IUPAC Gold Book): ε = A/(c·l) = 0.5 / (1e-5 M · 1 cm) = 5e4 L mol⁻¹ cm⁻¹.
    expect(j).toMatchObject({ kind: 'absorption', axis: 'nm', points: 2, min: 400, max: 450, peakAt: 450 });
    expect(j.peakValue).toBeCloseTo(5e4, 6);
  });

  it('exits 2 with one error line naming file, line and column for a bad cell', async () => {
    const r = await inspect('bad.csv', '--json');
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe("error: bad.csv line 3, column 2: 'abc' is not a count\n");
  });

  it('exits 2 for a missing file and for a bad option', async () => {
    const [missing, badOption] = await Promise.all([
      inspect('nope.csv'),
      inspect('counts.txt', '--bin-width-ns', 'wide'),
    ]);
    expect(missing).toMatchObject({ code: 2, stderr: 'error: nope.csv: no such file\n' });
    expect(badOption.code).toBe(2);
    expect(badOption.stderr).toMatch(/^error: --bin-width-ns 'wide' must be a positive number/);
  });
});

describe('inspectHistogram', () => {
  it('warns about pile-up when more than 5 % of pulses give a detection', () => {
    // Keep the detection rate below 1–5 % of the excitation rate (common practice in TCSPC; see
    // REFERENCE-VALUES.md §11). 1.5e6 counts/s at 20 MHz is 7.5 %; 2.5e4 counts/s at 80 MHz is 0.03 %.
    writeFileSync(
      join(dir, 'fast.csv'),
      '# rep_rate_mhz: 20\n# count_rate_kcps: 1500\ntime_ns,counts\n0,1\n1,2\n',
    );
    const fast = inspectHistogram(readHistogramFile(join(dir, 'fast.csv')));
    expect(fast.detectionsPerPulse).toBeCloseTo(0.075, 12);
    expect(fast.warnings.join()).toMatch(/7\.5 % of the excitation rate/);
    writeFileSync(
      join(dir, 'slow.csv'),
      '# rep_rate_mhz: 80\n# count_rate_per_s: 2.5e4\ntime_ns,counts\n0,1\n1,2\n',
    );
    const slow = inspectHistogram(readHistogramFile(join(dir, 'slow.csv')));
    expect(slow.detectionsPerPulse).toBeCloseTo(3.125e-4, 12);
    expect(slow.warnings).toEqual([]);
  });
});

describe('readInput', () => {
  it('turns a missing file, a directory and binary data into InputErrors that name the path', () => {
    expect(() => readHistogramFile(join(dir, 'nope.csv'))).toThrow(InputError);
    expect(() => readHistogramFile(join(dir, 'nope.csv'))).toThrow(/nope\.csv: no such file$/);
    expect(() => readHistogramFile(join(dir, 'folder'))).toThrow(/folder: is a directory/);
    expect(() => readSpectrumFile(join(dir, 'binary.dat'), { kind: 'emission' })).toThrow(
      /binary\.dat: is not a text table \(binary data at byte 1: a NUL byte\)/,
    );
  });

  it('refuses UTF-16 text with advice to save it as UTF-8', () => {
    writeFileSync(
      join(dir, 'utf16.csv'),
      Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from('time_ns,counts\n', 'utf16le')]),
    );
    expect(() => readHistogramFile(join(dir, 'utf16.csv'))).toThrow(/UTF-16 text; save it as UTF-8/);
  });

  it('explains a # that belongs to the file name, and a column asked for twice', () => {
    writeFileSync(join(dir, 'run#2.csv'), 'time_ns,counts\n0,1\n1,2\n');
    expect(() => readHistogramFile(join(dir, 'run#2.csv'))).toThrow(/file name itself contains '#'/);
    expect(readHistogramFile(join(dir, 'run#2.csv#counts')).counts).toEqual(Float64Array.from([1, 2]));
    expect(() => readHistogramFile(`${join(dir, 'multi.csv')}#A-ethanol`, { column: 'A-toluene' })).toThrow(
      /asked for; give one/,
    );
  });
});
