import { describe, expect, it } from 'vitest';
import {
  durbinWatson,
  informationCriteria,
  likelihoodRatioPValue,
  residualAutocorrelation,
  runsTest,
} from '../../src/fit/diagnostics.js';
import { createRng } from '../../src/sim/rng.js';

/** Seeded standard-normal source for the Monte Carlo checks. */
function normalSource(seed: number): () => number {
  const rng = createRng(seed);
  return () => rng.normal();
}

function whiteNoise(next: () => number, n: number): Float64Array {
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) r[i] = next();
  return r;
}

/** AR(1) series r_i = φ r_{i−1} + e_i, stationary start. */
function ar1(next: () => number, n: number, phi: number): Float64Array {
  const r = new Float64Array(n);
  r[0] = next() / Math.sqrt(1 - phi * phi);
  for (let i = 1; i < n; i++) r[i] = phi * r[i - 1] + next();
  return r;
}

function meanAndVariance(xs: number[]): { mean: number; variance: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  const variance = xs.reduce((a, b) => a + (b - mean) ** 2, 0) / (xs.length - 1);
  return { mean, variance };
}

describe('durbinWatson', () => {
  it('computes d for small series by hand', () => {
    // [1, −1, 1, −1]: Σ diff² = 4 + 4 + 4 = 12, Σ r² = 4 ⇒ d = 3 (hand-computed).
    expect(durbinWatson([1, -1, 1, -1])).toBe(3);
    // [3, 1, −2, 0.5]: diffs −2, −3, 2.5 ⇒ 4 + 9 + 6.25 = 19.25; Σ r² = 9 + 1 + 4 + 0.25 = 14.25
    // ⇒ d = 19.25/14.25 = 1.3508771929824561 (hand-computed).
    expect(durbinWatson([3, 1, -2, 0.5])).toBeCloseTo(19.25 / 14.25, 15);
    expect(durbinWatson(Float64Array.of(1, 2, 3))).toBeCloseTo(2 / 14, 15);
  });

  it('has the white-noise mean and variance of Durbin & Watson for N = 50', () => {
    // E[d] = 2(N−1)/N, Var[d] = 2(2N² − 4)/(N²(N+2)): REFERENCE-VALUES §11 (Durbin & Watson 1950; VERIFIED).
    const n = 50;
    const reps = 2000;
    const next = normalSource(20260101);
    const ds: number[] = [];
    for (let k = 0; k < reps; k++) ds.push(durbinWatson(whiteNoise(next, n)));
    const { mean, variance } = meanAndVariance(ds);
    const expectedMean = (2 * (n - 1)) / n;
    const expectedVar = (2 * (2 * n * n - 4)) / (n * n * (n + 2));
    expect(expectedMean).toBeCloseTo(1.96, 10);
    expect(Math.sqrt(expectedVar)).toBeCloseTo(0.277, 3);
    // Mean within 3 standard errors; the sample variance of 2000 draws is good to about ±3 % (1σ).
    expect(Math.abs(mean - expectedMean)).toBeLessThan(3 * Math.sqrt(expectedVar / reps));
    expect(variance / expectedVar).toBeGreaterThan(0.9);
    expect(variance / expectedVar).toBeLessThan(1.1);
  });

  it('has the white-noise mean and variance of Durbin & Watson for N = 1000', () => {
    // REFERENCE-VALUES §11: N = 1000 → 1.998 ± 0.0632 (VERIFIED).
    const n = 1000;
    const reps = 400;
    const next = normalSource(31);
    const ds: number[] = [];
    for (let k = 0; k < reps; k++) ds.push(durbinWatson(whiteNoise(next, n)));
    const { mean, variance } = meanAndVariance(ds);
    expect(Math.abs(mean - 1.998)).toBeLessThan(3 * (0.0632 / Math.sqrt(reps)));
    // Sample SD of 400 draws is good to about ±3.5 % (1σ); allow 3σ.
    expect(Math.sqrt(variance) / 0.0632).toBeGreaterThan(0.89);
    expect(Math.sqrt(variance) / 0.0632).toBeLessThan(1.11);
  });

  it('is near 2(1 − φ) for an AR(1) series, far below 2 when φ = 0.8', () => {
    // Large-N limit d → 2(1 − ρ₁) with ρ₁ = φ for AR(1) (common practice).
    const d = durbinWatson(ar1(normalSource(7), 4000, 0.8));
    expect(d).toBeGreaterThan(0.32);
    expect(d).toBeLessThan(0.48);
  });

  it('is NaN for fewer than two points or all-zero residuals', () => {
    expect(durbinWatson([1])).toBeNaN();
    expect(durbinWatson([])).toBeNaN();
    expect(durbinWatson([0, 0, 0])).toBeNaN();
  });
});

