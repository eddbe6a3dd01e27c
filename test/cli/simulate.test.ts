import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { runCliSync } from './runCli.js';

const dir = mkdtempSync(join(tmpdir(), 'lumirate-simulate-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const lumirate = (...args: string[]) => runCliSync(args);

const at = (name: string) => join(dir, name);

const small = ['--channels', '256', '--bin-width-ns', '0.05', '--irf-center-ns', '1'];

describe('lumirate simulate', () => {
  it('writes a decay and its IRF as tables the importer reads, with the truth in the metadata', () => {
    const r = lumirate(
      'simulate',
      ...small,
      '--tau-ns',
      '0.8,3',
      '--fractions',
      '0.4,0.6',
      '--peak-counts',
      '5000',
      '--period-ns',
      '12.8',
      '--background',
      '2',
      '--sample',
      'demo-A',
      '--seed',
      '3',
      '--out',
      at('a.csv'),
    );
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^wrote .*a\.csv \(\d+ counts, peak \d+\) and .*a-irf\.csv \(\d+ counts\)\n$/);
    const decayText = readFileSync(join(dir, 'a.csv'), 'utf8');
    const decay = parseHistogramText(decayText, { source: 'a.csv' });
    expect(decay.counts.length).toBe(256);
    expect(decay.binWidthNs).toBeCloseTo(0.05, 12);
    expect(decay.metadata).toMatchObject({
      sample: 'demo-A',
      period_ns: '12.8',
      simulated_tau_ns: '0.8,3',
      simulated_intensity_fractions: '0.4,0.6',
    });
    // Poisson noise around the requested peak: 5000 ± 4·sqrt(5000) (plus the background of 2).
    expect(Math.abs(Math.max(...decay.counts) - 5002)).toBeLessThan(4 * Math.sqrt(5000) + 50);
    const irf = parseHistogramText(readFileSync(join(dir, 'a-irf.csv'), 'utf8'), { source: 'a-irf.csv' });
    expect(irf.metadata.role).toBe('irf');
    expect(irf.counts.reduce((s, x) => s + x, 0)).toBeGreaterThan(99_000);
  });

  it('writes the same files for the same seed and different ones for another seed', () => {
    const args = ['simulate', ...small, '--tau-ns', '2', '--peak-counts', '1000'];
    expect(lumirate(...args, '--seed', '9', '--out', at('b1.csv')).code).toBe(0);
    expect(lumirate(...args, '--seed', '9', '--out', at('b2.csv')).code).toBe(0);
    expect(lumirate(...args, '--seed', '10', '--out', at('b3.csv')).code).toBe(0);
    const read = (f: string) => readFileSync(join(dir, f), 'utf8');
    expect(read('b1.csv')).toBe(read('b2.csv'));
    expect(read('b1-irf.csv')).toBe(read('b2-irf.csv'));
    expect(read('b1.csv')).not.toBe(read('b3.csv'));
  });

  it('draws the IRF from a measured IRF table and prints the truth as JSON', () => {
    expect(
      lumirate(
        'simulate',
        ...small,
        '--tau-ns',
        '1',
        '--seed',
        '1',
        '--out',
        at('m.csv'),
        '--irf-out',
        at('measured.csv'),
      ).code,
    ).toBe(0);
    const r = lumirate(
      'simulate',
      ...small,
      '--tau-ns',
      '1.5',
      '--irf-file',
      at('measured.csv'),
      '--json',
      '--out',
      at('m2.csv'),
    );
    expect(r.code).toBe(0);
    const out = JSON.parse(r.stdout);
    expect(out.truth.irf).toEqual({ kind: 'measured', source: at('measured.csv') });
    expect(out.truth.components[0].tauNs).toBe(1.5);
    expect(existsSync(join(dir, 'm2-irf.csv'))).toBe(true);
  });

  it('refuses a bad lifetime list with exit 2, one error line naming the item, and writes nothing', () => {
    writeFileSync(join(dir, 'keep.csv'), 'precious\n');
    const r = lumirate('simulate', '--tau-ns', '1.2,abc', '--out', at('keep.csv'));
    expect(r.code).toBe(2);
    expect(r.stderr).toBe("error: --tau-ns '1.2,abc': item 2, 'abc', must be a positive number\n");
    expect(readFileSync(join(dir, 'keep.csv'), 'utf8')).toBe('precious\n');
    expect(existsSync(join(dir, 'keep-irf.csv'))).toBe(false);
  });

  it('names the flag when the period is shorter than the window', () => {
    const r = lumirate('simulate', '--tau-ns', '1', '--period-ns', '12.5', '--out', at('p.csv'));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^error: --period-ns \(12\.5\) is shorter than the window of 4096 channels/);
    expect(existsSync(join(dir, 'p.csv'))).toBe(false);
  });

  it('names a missing IRF file', () => {
    const r = lumirate('simulate', '--tau-ns', '1', '--irf-file', at('nowhere.csv'), '--out', at('q.csv'));
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`error: ${at('nowhere.csv')}: no such file\n`);
  });

  it('refuses fractions that do not match the lifetimes', () => {
    const r = lumirate('simulate', '--tau-ns', '1,2', '--fractions', '1', '--out', at('f.csv'));
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--fractions has 1 values but --tau-ns has 2/);
  });
});
