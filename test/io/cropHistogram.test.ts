import { describe, expect, it } from 'vitest';
import { cropHistogram } from '../../src/io/cropHistogram.js';
import { InputError } from '../../src/errors.js';
import type { Histogram } from '../../src/io/types.js';

const h: Histogram = {
  timeNs: Float64Array.from([0, 1, 2, 3, 4]),
  counts: Float64Array.from([5, 6, 7, 8, 9]),
  binWidthNs: 1,
  metadata: { sample: 'a' },
  source: 'd.csv',
  warnings: [],
};

describe('cropHistogram', () => {
  it('keeps the channels whose left edge lies in [startNs, endNs)', () => {
    const c = cropHistogram(h, { startNs: 1, endNs: 3 });
    expect(Array.from(c.timeNs)).toEqual([1, 2]);
    expect(Array.from(c.counts)).toEqual([6, 7]);
    expect(c.metadata).toEqual({ sample: 'a' });
  });

  it('defaults to the whole histogram on an open side, and returns copies', () => {
    const c = cropHistogram(h, { startNs: 2.5 });
    expect(Array.from(c.counts)).toEqual([8, 9]);
    c.counts[0] = 0;
    expect(h.counts[3]).toBe(8);
  });

  it('refuses a window that holds no channel or is reversed', () => {
    expect(() => cropHistogram(h, { startNs: 10, endNs: 20 })).toThrow(InputError);
    expect(() => cropHistogram(h, { startNs: 3, endNs: 1 })).toThrow(/empty/);
  });
});
