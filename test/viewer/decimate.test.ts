import { describe, expect, it } from 'vitest';
import { DECIMATE_ABOVE, decimationIndices, pick } from '../../viewer/decimate.js';

describe('decimationIndices', () => {
  it('keeps every channel of a curve at or below the threshold', () => {
    const short = Array.from({ length: DECIMATE_ABOVE }, (_, i) => i);
    expect(decimationIndices(short)).toEqual(short);
  });

  it('thins a long curve to at most two points per bucket and keeps its peak, its dip and both ends', () => {
    const n = 4096;
    const y = Array.from({ length: n }, (_, i) => 100 + Math.sin(i / 7) * 10);
    y[1234] = 1e6; // a single-channel spike
    y[3000] = -50; // a single-channel dip
    const keep = decimationIndices(y, 500);
    expect(keep.length).toBeLessThanOrEqual(2 * 500 + 2);
    expect(keep.length).toBeLessThan(n);
    expect(keep).toContain(1234);
    expect(keep).toContain(3000);
    expect(keep[0]).toBe(0);
    expect(keep[keep.length - 1]).toBe(n - 1);
    // Strictly increasing: the time axis stays ordered.
    for (let i = 1; i < keep.length; i++) expect(keep[i]).toBeGreaterThan(keep[i - 1]);
  });

  it('skips nulls when looking for extremes', () => {
    const y: (number | null)[] = Array.from({ length: 3000 }, () => null);
    y[1500] = 7;
    expect(decimationIndices(y, 10)).toContain(1500);
  });

  it('pick takes the values at the kept channels', () => {
    expect(pick([10, 11, 12, 13], [0, 2, 3])).toEqual([10, 12, 13]);
  });
});
