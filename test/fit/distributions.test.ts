import { describe, expect, it } from 'vitest';
import {
  chi2Cdf,
  chi2Quantile,
  chi2Sf,
  gammaP,
  gammaQ,
  lnGamma,
  normalCdf,
  normalQuantile,
  normalSf,
} from '../../src/fit/distributions.js';

function expectRel(actual: number, expected: number, rel: number): void {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(rel * Math.abs(expected));
}

describe('lnGamma', () => {
  it('matches ln((n−1)!) at integers and ln√π at ½', () => {
    // Closed forms: Γ(n) = (n−1)!, Γ(½) = √π (common practice).
    let fact = 1;
    for (let n = 1; n <= 20; n++) {
      if (n > 1) fact *= n - 1;
      expectRel(lnGamma(n) + 1, Math.log(fact) + 1, 1e-14);
    }
    expectRel(lnGamma(0.5), 0.5 * Math.log(Math.PI), 1e-14);
    // Γ(x+1) = xΓ(x) across small and large x, including the reflection branch.
    for (const x of [0.01, 0.3, 2.7, 55.5, 1234.5])
      expectRel(lnGamma(x + 1) - lnGamma(x), Math.log(x), 1e-12);
  });

  it('is NaN outside its domain', () => {
    expect(lnGamma(0)).toBeNaN();
    expect(lnGamma(-2)).toBeNaN();
    expect(lnGamma(NaN)).toBeNaN();
  });
});

describe('regularized incomplete gamma', () => {
  it('P(1, x) = 1 − e^(−x)', () => {
    // Closed form (common practice).
    for (const x of [1e-6, 0.1, 1, 1.9, 2.1, 5, 30]) {
      expectRel(gammaP(1, x), -Math.expm1(-x), 1e-14);
      expectRel(gammaQ(1, x), Math.exp(-x), 1e-13);
    }
  });

  it('Q(n+1, μ) equals the Poisson probability of at most n events', () => {
    // Identity Q(n+1, μ) = Σ_{k≤n} e^(−μ) μ^k/k! (common practice; e.g. Abramowitz & Stegun 26.4.21).
    for (const [n, mu] of [
      [0, 0.5],
      [3, 2],
      [10, 10],
      [10, 25],
      [40, 30],
      [100, 120],
    ]) {
      let term = Math.exp(-mu);
      let sum = term;
      for (let k = 1; k <= n; k++) {
        term *= mu / k;
        sum += term;
      }
      expectRel(gammaQ(n + 1, mu), sum, 1e-12);
      expectRel(gammaP(n + 1, mu) + gammaQ(n + 1, mu), 1, 1e-15);
    }
  });

  it('gives erfc through Q(½, x²) deep in the tail', () => {
    // erfc(3), erfc(6), erfc(26): mpmath values from REFERENCE-VALUES §2 (VERIFIED).
    expectRel(gammaQ(0.5, 9), 2.2090496998585441e-5, 1e-13);
    expectRel(gammaQ(0.5, 36), 2.1519736712498913e-17, 1e-13);
    expectRel(gammaQ(0.5, 676), 5.6631924088561428e-296, 1e-12);
  });

  it('is NaN outside its domain', () => {
    expect(gammaP(0, 1)).toBeNaN();
    expect(gammaP(1, -1)).toBeNaN();
    expect(gammaQ(-1, 1)).toBeNaN();
    expect(gammaQ(1, NaN)).toBeNaN();
  });
});

