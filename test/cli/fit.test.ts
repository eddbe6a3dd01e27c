import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { isFitResult, type FitResult } from '../../shared/schema.js';
import { parseRange } from '../../cli/commands/fit.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';
import { runCli } from './runCli.js';

const lumirate = (...args: string[]) => runCli(args, { cwd: dir });

let dir = '';
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'lumirate-fit-'));
  // Simulated (invented) measurement: τ = 2 ns, 0.1 ns channels, Gaussian IRF.
  const s = simulateTcspc({
    components: [{ tauNs: 2, fraction: 1 }],
    peakCounts: 5000,
    channels: 256,
    binWidthNs: 0.1,
    irf: { kind: 'gaussian', fwhmNs: 0.25, centerNs: 2 },
    backgroundPerChannel: 1,
    seed: 3,
  });
  const table = (c: Float64Array) =>
    '# bin_width_ns: 0.1\ntime_ns,counts\n' +
    Array.from(c, (v, i) => `${(i * 0.1).toFixed(1)},${v}`).join('\n') +
    '\n';
  writeFileSync(join(dir, 'decay.csv'), table(s.decay.counts));
  writeFileSync(join(dir, 'irf.csv'), table(s.irf.counts));
  writeFileSync(join(dir, 'bad.csv'), 'time_ns,counts\n0,1\n0.1,abc\n0.2,3\n');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('lumirate fit', () => {
  it('prints a readable table with units', async () => {
    const r = await lumirate('fit', 'decay.csv', '--irf', 'irf.csv');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/τ \(ns\)/);
    expect(r.stdout).toMatch(/background \(counts\/ch\)/);
    expect(r.stdout).toMatch(/converged after \d+ iterations/);
  }, 60_000);

  it('prints one JSON object of the documented schema with --json, honouring --fix and a channel range', async () => {
    const r = await lumirate(
      'fit',
      'decay.csv',
      '--irf',
      'irf.csv',
      '--json',
      '--fix',
      'shift=0',
      '--range',
      '10:250ch',
    );
    expect(r.code).toBe(0);
    const result = JSON.parse(r.stdout) as FitResult;
    expect(isFitResult(result)).toBe(true);
    expect(result.fixed).toEqual({ shiftNs: 0 });
    expect(result.curves.fitStartIndex).toBe(10);
    expect(result.curves.fitEndIndex).toBe(249);
    expect(Math.abs(result.components[0].tauNs - 2)).toBeLessThan(3 * result.components[0].tauErrNs + 0.01);
  }, 60_000);

  it('exits 2 with one error line naming the file, line and column of a bad cell', async () => {
    const r = await lumirate('fit', 'bad.csv', '--irf', 'irf.csv');
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^error: bad\.csv line 3, column 2/);
  }, 60_000);

  it('exits 2 on an impossible option', async () => {
    const r = await lumirate('fit', 'decay.csv', '--irf', 'irf.csv', '--exp', '7');
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('error: --exp 7: give 1, 2, 3, 4 or auto\n');
  }, 60_000);
});

describe('parseRange', () => {
  it('reads ns by default and channels with the ch suffix', () => {
    expect(parseRange('1.5:40')).toEqual({ rangeNs: [1.5, 40] });
    expect(parseRange('100:3000ch')).toEqual({ rangeChannels: [100, 3000] });
    expect(() => parseRange('5:2')).toThrow(/end must lie after the start/);
    expect(() => parseRange('1.5:20.5ch')).toThrow(/whole numbers/);
  });
});
