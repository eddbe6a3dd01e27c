import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { expectedHistogram, type ArrivalModel } from '../../src/sim/expectedHistogram.js';
import { chi2QuantileWilsonHilferty, Z_0999 } from './statistics.js';

function relErr(a: number, b: number): number {
  return Math.abs(a / b - 1);
}

const mono = (tauNs: number) => [
  { weight: 1, offsetNs: 0, terms: [{ coef: 1, tauNs, kind: 'exp' as const }] },
];

describe('expectedHistogram', () => {
  it('reproduces the published channel integrals of a Gaussian IRF convolved with an exponential', () => {
    // REFERENCE-VALUES §2 (exponentially modified Gaussian, Grushka, Anal. Chem. 44, 1733 (1972)),
    // τ = 1 ns, σ = 0.1 ns, channel integrals recomputed with mp.quad: VERIFIED, tol rel 1e-12.
    // The IRF is centred on channel edge 20 of a 0.05 ns grid, so u = t − t0 = (k − 20)·0.05.
    const p = expectedHistogram({
      channels: 200,
      binWidthNs: 0.05,
      periodNs: null,
      jitter: { kind: 'gaussian', centerNs: 1, sigmaNs: 0.1 },
      branches: mono(1),
    });
    const cases: [number, number][] = [
      [16, 1.99926411666889e-3], // [−0.2, −0.15]
      [19, 1.87432335908109e-2], // [−0.05, 0]
      [20, 2.73597120434141e-2], // [0, 0.05]
      [30, 2.97291188428759e-2], // [0.5, 0.55]
      [60, 6.63346418947809e-3], // [2, 2.05]
      [120, 3.30260735117323e-4], // [5, 5.05]
    ];
    for (const [k, ref] of cases) expect(relErr(p[k], ref)).toBeLessThan(1e-11);
  });

  it('reproduces the published periodic-excitation densities (12.5 ns period)', () => {
    // REFERENCE-VALUES §2, periodic excitation, T = 12.5 ns, σ = 0.1 ns: VERIFIED values of the
    // density y_T(u). A 0.002 ns channel centred on u has integral y_T(u)·h(1 + h²y''/24y + …): below
    // 1e-6 relative at u = 1 ns, about 1.3e-6 at the peak (u = 0, τ = 1) and 5e-5 on the Gaussian's rising edge at u = −0.2 ns (y''/y
    // ≈ 300 ns⁻² there). Earlier pulses add 5 % at u = 1 and 70 % at u = −0.2, so the test sees the folding.
    const h = 0.002;
    const center = 2 + h / 2; // u = 0 at the middle of channel 1000
    const model = (tauNs: number): ArrivalModel => ({
      channels: 6250,
      binWidthNs: h,
      periodNs: 12.5,
      jitter: { kind: 'gaussian', centerNs: center, sigmaNs: 0.1 },
      branches: mono(tauNs),
    });
    const p4 = expectedHistogram(model(4));
    const at = (u: number) => Math.round((center + u) / h - 0.5);
    expect(relErr(p4[at(1)] / h, 0.203711508096421)).toBeLessThan(1e-6);
    expect(relErr(p4[at(-0.2)] / h, 0.0177167691850582)).toBeLessThan(1e-4);
    const p1 = expectedHistogram(model(1));
    expect(relErr(p1[at(0)] / h, 0.462482530634592)).toBeLessThan(1e-5);
  });

  it('puts every photon in the window when the period equals the window', () => {
    for (const tauNs of [0.3, 5, 40]) {
      const p = expectedHistogram({
        channels: 1000,
        binWidthNs: 0.0125,
        periodNs: 12.5,
        jitter: { kind: 'gaussian', centerNs: 12.3, sigmaNs: 0.08 }, // straddles the fold
        branches: mono(tauNs),
      });
      expect(Math.abs(p.reduce((s, x) => s + x, 0) - 1)).toBeLessThan(1e-12);
    }
  });

  it('conserves probability for any lifetime, IRF width and position when the period equals the window', () => {
    // Property: with folding at a period equal to the window every photon lands somewhere (exact).
    fc.assert(
      fc.property(
        fc.double({ min: 0.02, max: 60, noNaN: true }),
        fc.double({ min: 0.01, max: 0.6, noNaN: true }),
        fc.double({ min: -2, max: 14, noNaN: true }),
        fc.double({ min: -0.3, max: 0.3, noNaN: true }),
        (tauNs, sigmaNs, centerNs, offsetNs) => {
          const p = expectedHistogram({
            channels: 250,
            binWidthNs: 0.05,
            periodNs: 12.5,
            jitter: { kind: 'gaussian', centerNs, sigmaNs },
            branches: [
              { weight: 0.9, offsetNs, terms: [{ coef: 1, tauNs, kind: 'exp' }] },
              { weight: 0.1, offsetNs: 0, terms: [] },
            ],
          });
          expect(Math.abs(p.reduce((s, x) => s + x, 0) - 1)).toBeLessThan(1e-10);
        },
      ),
      { numRuns: 40, seed: 11 },
    );
  });

  it('loses exactly the share e^(−(W − t0)/τ) past a single-pulse window (narrow IRF)', () => {
    // Exponential survival: P(D > x) = e^(−x/τ) (definition). With σ = 1e-4 ns the Gaussian adds
    // σ²/2τ² ≈ 1e-9 relative to the lost share.
    const p = expectedHistogram({
      channels: 400,
      binWidthNs: 0.025,
      periodNs: null,
      jitter: { kind: 'gaussian', centerNs: 1, sigmaNs: 1e-4 },
      branches: mono(3),
    });
    const lost = 1 - p.reduce((s, x) => s + x, 0);
    expect(relErr(lost, Math.exp(-(10 - 1) / 3))).toBeLessThan(1e-7);
  });

  it('treats a binned jitter as uniform within each bin (one bin: a box, no delay)', () => {
    // A box from 1.0 to 1.1 ns with zero delay fills channels [1.0, 1.1) evenly: exact.
    const p = expectedHistogram({
      channels: 100,
      binWidthNs: 0.025,
      periodNs: null,
      jitter: { kind: 'binned', startNs: 1.0, binWidthNs: 0.1, weights: new Float64Array([7]) },
      branches: [{ weight: 1, offsetNs: 0, terms: [] }],
    });
    for (let k = 0; k < 100; k++) expect(p[k]).toBeCloseTo(k >= 40 && k < 44 ? 0.25 : 0, 13);
  });

  it('joins the hypoexponential and Erlang forms continuously when the two time constants meet', () => {
    // G(x) = (τ₁e^(−x/τ₁) − τ₂e^(−x/τ₂))/(τ₁ − τ₂) → (1 + x/τ)e^(−x/τ) as τ₂ → τ₁ (limit, exact);
    // the distributions differ by O(τ₂/τ₁ − 1) = 1e-5 relative, and rounding in the difference form
    // would show up as far more than that if it were mishandled.
    const base = (terms: ArrivalModel['branches'][number]['terms']): ArrivalModel => ({
      channels: 300,
      binWidthNs: 0.05,
      periodNs: 15,
      jitter: { kind: 'gaussian', centerNs: 1, sigmaNs: 0.05 },
      branches: [{ weight: 1, offsetNs: 0.2, terms }],
    });
    const t1 = 2;
    const t2 = 2 * (1 + 1e-5);
    const hypo = expectedHistogram(
      base([
        { coef: t1 / (t1 - t2), tauNs: t1, kind: 'exp' },
        { coef: -t2 / (t1 - t2), tauNs: t2, kind: 'exp' },
      ]),
    );
    const erlang = expectedHistogram(base([{ coef: 1, tauNs: t1, kind: 'erlang2' }]));
    let maxDiff = 0;
    for (let k = 0; k < 300; k++) maxDiff = Math.max(maxDiff, Math.abs(hypo[k] - erlang[k]));
    expect(maxDiff).toBeLessThan(2e-5 * Math.max(...erlang));
    expect(Math.abs(erlang.reduce((s, x) => s + x, 0) - 1)).toBeLessThan(1e-12);
  });
});

describe('chi2QuantileWilsonHilferty (test utility)', () => {
  it('is close to tabulated 99.9 % quantiles of χ²', () => {
    // χ²(0.999) for ν = 10, 50, 100: 29.588, 86.661, 149.449 (standard χ² tables; VERIFIED with
    // scipy.stats.chi2.ppf, REFERENCE-VALUES §14).
    expect(relErr(chi2QuantileWilsonHilferty(10, Z_0999), 29.588)).toBeLessThan(0.01);
    expect(relErr(chi2QuantileWilsonHilferty(50, Z_0999), 86.661)).toBeLessThan(0.002);
    expect(relErr(chi2QuantileWilsonHilferty(100, Z_0999), 149.449)).toBeLessThan(0.001);
  });
});