describe('χ² distribution', () => {
  it('has survival e^(−x/2) for two degrees of freedom', () => {
    // Closed form for k = 2 (common practice).
    for (const x of [0.01, 1, 3, 10, 50, 200]) expectRel(chi2Sf(x, 2), Math.exp(-x / 2), 1e-13);
  });

  it('has survival erfc(√(x/2)) for one degree of freedom', () => {
    // x = 18 → erfc(3), x = 72 → erfc(6): REFERENCE-VALUES §2 (VERIFIED).
    expectRel(chi2Sf(18, 1), 2.2090496998585441e-5, 1e-13);
    expectRel(chi2Sf(72, 1), 2.1519736712498913e-17, 1e-13);
  });

  it('reproduces the printed table of upper 5 % and 1 % critical values', () => {
    // Critical values as printed (3 decimals) in standard statistics handbook tables; FROM MEMORY.
    const table: [number, number, number][] = [
      [1, 0.95, 3.841],
      [2, 0.95, 5.991],
      [3, 0.95, 7.815],
      [4, 0.95, 9.488],
      [5, 0.95, 11.07],
      [10, 0.95, 18.307],
      [1, 0.99, 6.635],
      [2, 0.99, 9.21],
      [3, 0.99, 11.345],
      [10, 0.99, 23.209],
    ];
    for (const [k, p, x] of table) {
      expect(chi2Quantile(p, k)).toBeCloseTo(x, 3);
      expect(Math.abs(chi2Sf(x, k) - (1 - p))).toBeLessThan(2e-4);
    }
  });

  it('chi2Sf(chi2Quantile(p, k), k) = 1 − p from the far lower to the far upper tail', () => {
    for (const k of [0.5, 1, 2, 3, 7, 30, 200]) {
      for (const p of [1e-12, 1e-6, 0.01, 0.3, 0.5, 0.9, 0.999, 1 - 1e-9]) {
        const x = chi2Quantile(p, k);
        if (p < 0.5) expectRel(chi2Cdf(x, k), p, 1e-10);
        else expectRel(chi2Sf(x, k), 1 - p, 1e-8);
      }
    }
  });

  it('is NaN outside its domain and exact at the ends', () => {
    expect(chi2Sf(1, 0)).toBeNaN();
    expect(chi2Quantile(1.1, 2)).toBeNaN();
    expect(chi2Quantile(0.5, -1)).toBeNaN();
    expect(chi2Sf(0, 3)).toBe(1);
    expect(chi2Sf(-1, 3)).toBe(1);
    expect(chi2Cdf(0, 3)).toBe(0);
    expect(chi2Quantile(0, 3)).toBe(0);
    expect(chi2Quantile(1, 3)).toBe(Infinity);
  });
});

describe('normal distribution', () => {
  it('matches erfc at z = 3√2 and 6√2', () => {
    // normalSf(z) = erfc(z/√2)/2; erfc(3), erfc(6) from REFERENCE-VALUES §2 (VERIFIED).
    expectRel(normalSf(3 * Math.SQRT2), 2.2090496998585441e-5 / 2, 1e-13);
    expectRel(normalCdf(-6 * Math.SQRT2), 2.1519736712498913e-17 / 2, 1e-13);
    expect(normalCdf(0)).toBe(0.5);
  });

  it('gives the familiar two-sided quantiles', () => {
    // Standard normal quantiles, FROM MEMORY (widely tabulated: 1.6449, 1.9600, 2.5758, 3.0902).
    expectRel(normalQuantile(0.95), 1.6448536269514722, 1e-14);
    expectRel(normalQuantile(0.975), 1.959963984540054, 1e-14);
    expectRel(normalQuantile(0.995), 2.5758293035489004, 1e-14);
    expectRel(normalQuantile(0.999), 3.090232306167813, 1e-13);
    expectRel(normalQuantile(0.025), -1.959963984540054, 1e-14);
    // Mean ± 1σ holds 68.27 % (common practice).
    expect(normalCdf(1) - normalCdf(-1)).toBeCloseTo(0.6826894921370859, 14);
  });

  it('inverts normalCdf in both regions of the rational approximation and in the tails', () => {
    for (const p of [1e-300, 1e-20, 1e-8, 0.001, 0.02, 0.0243, 0.0245, 0.2, 0.5, 0.7, 0.98, 0.99999]) {
      const z = normalQuantile(p);
      if (p <= 0.5) expectRel(normalCdf(z), p, 1e-12);
      else expectRel(normalSf(z), 1 - p, 1e-9);
    }
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(normalQuantile(-0.1)).toBeNaN();
  });
});