describe('residualAutocorrelation', () => {
  it('normalises each lag by its own number of products', () => {
    // r = [1, 2, −1, 0]: Σr²/N = 6/4 = 1.5.
    // C(1) = (1·2 + 2·(−1) + (−1)·0)/3 / 1.5 = 0; C(2) = (1·(−1) + 2·0)/2 / 1.5 = −1/3 (hand-computed).
    const c = residualAutocorrelation([1, 2, -1, 0]);
    expect(c.length).toBe(3);
    expect(c[0]).toBeCloseTo(1, 15);
    expect(c[1]).toBeCloseTo(0, 15);
    expect(c[2]).toBeCloseTo(-1 / 3, 15);
    const c3 = residualAutocorrelation([1, 2, -1, 0], 3);
    // C(3) = (1·0)/1 / 1.5 = 0.
    expect(Array.from(c3.slice(0, 3))).toEqual(Array.from(c));
    expect(c3[3]).toBe(0);
  });

  it('scatters about 0 with variance 1/(N − j) for white noise and finds φ^j for AR(1)', () => {
    // White noise: C(j) ≈ N(0, 1/(N−j)) — REFERENCE-VALUES §11 (common practice).
    const n = 2000;
    const white = residualAutocorrelation(whiteNoise(normalSource(11), n), 20);
    const sumSq = Array.from(white.slice(1)).reduce((a, c, j) => a + c * c * (n - j - 1), 0);
    // Σ z_j² over 20 lags is χ²₂₀: its 0.1 % and 99.9 % points are 7.3 and 45.3 (handbook table, FROM MEMORY).
    expect(sumSq).toBeGreaterThan(7.3);
    expect(sumSq).toBeLessThan(45.3);
    // AR(1): ρ_j = φ^j (common practice).
    const c = residualAutocorrelation(ar1(normalSource(12), 20000, 0.6), 3);
    expect(c[1]).toBeCloseTo(0.6, 1);
    expect(c[2]).toBeCloseTo(0.36, 1);
  });

  // Reference: the definition, one plain pass per lag.
  const direct = (r: number[], lagMax: number): number[] => {
    const n = r.length;
    const meanSq = r.reduce((a, v) => a + v * v, 0) / n;
    return Array.from({ length: lagMax + 1 }, (_, j) => {
      if (j >= n || !(meanSq > 0)) return NaN;
      let s = 0;
      for (let i = 0; i + j < n; i++) s += r[i] * r[i + j];
      return s / (n - j) / meanSq;
    });
  };

  it('equals the definition bit for bit on short series and few lags (summed directly)', () => {
    const next = normalSource(13);
    for (const n of [1, 2, 3, 4, 5, 7, 8, 9, 31, 63, 64, 257]) {
      const r = Array.from({ length: n }, next);
      for (const lagMax of [0, 1, 2, 3, 4, 5, 6, 7, 15, n - 1, n, n + 3].filter((l) => n < 64 || l < 16)) {
        expect(Array.from(residualAutocorrelation(r, lagMax))).toEqual(direct(r, lagMax));
      }
    }
  });

  it('equals the definition to rounding on long series with many lags (by FFT)', () => {
    const next = normalSource(14);
    // Lengths and lag counts around the powers of two the zero-padding rounds n + maxLag up to
    // (100 + 28 = 128 exactly, 101 + 28 one above), odd and even n, lags up to n − 1 and beyond.
    for (const [n, lags] of [
      [64, [16, 17, 63, 64, 70]],
      [100, [27, 28, 29]],
      [101, [27, 28, 50]],
      [257, [16, 255, 256, 300]],
      [1000, [24, 256]],
      [3900, [256, 3899]],
    ] as const) {
      const r = Array.from({ length: n }, next);
      for (const lagMax of lags) {
        const got = residualAutocorrelation(r, lagMax);
        const want = direct(r, lagMax);
        expect(got.length).toBe(want.length);
        want.forEach((w, j) => {
          if (Number.isNaN(w)) expect(got[j]).toBeNaN();
          else expect(Math.abs(got[j] - w)).toBeLessThan(1e-12);
        });
        expect(got[0]).toBe(1);
      }
    }
  });

  it('defaults to floor(N/2) lags and gives NaN where a lag cannot be formed', () => {
    expect(residualAutocorrelation(new Float64Array(9).fill(1)).length).toBe(5);
    const c = residualAutocorrelation([1, -1], 4);
    expect(c[2]).toBeNaN();
    expect(residualAutocorrelation([0, 0, 0])[0]).toBeNaN();
  });
});

