import { describe, expect, it } from 'vitest';
import { createRng, logFactorial, Rng } from '../../src/sim/rng.js';
import { chi2QuantileWilsonHilferty, Z_0999 } from './statistics.js';

/** Mean and variance of n draws. */
function moments(n: number, draw: () => number): { mean: number; variance: number } {
  let s = 0;
  let s2 = 0;
  for (let i = 0; i < n; i++) {
    const x = draw();
    s += x;
    s2 += x * x;
  }
  const mean = s / n;
  return { mean, variance: (s2 - n * mean * mean) / (n - 1) };
}

describe('Rng', () => {
  it('gives the same stream for the same seed and a different one for another seed', () => {
    const a = createRng(42);
    const b = createRng(42);
    const c = createRng(43);
    const xa = Array.from({ length: 8 }, () => a.nextUint32());
    const xb = Array.from({ length: 8 }, () => b.nextUint32());
    const xc = Array.from({ length: 8 }, () => c.nextUint32());
    expect(xa).toEqual(xb);
    expect(xa).not.toEqual(xc);
  });

  it('keeps its integer stream fixed across releases (regression fixture made by this code, seed 7)', () => {
    // Not an outside reference: pinned so that a change to the generator, which would silently change
    // every simulated data set and the committed demo data, is noticed.
    const r = createRng(7);
    expect(Array.from({ length: 4 }, () => r.nextUint32())).toEqual(PINNED_SEED_7);
  });

  it('accepts seeds above 2^32 and tells them apart from their low word', () => {
    const lo = createRng(5);
    const hi = createRng(5 + 2 ** 32);
    expect(lo.nextUint32()).not.toBe(hi.nextUint32());
  });

  it('rejects a negative or fractional seed', () => {
    expect(() => createRng(-1)).toThrow(RangeError);
    expect(() => createRng(1.5)).toThrow(/integer/);
  });

  it('forks sub-streams that depend only on seed and stream, without advancing the parent', () => {
    const p1 = createRng(9);
    const p2 = createRng(9);
    p2.uniform(); // a parent that has moved on forks the same children
    expect(p1.fork(3).nextUint32()).toBe(p2.fork(3).nextUint32());
    expect(p1.fork(3).nextUint32()).not.toBe(p1.fork(4).nextUint32());
    expect(p1.fork(3).nextUint32()).not.toBe(createRng(9).nextUint32());
    expect(p1.fork(3).fork(1).nextUint32()).not.toBe(p1.fork(1).nextUint32());
  });

  it('draws uniforms on [0, 1) with mean 1/2 and variance 1/12', () => {
    // Uniform distribution moments: textbook (common practice). n = 2e5: SE(mean) = 6.5e-4.
    const r = createRng(1);
    let min = 1;
    let max = 0;
    const m = moments(200_000, () => {
      const u = r.uniform();
      min = Math.min(min, u);
      max = Math.max(max, u);
      return u;
    });
    expect(min).toBeGreaterThanOrEqual(0);
    expect(max).toBeLessThan(1);
    expect(Math.abs(m.mean - 0.5)).toBeLessThan(4 * Math.sqrt(1 / 12 / 200_000));
    expect(Math.abs(m.variance - 1 / 12)).toBeLessThan(0.002);
  });

  it('draws integers below n without favouring any value', () => {
    const r = createRng(2);
    const counts = new Array(6).fill(0);
    for (let i = 0; i < 60_000; i++) counts[r.integer(6)]++;
    // Pearson χ² with 5 dof; 99.9 % quantile 20.515 (standard χ² table, common practice).
    const chi2 = counts.reduce((s, c) => s + (c - 10_000) ** 2 / 10_000, 0);
    expect(chi2).toBeLessThan(20.515);
  });

  it('draws standard normals with mean 0, variance 1 and the right tail share', () => {
    // P(|Z| > 1.96) = 0.05 (standard normal table, common practice).
    const r = createRng(3);
    let tail = 0;
    const n = 200_000;
    const m = moments(n, () => {
      const z = r.normal();
      if (Math.abs(z) > 1.959963985) tail++;
      return z;
    });
    expect(Math.abs(m.mean)).toBeLessThan(4 / Math.sqrt(n));
    expect(Math.abs(m.variance - 1)).toBeLessThan(4 * Math.sqrt(2 / n));
    expect(Math.abs(tail / n - 0.05)).toBeLessThan(4 * Math.sqrt((0.05 * 0.95) / n));
  });

  it('draws unit exponentials with mean 1 and variance 1', () => {
    const r = createRng(4);
    const n = 200_000;
    const m = moments(n, () => r.exponential());
    expect(Math.abs(m.mean - 1)).toBeLessThan(4 / Math.sqrt(n));
    // Var of the sample variance of Exp(1) is (μ4 − σ⁴)/n = (9 − 1)/n.
    expect(Math.abs(m.variance - 1)).toBeLessThan(4 * Math.sqrt(8 / n));
  });
});

