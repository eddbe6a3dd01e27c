import { describe, expect, it } from 'vitest';
import { resampleHistogram } from '../../src/io/resampleHistogram.js';
import type { Histogram } from '../../src/io/types.js';

function hist(counts: number[], binWidthNs: number, t0 = 0): Histogram {
  return {
    timeNs: Float64Array.from(counts, (_, i) => t0 + i * binWidthNs),
    counts: Float64Array.from(counts),
    binWidthNs,
    metadata: {},
    source: 'irf.csv',
    warnings: [],
  };
}

const sum = (a: Float64Array) => a.reduce((x, y) => x + y, 0);

describe('resampleHistogram', () => {
  it('merging pairs of channels adds their counts and stays whole-numbered without warnings', () => {
    const r = resampleHistogram(hist([1, 2, 3, 4, 5, 6], 0.01, 2), 0.02);
    expect(Array.from(r.counts)).toEqual([3, 7, 11]);
    expect(r.timeNs[0]).toBe(2);
    expect(r.binWidthNs).toBe(0.02);
    expect(r.warnings).toEqual([]);
  });

  it('splitting a channel in two halves it (counts assumed uniform within a channel)', () => {
    const r = resampleHistogram(hist([10, 20], 0.02), 0.01);
    expect(Array.from(r.counts)).toEqual([5, 5, 10, 10]);
    expect(r.warnings.join()).toMatch(/no longer raw Poisson counts/);
  });

  it('conserves the total over a non-integer ratio when the span is a whole number of new channels', () => {
    // 12 channels of 0.0125 ns = 0.15 ns = 10 channels of 0.015 ns.
    const counts = [5, 9, 14, 30, 51, 40, 22, 13, 8, 4, 2, 1];
    const r = resampleHistogram(hist(counts, 0.0125), 0.015);
    expect(r.counts.length).toBe(10);
    expect(sum(r.counts)).toBeCloseTo(199, 9);
    // Channel 1 of the new grid, [0.015, 0.030), takes 0.8 of old channel 1 and 0.4 of old channel 2: 0.8·9 + 0.4·14 = 12.8.
    expect(r.counts[1]).toBeCloseTo(12.8, 12);
  });

  it('drops and reports the counts past the last whole new channel', () => {
    const r = resampleHistogram(hist([1, 1, 1, 1, 1], 1), 2);
    expect(Array.from(r.counts)).toEqual([2, 2]);
    expect(r.warnings.join()).toMatch(/dropped 1 counts/);
  });

  it('does not change its input', () => {
    const h = hist([1, 2, 3, 4], 1);
    resampleHistogram(h, 2);
    expect(Array.from(h.counts)).toEqual([1, 2, 3, 4]);
    expect(h.binWidthNs).toBe(1);
  });

  it('refuses a bin width that is not positive or wider than the histogram', () => {
    expect(() => resampleHistogram(hist([1, 2], 1), 0)).toThrow(/cannot resample/);
    expect(() => resampleHistogram(hist([1, 2], 1), 3)).toThrow(/spans only 2 ns/);
  });
});
