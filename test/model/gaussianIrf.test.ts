import { describe, expect, it } from 'vitest';
import { emgBasis, emgDensity, gaussianIrfFractions } from '../../src/model/gaussianIrf.js';
import { exponentialBasis } from '../../src/model/reconvolve.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('emgDensity (exponentially modified Gaussian, Grushka 1972)', () => {
  // REFERENCE-VALUES §2 table (mpmath, 50 digits, VERIFIED); tolerance rel 1e-13 as listed.
  const table: [number, number, [number, number][]][] = [
    [
      1,
      0.1,
      [
        [-0.3, 1.3126747120411855e-3],
        [-0.2, 2.1929024011900921e-2],
        [-0.1, 0.15068573335831101],
        [0, 0.46247878528753561],
        [0.1, 0.74199363816305824],
        [0.2, 0.79920567737927335],
        [0.5, 0.60957061520012461],
        [1, 0.36972344454405898],
        [2, 0.13601365416684916],
        [5, 6.7717210989679218e-3],
        [10, 4.562749785743465e-5],
      ],
    ],
    [
      0.05,
      0.1,
      [
        [-0.2, 0.255541817623044],
        [0, 3.36204002446341],
        [0.2, 1.35335283236613],
        [0.5, 6.70019575122842e-3],
        [1, 3.04599594894252e-7],
      ],
    ],
    [
      0.5,
      0.2,
      [
        [-0.4, 0.0395268739079067],
        [0, 0.746554342230992],
        [0.3, 1.02772857415079],
        [1, 0.293213304859567],
        [3, 5.37040035390764e-3],
      ],
    ],
  ];
  for (const [tau, sigma, points] of table) {
    it(`matches the mpmath values for τ = ${tau} ns, σ = ${sigma} ns`, () => {
      for (const [u, y] of points) expect(rel(emgDensity(u, sigma, tau), y)).toBeLessThan(1e-13);
    });
  }

  it('stays finite where a single closed form would give ∞·0', () => {
    // REFERENCE-VALUES §2 "why switch": τ = 0.01, σ = 1, u = 0 and τ = 0.01, σ = 0.1, u = −8 break exp·erfc;
    // τ = 1, σ = 0.1, u = 4 breaks erfcx alone.
    expect(Number.isFinite(emgDensity(0, 1, 0.01))).toBe(true);
    expect(Number.isFinite(emgDensity(-8, 0.1, 0.01))).toBe(true);
    expect(emgDensity(4, 0.1, 1)).toBeGreaterThan(0);
  });
});

describe('emgBasis (channel integrals)', () => {
  // REFERENCE-VALUES §2, channel integrals for τ = 1, σ = 0.1 (VERIFIED vs mp.quad), tolerance rel 1e-12.
  const channels: [number, number, number][] = [
    [-0.2, -0.15, 1.99926411666889e-3],
    [-0.05, 0, 1.87432335908109e-2],
    [0, 0.05, 2.73597120434141e-2],
    [0.5, 0.55, 2.97291188428759e-2],
    [2, 2.05, 6.63346418947809e-3],
    [5, 5.05, 3.30260735117323e-4],
  ];
  for (const [a, b, v] of channels) {
    it(`integrates channel [${a}, ${b}] ns to 1e-12`, () => {
      const out = new Float64Array(1);
      emgBasis(1, a, b - a, 0, 0.1, 1, null, out);
      // basis = τ·∫y/Δ with τ = 1.
      expect(rel((out[0] * (b - a)) / 1, v)).toBeLessThan(1e-12);
    });
  }

  it('adds the tails of earlier pulses at a 12.5 ns period as the periodic closed form says', () => {
    // REFERENCE-VALUES §2 periodic values (T = 12.5 ns, σ = 0.1): τ = 4, u = 1 → 0.203711508096421.
    // A channel 1e-6 ns wide around u = 1 approximates the density to ~1e-12.
    const out = new Float64Array(1);
    const w = 1e-6;
    emgBasis(1, 1 - w / 2, w, 0, 0.1, 4, 12.5, out);
    expect(rel(out[0] / 4, 0.203711508096421)).toBeLessThan(1e-8);
    emgBasis(1, -0.2 - w / 2, w, 0, 0.1, 4, 12.5, out);
    expect(rel(out[0] / 4, 0.0177167691850582)).toBeLessThan(1e-8);
  });
});

describe('reconvolving a binned Gaussian IRF', () => {
  it('matches the exponentially modified Gaussian, integrated per channel, to 1e-6 of the peak', () => {
    // Acceptance check: the histogram reconvolution (measured-IRF path) against the closed form of
    // REFERENCE-VALUES §2. IRF σ = 0.1 ns centred at 1 ns, τ = 1 ns, 2.5 ps channels over 10 ns.
    const dt = 0.0025;
    const n = 4000;
    const irf = new Float64Array(n);
    gaussianIrfFractions(n, 0, dt, 1, 0.1, irf);
    const fromHistogram = new Float64Array(n);
    exponentialBasis(irf, dt, 1, null, fromHistogram, null, null, null);
    const closed = new Float64Array(n);
    emgBasis(n, 0, dt, 1, 0.1, 1, null, closed);
    let peak = 0;
    let worst = 0;
    for (let i = 0; i < n; i++) peak = Math.max(peak, closed[i]);
    for (let i = 0; i < n; i++) worst = Math.max(worst, Math.abs(fromHistogram[i] - closed[i]));
    expect(worst / peak).toBeLessThan(1e-6);
  });
});
