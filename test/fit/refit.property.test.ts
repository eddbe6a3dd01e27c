import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { fitModel } from '../../src/fit/fitModel.js';
import { exponentialBasis, shiftIrf } from '../../src/model/reconvolve.js';
import { gaussianIrfFractions } from '../../src/model/gaussianIrf.js';
import type { Histogram } from '../../src/io/types.js';

// Property: noise-free synthetic data refit to their generating parameters, whatever the lifetimes,
// shift and background (within the fitter's documented bounds), from automatic starting values alone.
const n = 1024;
const dt = 0.025;
const irfFractions = new Float64Array(n);
gaussianIrfFractions(n, 0, dt, 3, 0.08, irfFractions);
const hist = (counts: Float64Array, source: string): Histogram => ({
  timeNs: Float64Array.from({ length: n }, (_, i) => i * dt),
  counts,
  binWidthNs: dt,
  metadata: {},
  source,
  warnings: [],
});
const irf = hist(
  Float64Array.from(irfFractions, (v) => v * 1e6),
  'irf (invented)',
);

function synthetic(taus: number[], amps: number[], shiftNs: number, bg: number): Histogram {
  const shifted = new Float64Array(n);
  shiftIrf(irfFractions, shiftNs / dt, shifted, null);
  const b = new Float64Array(n);
  const counts = new Float64Array(n).fill(bg);
  taus.forEach((tau, j) => {
    exponentialBasis(shifted, dt, tau, null, b, null, null, null);
    for (let i = 0; i < n; i++) counts[i] += amps[j] * b[i];
  });
  return hist(counts, 'synthetic (invented)');
}

describe('refitting noise-free data', () => {
  it('returns one lifetime, shift and background to 1e-4 relative', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.05, max: 15, noNaN: true }),
        fc.double({ min: -0.2, max: 0.2, noNaN: true }),
        fc.double({ min: 0.5, max: 20, noNaN: true }),
        (tau, shift, bg) => {
          const fit = fitModel(synthetic([tau], [5e3], shift, bg), irf, { components: 1, curves: false });
          expect(Math.abs(fit.components[0].tauNs / tau - 1)).toBeLessThan(1e-4);
          expect(Math.abs(fit.shiftNs - shift)).toBeLessThan(1e-4);
          expect(Math.abs(fit.background / bg - 1)).toBeLessThan(1e-3);
        },
      ),
      { numRuns: 25, seed: 42 },
    );
  });

  it('returns two lifetimes a factor ≥ 3 apart to 1e-3 relative', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 0.1, max: 2, noNaN: true }),
        fc.double({ min: 3, max: 8, noNaN: true }),
        fc.double({ min: 0.2, max: 0.8, noNaN: true }),
        (tau1, ratio, frac) => {
          const tau2 = tau1 * ratio;
          const fit = fitModel(synthetic([tau1, tau2], [1e4 * frac, 1e4 * (1 - frac)], 0.03, 2), irf, {
            components: 2,
            curves: false,
          });
          expect(Math.abs(fit.components[0].tauNs / tau1 - 1)).toBeLessThan(1e-3);
          expect(Math.abs(fit.components[1].tauNs / tau2 - 1)).toBeLessThan(1e-3);
        },
      ),
      { numRuns: 15, seed: 7 },
    );
  });
});
