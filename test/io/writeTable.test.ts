import { describe, expect, it } from 'vitest';
import { formatHistogramTable, formatSpectrumTable, formatTableNumber } from '../../src/io/writeTable.js';
import { parseHistogramText } from '../../src/io/parseHistogram.js';
import { parseSpectrumText } from '../../src/io/parseSpectrum.js';
import { InputError } from '../../src/errors.js';

const axis = (n: number, bw: number) => Float64Array.from({ length: n }, (_, k) => k * bw);

describe('formatHistogramTable', () => {
  it('writes metadata lines, a header and integer counts as integers', () => {
    const text = formatHistogramTable(
      { timeNs: axis(3, 0.0122), series: [{ name: 'counts', counts: new Float64Array([12, 9, 0]) }] },
      { sample: 'demo-A', bin_width_ns: '0.0122', period_ns: '12.5', excitation_nm: '405' },
    );
    expect(text).toBe(
      '# sample: demo-A\n# bin_width_ns: 0.0122\n# period_ns: 12.5\n# excitation_nm: 405\n' +
        'time_ns,counts\n0,12\n0.0122,9\n0.0244,0\n',
    );
  });

  it('writes times uniform within 1e-9 relative even where k·Δt is not exact in binary', () => {
    const bw = 0.0122;
    const text = formatHistogramTable(
      { timeNs: axis(4096, bw), series: [{ name: 'c', counts: new Float64Array(4096) }] },
      {},
    );
    const times = text
      .trim()
      .split('\n')
      .slice(1)
      .map((l) => Number(l.split(',')[0]));
    for (let k = 1; k < times.length; k++)
      expect(Math.abs(times[k] - times[k - 1] - bw) / bw).toBeLessThan(1e-9);
    expect(text).toContain('\n0.0366,0\n'); // 3 × 0.0122 = 0.036599999999999994 in binary
  });

  it('writes several counts columns that the importer reads back column by column', () => {
    const a = new Float64Array([5, 10000, 37, 2]);
    const b = new Float64Array([1, 2, 3, 4]);
    const text = formatHistogramTable(
      {
        timeNs: axis(4, 0.05),
        series: [
          { name: 'T233K', counts: a },
          { name: 'T253K', counts: b },
        ],
      },
      { bin_width_ns: '0.05' },
    );
    const h = parseHistogramText(text, { source: 'series.csv#T253K', column: 'T253K' });
    expect(Array.from(h.counts)).toEqual([1, 2, 3, 4]);
    expect(h.binWidthNs).toBeCloseTo(0.05, 12);
    const h2 = parseHistogramText(text, { source: 'series.csv#T233K', column: 'T233K' });
    expect(Array.from(h2.counts)).toEqual(Array.from(a));
  });

  it('keeps non-integer values to 10 significant digits', () => {
    expect(formatTableNumber(1234.56789012345, 10)).toBe('1234.56789');
    expect(formatTableNumber(-0, 10)).toBe('0');
    expect(formatTableNumber(3e-7, 10)).toBe('3e-7');
  });

  it('refuses mismatched lengths, bad names, non-finite values and multi-line metadata', () => {
    const t = axis(2, 1);
    const ok = new Float64Array([1, 2]);
    expect(() =>
      formatHistogramTable({ timeNs: t, series: [{ name: 'c', counts: new Float64Array(3) }] }, {}),
    ).toThrow(/has 3 rows but the time axis has 2/);
    expect(() => formatHistogramTable({ timeNs: t, series: [{ name: 'a,b', counts: ok }] }, {})).toThrow(
      InputError,
    );
    expect(() => formatHistogramTable({ timeNs: t, series: [{ name: 'time_ns', counts: ok }] }, {})).toThrow(
      /twice/,
    );
    expect(() =>
      formatHistogramTable({ timeNs: t, series: [{ name: 'c', counts: new Float64Array([1, NaN]) }] }, {}),
    ).toThrow(/row 2 is NaN/);
    expect(() =>
      formatHistogramTable({ timeNs: t, series: [{ name: 'c', counts: ok }] }, { note: 'a\nb' }),
    ).toThrow(/line break/);
    expect(() => formatHistogramTable({ timeNs: t, series: [] }, {})).toThrow(/at least one/);
  });
});

describe('formatSpectrumTable', () => {
  it('writes a wavelength_nm,epsilon table that the importer reads as ε', () => {
    const x = Float64Array.from({ length: 5 }, (_, i) => 400 + i);
    const y = new Float64Array([100.5, 2000, 35000.25, 1200, 0]);
    const text = formatSpectrumTable('wavelength_nm', x, 'epsilon', y, { solvent: 'ethanol' });
    expect(text.split('\n').slice(0, 3)).toEqual([
      '# solvent: ethanol',
      'wavelength_nm,epsilon',
      '400,100.5',
    ]);
    const s = parseSpectrumText(text, { source: 'abs.csv', kind: 'absorption' });
    expect(s.axis).toBe('nm');
    expect(Array.from(s.y)).toEqual(Array.from(y));
  });

  it('writes a wavelength_nm,photons emission table that the importer reads as photon counts', () => {
    const x = Float64Array.from({ length: 3 }, (_, i) => 500 + 2 * i);
    const y = new Float64Array([0.25, 1, 0.5]);
    const s = parseSpectrumText(formatSpectrumTable('wavelength_nm', x, 'photons', y, {}), {
      source: 'em.csv',
      kind: 'emission',
    });
    expect(s.emissionOrdinate).toBe('photonsPerAxisUnit');
    expect(Array.from(s.x)).toEqual([500, 502, 504]);
  });

  it('refuses an axis and ordinate of different lengths', () => {
    expect(() =>
      formatSpectrumTable('wavelength_nm', new Float64Array(3), 'photons', new Float64Array(2), {}),
    ).toThrow(/3 rows but 'photons' has 2/);
  });
});