describe('Rng.poisson', () => {
  // A Poisson variable has mean = variance = λ (textbook). SE of the sample mean is sqrt(λ/n); the
  // SE of the sample variance is sqrt((μ4 − σ⁴)/n) with μ4 = 3λ² + λ, i.e. sqrt((2λ² + λ)/n).
  for (const lambda of [0.05, 0.7, 3, 9.9, 10, 37.5, 1000, 2.5e6]) {
    it(`has mean and variance λ for λ = ${lambda}`, () => {
      const r = createRng(Math.round(lambda * 1000) + 11);
      const n = 60_000;
      const m = moments(n, () => r.poisson(lambda));
      expect(Math.abs(m.mean - lambda)).toBeLessThan(4 * Math.sqrt(lambda / n));
      expect(Math.abs(m.variance - lambda)).toBeLessThan(4 * Math.sqrt((2 * lambda * lambda + lambda) / n));
    });
  }

  for (const lambda of [4, 25]) {
    it(`matches the exact probability mass function for λ = ${lambda} (χ² goodness of fit)`, () => {
      // Exact pmf e^(−λ)λ^k/k! against observed frequencies on cells with expectation ≥ 5; the
      // tails are pooled. Threshold: the 99.9 % quantile of χ²_ν, ν = cells − 1 (the total is fixed),
      // by the Wilson–Hilferty approximation (see statistics.ts).
      const r = createRng(lambda);
      const n = 100_000;
      const obs = new Map<number, number>();
      for (let i = 0; i < n; i++) {
        const k = r.poisson(lambda);
        obs.set(k, (obs.get(k) ?? 0) + 1);
      }
      const pmf = (k: number) => Math.exp(-lambda + k * Math.log(lambda) - logFactorial(k));
      let lo = 0;
      while (n * pmf(lo) < 5) lo++;
      let hi = Math.ceil(lambda);
      while (n * pmf(hi + 1) >= 5) hi++;
      let chi2 = 0;
      let cells = 0;
      let pBelow = 0;
      let oBelow = 0;
      for (const [k, c] of obs) if (k < lo) oBelow += c;
      for (let k = 0; k < lo; k++) pBelow += pmf(k);
      let pAbove = 1 - pBelow;
      let oAbove = n - oBelow;
      for (let k = lo; k <= hi; k++) {
        const e = n * pmf(k);
        const o = obs.get(k) ?? 0;
        chi2 += (o - e) ** 2 / e;
        cells++;
        pAbove -= pmf(k);
        oAbove -= o;
      }
      for (const [pTail, oTail] of [
        [pBelow, oBelow],
        [pAbove, oAbove],
      ]) {
        if (n * pTail >= 5) {
          chi2 += (oTail - n * pTail) ** 2 / (n * pTail);
          cells++;
        }
      }
      const nu = cells - 1;
      const threshold = chi2QuantileWilsonHilferty(nu, Z_0999);
      expect(chi2).toBeLessThan(threshold);
    });
  }

  it('returns 0 for a mean of 0 and NaN for a negative or infinite mean', () => {
    const r = new Rng(1);
    expect(r.poisson(0)).toBe(0);
    expect(r.poisson(-1)).toBeNaN();
    expect(r.poisson(Infinity)).toBeNaN();
    expect(r.poisson(NaN)).toBeNaN();
  });
});

describe('logFactorial', () => {
  it('matches a direct sum of logarithms on both sides of the switch to Stirling’s series', () => {
    for (const k of [0, 1, 2, 10, 255, 256, 300, 5000]) {
      let direct = 0;
      for (let i = 2; i <= k; i++) direct += Math.log(i);
      expect(Math.abs(logFactorial(k) - direct)).toBeLessThan(1e-13 * Math.max(1, direct));
    }
  });

  it('gives ln(10!) = ln 3628800 (exact factorial)', () => {
    expect(logFactorial(10)).toBeCloseTo(Math.log(3628800), 13);
  });
});

const PINNED_SEED_7 = [91128722, 700530354, 800967747, 3410940277];
