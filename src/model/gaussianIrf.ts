import { erfc, erfcx } from './special.js';

/**
 * A Gaussian instrument response convolved with an exponential decay: the exponentially modified
 * Gaussian (Grushka, Anal. Chem. 44, 1733 (1972)), integrated exactly over each channel.
 *
 * With g(t) = N(t₀, σ²) of unit area and h(t) = e^{−t/τ}/τ, u = t − t₀ and z = (σ/τ − u/σ)/√2,
 *   y(u) = (1/2τ)·exp(σ²/2τ² − u/τ)·erfc(z)          (used for z < 0, where erfc ∈ (1, 2))
 *        = (1/2τ)·exp(−u²/2σ²)·erfcx(z)               (used for z ≥ 0; no ∞·0 for τ ≪ σ or u ≪ 0)
 * and the integral over a channel [a, b] (in u) follows from y′ = (g − y)/τ:
 *   ∫ₐᵇ y du = [Φ(b/σ) − Φ(a/σ)] + τ·[y(a) − y(b)].
 * With a repetition period T each earlier pulse adds its complete tail, giving the extra term
 * (1/τ)·exp(σ²/2τ² − u/τ)·r/(1 − r), r = e^{−T/τ}.
 */

const SQRT1_2 = Math.SQRT1_2;

/** EMG density y(u) for an IRF of standard deviation σ and lifetime τ (unit-area decay), switched form. */
export function emgDensity(u: number, sigmaNs: number, tauNs: number): number {
  const z = (sigmaNs / tauNs - u / sigmaNs) * SQRT1_2;
  if (z >= 0) return (0.5 / tauNs) * Math.exp((-u * u) / (2 * sigmaNs * sigmaNs)) * erfcx(z);
  return (0.5 / tauNs) * Math.exp((sigmaNs * sigmaNs) / (2 * tauNs * tauNs) - u / tauNs) * erfc(z);
}

/** Φ(b/σ) − Φ(a/σ) for a < b, computed from the tail nearer to each so that late channels keep their digits. */
export function gaussianChannelIntegral(a: number, b: number, sigmaNs: number): number {
  const s = SQRT1_2 / sigmaNs;
  if (a >= 0) return 0.5 * (erfc(a * s) - erfc(b * s));
  if (b <= 0) return 0.5 * (erfc(-b * s) - erfc(-a * s));
  return 1 - 0.5 * (erfc(-a * s) + erfc(b * s));
}

/**
 * Basis curve for a Gaussian IRF (centre `centerNs`, standard deviation `sigmaNs`) and lifetime τ on
 * channels whose left edges are `edgeNs[i]` and width Δ: written into `out` in counts per channel for
 * unit amplitude of the peak-normalised decay e^{−t/τ}, i.e. τ·∫y/Δ over each channel.
 */
export function emgBasis(
  n: number,
  firstEdgeNs: number,
  binWidthNs: number,
  centerNs: number,
  sigmaNs: number,
  tauNs: number,
  periodNs: number | null,
  out: Float64Array,
): void {
  const periodic = periodNs !== null && periodNs > 0;
  const oneMinusR = periodic ? -Math.expm1(-(periodNs as number) / tauNs) : 1;
  const c0 = (sigmaNs * sigmaNs) / (2 * tauNs * tauNs) - (periodic ? (periodNs as number) / tauNs : 0);
  let a = firstEdgeNs - centerNs;
  let ya = emgDensity(a, sigmaNs, tauNs);
  let ea = periodic ? Math.exp(c0 - a / tauNs) : 0;
  for (let i = 0; i < n; i++) {
    const b = firstEdgeNs + (i + 1) * binWidthNs - centerNs;
    const yb = emgDensity(b, sigmaNs, tauNs);
    let v = gaussianChannelIntegral(a, b, sigmaNs) + tauNs * (ya - yb);
    if (periodic) {
      const eb = Math.exp(c0 - b / tauNs);
      v += (ea - eb) / oneMinusR;
      ea = eb;
    }
    out[i] = (tauNs * v) / binWidthNs;
    a = b;
    ya = yb;
  }
}

/** Gaussian IRF fractions per channel (unit area over the whole line; a window holds nearly all of it). */
export function gaussianIrfFractions(
  n: number,
  firstEdgeNs: number,
  binWidthNs: number,
  centerNs: number,
  sigmaNs: number,
  out: Float64Array,
): void {
  for (let i = 0; i < n; i++) {
    const a = firstEdgeNs + i * binWidthNs - centerNs;
    out[i] = gaussianChannelIntegral(a, a + binWidthNs, sigmaNs);
  }
}

/** FWHM of a Gaussian per unit standard deviation, 2√(2 ln 2). */
export const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);