describe('runsTest', () => {
  it('reproduces a hand-worked example', () => {
    // Signs + + − − − + − + + (a zero inserted, which is skipped):
    //   runs: (++)(−−−)(+)(−)(++) = 5; n₊ = 5, n₋ = 4, n = 9.
    //   μ = 2·5·4/9 + 1 = 49/9 = 5.4444; σ² = 40·(40 − 9)/(81·8) = 1240/648 = 1.91358.
    //   z = (5 − 5.4444)/1.38332 = −0.32127; p = 2·Φ(−0.321) ≈ 2·0.3740 = 0.748 (normal table, FROM MEMORY).
    const r = runsTest([0.3, 1.2, -0.5, 0, -2, -0.1, 0.7, -0.4, 0.9, 0.2]);
    expect(r.runs).toBe(5);
    expect(r.z).toBeCloseTo((5 - 49 / 9) / Math.sqrt(1240 / 648), 12);
    expect(r.z).toBeCloseTo(-0.32127, 4);
    expect(r.pValue).toBeCloseTo(0.748, 2);
  });

  it('flags clumped signs with a large negative z and alternating signs with a large positive z', () => {
    const clumped = Array.from({ length: 60 }, (_, i) => (Math.floor(i / 10) % 2 === 0 ? 1 : -1));
    const rc = runsTest(clumped);
    expect(rc.runs).toBe(6);
    expect(rc.z).toBeLessThan(-5);
    expect(rc.pValue).toBeLessThan(1e-6);
    const alternating = Array.from({ length: 60 }, (_, i) => (i % 2 === 0 ? 1 : -1));
    const ra = runsTest(alternating);
    expect(ra.runs).toBe(60);
    expect(ra.z).toBeGreaterThan(5);
  });

  it('gives roughly uniform p-values on white noise', () => {
    // Under the null, P(p < α) ≈ α (the discrete run count makes it approximate).
    const next = normalSource(99);
    const reps = 600;
    const ps: number[] = [];
    for (let k = 0; k < reps; k++) ps.push(runsTest(whiteNoise(next, 200)).pValue);
    const below = (a: number): number => ps.filter((p) => p < a).length / reps;
    // Binomial SD at α = 0.05, n = 600 is 0.009; at α = 0.5 it is 0.02. Bounds are ≥ 3 SD wide.
    expect(below(0.05)).toBeGreaterThan(0.02);
    expect(below(0.05)).toBeLessThan(0.08);
    expect(below(0.5)).toBeGreaterThan(0.42);
    expect(below(0.5)).toBeLessThan(0.58);
  });

  it('returns NaN z and p when only one sign occurs', () => {
    const r = runsTest([1, 2, 0, 3]);
    expect(r.runs).toBe(1);
    expect(r.z).toBeNaN();
    expect(r.pValue).toBeNaN();
  });
});

describe('informationCriteria', () => {
  it('computes AIC, AICc and BIC by their definitions', () => {
    // −2lnL = 100, k = 3, n = 50: AIC = 106; AICc = 106 + 2·3·4/46 = 106.52174; BIC = 100 + 3 ln 50 = 111.73607
    // (definitions: Akaike 1974, Hurvich & Tsai 1989, Schwarz 1978; hand-computed).
    const ic = informationCriteria(100, 3, 50);
    expect(ic.aic).toBe(106);
    expect(ic.aicc).toBeCloseTo(106.52174, 5);
    expect(ic.bic).toBeCloseTo(111.73607, 5);
  });

  it('leaves AICc undefined when there are too few points', () => {
    expect(informationCriteria(10, 4, 5).aicc).toBeNaN();
    expect(informationCriteria(NaN, 4, 50).bic).toBeNaN();
  });
});

describe('likelihoodRatioPValue', () => {
  it('returns 5 % at the tabulated χ² critical values', () => {
    // 3.841 (1 dof), 5.991 (2 dof): upper 5 % points, handbook table (FROM MEMORY).
    expect(likelihoodRatioPValue(3.841458820694124, 1)).toBeCloseTo(0.05, 10);
    expect(likelihoodRatioPValue(5.991464547107979, 2)).toBeCloseTo(0.05, 10);
    // Two extra parameters: p = e^(−ΔD/2) exactly (common practice).
    expect(likelihoodRatioPValue(3.1, 2)).toBeCloseTo(Math.exp(-1.55), 14);
  });

  it('treats a worsened deviance as no improvement and rejects a non-positive parameter difference', () => {
    expect(likelihoodRatioPValue(-1e-9, 2)).toBe(1);
    expect(likelihoodRatioPValue(3, 0)).toBeNaN();
    expect(likelihoodRatioPValue(Infinity, 2)).toBeNaN();
  });
});
