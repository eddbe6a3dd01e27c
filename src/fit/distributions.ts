/**
 * Distribution functions the fit statistics need: the regularized incomplete gamma function and, built
 * on it, the χ² and normal distributions. Kernels return NaN outside their domain and never throw.
 *
 * The incomplete gamma function is evaluated by its power series below x < a + 1 and by its continued
 * fraction (modified Lentz) above, the standard split that keeps both converging quickly
 * (Abramowitz & Stegun 6.5.29 and 6.5.31). The normal distribution rests on the model layer's erfc.
 */

import { normalCdf } from '../model/special.js';

export { normalCdf };

const EPS = 2.220446049250313e-16;
const TINY = 1e-300;
const MAX_TERMS = 10_000;

/** Lanczos (g = 7, n = 9) coefficients; relative error of ln Γ below ~1e-15 for x > 0. */
const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/** ln Γ(x) for x > 0 (Lanczos approximation); NaN for x ≤ 0. */
export function lnGamma(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) return x === Infinity ? Infinity : NaN;
  if (x < 0.5) {
    // Reflection keeps the approximation in its accurate half-plane.
    return Math.log(Math.PI / Math.sin(Math.PI * x)) - lnGamma(1 - x);
  }
  const z = x - 1;
  let sum = LANCZOS[0];
  for (let i = 1; i < LANCZOS.length; i++) sum += LANCZOS[i] / (z + i);
  const t = z + 7.5;
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(sum);
}

/** e^(−x) x^a / Γ(a), computed in logs so that large a and x do not overflow. */
function gammaPrefactor(a: number, x: number): number {
  return Math.exp(-x + a * Math.log(x) - lnGamma(a));
}

/** P(a, x) by its series Σ xⁿ/(a(a+1)…(a+n)); converges fast for x < a + 1. */
function lowerBySeries(a: number, x: number): number {
  let term = 1 / a;
  let sum = term;
  for (let n = 1; n < MAX_TERMS; n++) {
    term *= x / (a + n);
    sum += term;
    if (Math.abs(term) < Math.abs(sum) * EPS) break;
  }
  return sum * gammaPrefactor(a, x);
}

/** Q(a, x) by its continued fraction (modified Lentz); converges fast for x ≥ a + 1. */
function upperByFraction(a: number, x: number): number {
  let b = x + 1 - a;
  let c = 1 / TINY;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < MAX_TERMS; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < TINY) d = TINY;
    c = b + an / c;
    if (Math.abs(c) < TINY) c = TINY;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < EPS) break;
  }
  return h * gammaPrefactor(a, x);
}

/** Regularized lower incomplete gamma P(a, x) = γ(a, x)/Γ(a); a > 0, x ≥ 0. */
export function gammaP(a: number, x: number): number {
  if (!(a > 0) || !(x >= 0) || Number.isNaN(a) || Number.isNaN(x)) return NaN;
  if (x === 0) return 0;
  if (x === Infinity) return 1;
  return x < a + 1 ? lowerBySeries(a, x) : 1 - upperByFraction(a, x);
}

/** Regularized upper incomplete gamma Q(a, x) = 1 − P(a, x), accurate in the far tail; a > 0, x ≥ 0. */
export function gammaQ(a: number, x: number): number {
  if (!(a > 0) || !(x >= 0) || Number.isNaN(a) || Number.isNaN(x)) return NaN;
  if (x === 0) return 1;
  if (x === Infinity) return 0;
  return x < a + 1 ? 1 - lowerBySeries(a, x) : upperByFraction(a, x);
}

/** Cumulative distribution of χ² with k degrees of freedom (k > 0, need not be an integer). */
export function chi2Cdf(x: number, k: number): number {
  if (!(k > 0)) return NaN;
  if (x <= 0) return Number.isNaN(x) ? NaN : 0;
  return gammaP(k / 2, x / 2);
}

