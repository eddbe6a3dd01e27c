import { describe, expect, it } from 'vitest';
import { seriesDisplay } from '../../viewer/seriesView.js';
import { seriesParameterRows } from '../../viewer/cards.js';
import { displayName } from '../../viewer/names.js';
import { fixtureReport } from './fixtures.js';

const [arrhenius, sternVolmer] = fixtureReport({ samples: 1, channels: 64 }).series;

describe('seriesDisplay', () => {
  it('shows a temperature series as ln k against 1/T, points sorted by 1/T', () => {
    const v = seriesDisplay(arrhenius);
    expect(v.xLabel).toBe('1/T (K⁻¹)');
    expect(v.yLabel).toBe('ln(k_nr / s⁻¹)');
    const p278 = v.points.find((p) => p.sample === 'dye-001')!;
    const src = arrhenius.points.find((p) => p.sample === 'dye-001')!;
    expect(p278.x).toBeCloseTo(1 / 278, 12);
    expect(p278.y).toBeCloseTo(Math.log(src.y), 12);
    // The error bar is mapped through ln, so it is not symmetric.
    expect(p278.yHigh - p278.y).toBeCloseTo(Math.log(1.03), 9);
    expect(p278.y - p278.yLow).toBeCloseTo(-Math.log(0.97), 9);
    for (let i = 1; i < v.points.length; i++) expect(v.points[i].x).toBeGreaterThan(v.points[i - 1].x);
  });

  it('draws the law k₀ + A·exp(−Eₐ/k_B T) from the fitted parameters', () => {
    const v = seriesDisplay(arrhenius);
    // k_B/e = 8.617333262e-5 eV/K: REFERENCE-VALUES §3 (k_B and e exact in the 2019 SI), VERIFIED there.
    const kB = 8.617333262e-5;
    const { eaEv, k0PerS, aPerS } = arrhenius.parameters;
    v.curve.x.forEach((invT, i) => {
      expect(v.curve.y[i]).toBeCloseTo(Math.log(k0PerS + aPerS * Math.exp((-eaEv / kB) * invT)), 8);
    });
    expect(v.curve.x[0]).toBeCloseTo(1 / 328, 12);
    expect(v.curve.x[v.curve.x.length - 1]).toBeCloseTo(1 / 278, 12);
  });

  it('leaves other series as they are, with the fitted values joined across the points', () => {
    const v = seriesDisplay(sternVolmer);
    expect(v.xLabel).toBe('quencher (M)');
    expect(v.yLabel).toBe('τ₀/τ');
    expect(v.points.map((p) => p.x)).toEqual(sternVolmer.points.map((p) => p.x));
    expect(v.curve.y).toEqual(sternVolmer.points.map((p) => p.fit));
  });
});

describe('parameter names', () => {
  it('turn unit suffixes into units and short names into the usual symbols', () => {
    expect(displayName('eaEv')).toBe('Eₐ (eV)');
    expect(displayName('kqPerMPerS')).toBe('k_q (M⁻¹ s⁻¹)');
    expect(displayName('temperature_k')).toBe('T (K)');
    expect(displayName('plateauSamples')).toBe('samples in the plateau');
    expect(displayName('someCount')).toBe('someCount');
  });

  it('pair each parameter with its error, in either naming, and per-sample entries by their sample', () => {
    expect(
      seriesParameterRows({
        eaEv: 0.25,
        eaErrEv: 0.01,
        k0PerS: 2e7,
        k0PerSErr: 4e6,
        rNm_d1: 5.1,
        rErrNm_d1: 0.23,
      }),
    ).toEqual([
      ['Eₐ (eV)', '0.250 ± 0.010'],
      ['k₀ (s⁻¹)', '(2.0 ± 0.4)e7'],
      ['r (nm), d1', '5.10 ± 0.23'],
    ]);
  });

  it('shows a count among the parameters as a whole number', () => {
    expect(seriesParameterRows({ plateauSamples: 3 })).toEqual([['samples in the plateau', '3']]);
  });
});
