import { laggedProducts } from './fft.js';
/**
 * Goodness-of-fit diagnostics on weighted residuals: pure functions on arrays that return NaN where a
 * statistic is undefined (too few points, all residuals zero) instead of throwing.
 */

import { chi2Sf, normalSf } from './distributions.js';

/**
 * Durbin–Watson statistic d = Σ(r_i − r_{i−1})² / Σ r_i² (Durbin & Watson, Biometrika 37, 409 (1950)).
 * About 2 for uncorrelated residuals; well below 2 means neighbouring residuals share a sign, the mark of
 * a missing component or a misplaced IRF.
 */
export function durbinWatson(r: ArrayLike<number>): number {
  const n = r.length;
  if (n < 2) return NaN;
  let num = 0;
  let den = r[0] * r[0];
  for (let i = 1; i < n; i++) {
    const diff = r[i] - r[i - 1];
    num += diff * diff;
    den += r[i] * r[i];
  }
  return den > 0 ? num / den : NaN;
}

/**
 * Residual autocorrelation C(j) = [Σ_{i≤N−j} r_i r_{i+j}/(N−j)] / [Σ r_i²/N] for j = 0 … maxLag.
 * Each lag is averaged over its own number of products, so C(0) = 1 and for white noise C(j) scatters
 * about 0 with variance ≈ 1/(N−j). Default maxLag: floor(N/2), beyond which too few pairs remain.
 * Lags that cannot be formed (or an all-zero series) give NaN.
 */
export function residualAutocorrelation(r: ArrayLike<number>, maxLag?: number): Float64Array {
  const n = r.length;
  const lagMax = maxLag === undefined ? Math.floor(n / 2) : Math.floor(maxLag);
  if (!(lagMax >= 0)) return new Float64Array(0);
  const out = new Float64Array(lagMax + 1);
  let sumSq = 0;
  for (let i = 0; i < n; i++) sumSq += r[i] * r[i];
  const meanSq = sumSq / n;
  // Sums of lagged products: by FFT for long series with many lags (every fit's residuals, 256
  // lags × ~4000 channels, ~4× faster than the direct sums), directly otherwise.
  const formed = Math.min(lagMax, n - 1);
  let j = 0;
  if (meanSq > 0 && n >= 64 && formed >= 16) {
    const sums = new Float64Array(formed + 1);
    laggedProducts(r, formed, sums);
    out[0] = 1;
    for (j = 1; j <= formed; j++) out[j] = sums[j] / (n - j) / meanSq;
  }
  for (; j <= lagMax; j++) {
    if (j >= n || !(meanSq > 0)) {
      out[j] = NaN;
      continue;
    }
    let s = 0;
    for (let i = 0; i + j < n; i++) s += r[i] * r[i + j];
    out[j] = s / (n - j) / meanSq;
  }
  return out;
}

export interface RunsTestResult {
  /** Number of runs of equal sign (zeros skipped). */
  runs: number;
  /** (runs − expected)/SD; negative means too few runs (residuals clump: positive correlation). */
  z: number;
  /** Two-sided p-value from the normal approximation. */
  pValue: number;
}

/**
 * Wald–Wolfowitz runs test on the signs of the residuals (Wald & Wolfowitz, Ann. Math. Stat. 11, 147
 * (1940)). With n₊ positive and n₋ negative signs, n = n₊ + n₋, the number of runs R has
 * mean μ = 2n₊n₋/n + 1 and variance σ² = 2n₊n₋(2n₊n₋ − n)/(n²(n − 1)); z = (R − μ)/σ, two-sided p from
 * the normal approximation (good once n₊ and n₋ are each above ~10). Zero residuals carry no sign and
 * are skipped. z and pValue are NaN when only one sign occurs.
 */
export function runsTest(r: ArrayLike<number>): RunsTestResult {
  let nPos = 0;
  let nNeg = 0;
  let runs = 0;
  let last = 0;
  for (let i = 0; i < r.length; i++) {
    const s = r[i] > 0 ? 1 : r[i] < 0 ? -1 : 0;
    if (s === 0) continue;
    if (s > 0) nPos++;
    else nNeg++;
    if (s !== last) runs++;
    last = s;
  }
  const n = nPos + nNeg;
  if (nPos === 0 || nNeg === 0) return { runs, z: NaN, pValue: NaN };
  const twoProd = 2 * nPos * nNeg;
  const mean = twoProd / n + 1;
  const variance = (twoProd * (twoProd - n)) / (n * n * (n - 1));
  if (!(variance > 0)) return { runs, z: NaN, pValue: NaN };
  const z = (runs - mean) / Math.sqrt(variance);
  return { runs, z, pValue: Math.min(1, 2 * normalSf(Math.abs(z))) };
}

export interface InformationCriteria {
  /** Akaike: −2 ln L + 2k. */
  aic: number;
  /** Small-sample corrected Akaike: AIC + 2k(k+1)/(n − k − 1); NaN when n ≤ k + 1. */
  aicc: number;
  /** Schwarz (Bayesian): −2 ln L + k ln n. */
  bic: number;
}

/**
 * Information criteria from −2 ln L (Akaike 1974; Hurvich & Tsai 1989; Schwarz 1978). Only differences
 * between models fitted to the same data mean anything, so the Poisson deviance, which differs from
 * −2 ln L by a model-independent constant, may be passed in its place.
 */
export function informationCriteria(
  minus2LogL: number,
  nParams: number,
  nPoints: number,
): InformationCriteria {
  const k = nParams;
  const n = nPoints;
  if (!Number.isFinite(minus2LogL) || !(k >= 0) || !(n > 0)) return { aic: NaN, aicc: NaN, bic: NaN };
  const aic = minus2LogL + 2 * k;
  const aicc = n - k - 1 > 0 ? aic + (2 * k * (k + 1)) / (n - k - 1) : NaN;
  const bic = minus2LogL + k * Math.log(n);
  return { aic, aicc, bic };
}

/**
 * p-value of a likelihood-ratio test: the probability that nested models differing by deltaParams free
 * parameters lower the deviance (−2 ln L) by at least deltaDeviance by chance, P(χ²_Δp ≥ ΔD) (Wilks
 * 1938). A slightly negative ΔD (the larger model's optimiser stopped a hair short) counts as no
 * improvement, p = 1. NaN when deltaParams ≤ 0 or either input is not finite.
 */
export function likelihoodRatioPValue(deltaDeviance: number, deltaParams: number): number {
  if (!Number.isFinite(deltaDeviance) || !(deltaParams > 0) || !Number.isFinite(deltaParams)) return NaN;
  return chi2Sf(Math.max(deltaDeviance, 0), deltaParams);
}