/** Survival function (upper-tail probability) of χ² with k degrees of freedom. */
export function chi2Sf(x: number, k: number): number {
  if (!(k > 0)) return NaN;
  if (x <= 0) return Number.isNaN(x) ? NaN : 1;
  return gammaQ(k / 2, x / 2);
}

/**
 * The x with chi2Cdf(x, k) = p, 0 ≤ p ≤ 1. Starts from the Wilson–Hilferty cube-root approximation
 * and polishes by safeguarded Newton steps on the lower (or, in the far upper tail, upper) probability.
 */
export function chi2Quantile(p: number, k: number): number {
  if (!(k > 0) || !(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  const a = k / 2;
  // Wilson & Hilferty (1931): (χ²/k)^(1/3) is nearly normal with mean 1 − 2/(9k), variance 2/(9k).
  const v = 2 / (9 * k);
  let x = k * Math.pow(Math.max(1 - v + normalQuantile(p) * Math.sqrt(v), 0.01), 3);
  if (!(x > 0) || !Number.isFinite(x)) x = k;
  // Work on whichever tail is small so that precision is not lost to 1 − p.
  const useUpper = p > 0.5;
  const target = useUpper ? 1 - p : p;
  let lo = 0;
  let hi = Infinity;
  for (let iter = 0; iter < 200; iter++) {
    const f = (useUpper ? gammaQ(a, x / 2) : gammaP(a, x / 2)) - target;
    // The lower tail grows with x, the upper one falls: keep a bracket for bisection fall-back.
    if (useUpper ? f > 0 : f < 0) lo = x;
    else hi = x;
    const density = (0.5 * gammaPrefactor(a, x / 2)) / (x / 2);
    let next = x - (useUpper ? -f : f) / density;
    if (!(next > lo && next < hi) || !Number.isFinite(next)) {
      next = Number.isFinite(hi) ? 0.5 * (lo + hi) : 2 * x;
    }
    if (Math.abs(next - x) <= 4 * EPS * x) return next;
    x = next;
  }
  return x;
}

/** Standard normal survival function 1 − Φ(z), accurate in the upper tail. */
export function normalSf(z: number): number {
  return normalCdf(-z);
}

// Acklam's rational approximation to the normal quantile (P. J. Acklam, 2003; relative error
// < 1.15e-9), followed by one Halley step against normalCdf that brings it to full double precision.
const ACKLAM_A = [
  -3.969683028665376e1, 2.209460984245205e2, -2.759285104469687e2, 1.38357751867269e2, -3.066479806614716e1,
  2.506628277459239,
];
const ACKLAM_B = [
  -5.447609879822406e1, 1.615858368580409e2, -1.556989798598866e2, 6.680131188771972e1, -1.328068155288572e1,
];
const ACKLAM_C = [
  -7.784894002430293e-3, -3.223964580411365e-1, -2.400758277161838, -2.549732539343734, 4.374664141464968,
  2.938163982698783,
];
const ACKLAM_D = [7.784695709041462e-3, 3.224671290700398e-1, 2.445134137142996, 3.754408661907416];
const ACKLAM_P_LOW = 0.02425;

/** The z with normalCdf(z) = p (Acklam's algorithm plus one Halley refinement); ±Infinity at 0 and 1. */
export function normalQuantile(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  const [a, b, c, d] = [ACKLAM_A, ACKLAM_B, ACKLAM_C, ACKLAM_D];
  let z: number;
  if (p < ACKLAM_P_LOW || p > 1 - ACKLAM_P_LOW) {
    const q = Math.sqrt(-2 * Math.log(p < 0.5 ? p : 1 - p));
    const tail =
      (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
      ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
    z = p < 0.5 ? tail : -tail;
  } else {
    const q = p - 0.5;
    const r = q * q;
    z =
      ((((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q) /
      (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
  }
  // Halley step; the error is taken from the smaller tail to avoid cancellation.
  const e = p < 0.5 ? normalCdf(z) - p : 1 - p - normalSf(z);
  const u = e * Math.sqrt(2 * Math.PI) * Math.exp((z * z) / 2);
  return z - u / (1 + (z * u) / 2);
}
