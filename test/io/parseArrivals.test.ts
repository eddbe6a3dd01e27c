import { describe, expect, it } from 'vitest';
import { parseArrivalsText } from '../../src/io/parseArrivals.js';
import { expectInputError } from './expectInputError.js';

const F = 'photons.txt';
const arr = (a: Float64Array) => Array.from(a);

describe('parseArrivalsText', () => {
  it('histograms arrivals in ps from the header into channels [k·w, (k+1)·w)', () => {
    // 100 ps = 0.1 ns (SI prefixes, SI Brochure 9th ed. table 7). Arrivals 0, 99, 100, 250, 399 ps → channels 0, 0, 1, 2, 3.
    const h = parseArrivalsText('arrival_ps\n0\n99\n100\n250\n399\n', { source: F, binWidthNs: 0.1 });
    expect(arr(h.counts)).toEqual([2, 1, 1, 1]);
    expect(arr(h.timeNs).map((t) => +t.toFixed(12))).toEqual([0, 0.1, 0.2, 0.3]);
    expect(h.report).toMatchObject({ layout: 'arrivals', timeUnit: 'ps', timeColumn: 'arrival_ps' });
  });

  it('conserves the number of arrivals inside the range and reports those outside', () => {
    const times = Array.from({ length: 1000 }, (_, i) => ((i * 7919) % 5000) / 100); // 0 … 49.99 ns
    const h = parseArrivalsText(`time_ns\n${times.join('\n')}\n`, {
      source: F,
      binWidthNs: 0.5,
      rangeNs: [10, 30],
    });
    const inside = times.filter((t) => t >= 10 && t < 30).length;
    expect(arr(h.counts).reduce((a, b) => a + b, 0)).toBe(inside);
    expect(h.counts.length).toBe(40);
    expect(h.warnings.join()).toContain(`${1000 - inside} of 1000 arrivals fall outside`);
  });

  it('takes the unit from an option, or from # time_unit, for a headerless list', () => {
    expect(arr(parseArrivalsText('1\n2\n3\n', { source: F, binWidthNs: 1, unit: 'ns' }).counts)).toEqual([
      0, 1, 1, 1,
    ]);
    expect(
      parseArrivalsText('# time_unit: us\n0.001\n0.002\n', { source: F, binWidthNs: 1 }).counts.length,
    ).toBe(3);
  });

  it('picks the time column of a multi-column list, or the one asked for', () => {
    const text = 'photon,arrival_ns\n1,0.5\n2,1.5\n';
    expect(arr(parseArrivalsText(text, { source: F, binWidthNs: 1 }).counts)).toEqual([1, 1]);
    expectInputError(() => parseArrivalsText('a,b\n1,2\n', { source: F, binWidthNs: 1 }), {
      file: F,
      match: /choose the arrival-time column/,
    });
  });

  it('refuses a list whose unit is unknown, a negative arrival without a range, a bad bin width, and absurd channel counts', () => {
    expectInputError(() => parseArrivalsText('1\n2\n', { source: F, binWidthNs: 1 }), {
      file: F,
      line: 1,
      match: /unit of the arrival times is unknown/,
    });
    expectInputError(() => parseArrivalsText('t_ns\n1\n-2\n', { source: F, binWidthNs: 1 }), {
      file: F,
      line: 3,
      column: 1,
      match: /negative/,
    });
    expectInputError(() => parseArrivalsText('t_ns\n1\n', { source: F, binWidthNs: 0 }), {
      file: F,
      match: /positive bin width/,
    });
    expectInputError(() => parseArrivalsText('t_s\n1\n', { source: F, binWidthNs: 0.001 }), {
      file: F,
      match: /more than 16777216/,
    });
    expectInputError(() => parseArrivalsText('t_ns\n1\nlate\n', { source: F, binWidthNs: 1 }), {
      file: F,
      line: 3,
      column: 1,
    });
    expectInputError(() => parseArrivalsText('t_ns\n1\n', { source: F, binWidthNs: 1, rangeNs: [5, 5] }), {
      file: F,
      match: /empty/,
    });
  });
});
