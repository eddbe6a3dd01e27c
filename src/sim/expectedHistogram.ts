/**
 * The expected (mean) TCSPC histogram of the simulator's model, by dense numerical integration.
 *
 * A detected photon arrives at T = J + o + D, folded modulo the repetition period when there is one:
 * J is the instrument jitter (a density: Gaussian, or a measured IRF histogram read as uniform within
 * each bin), o a fixed offset (the colour shift for fluorescence, 0 for scatter) and D the delay after
 * excitation, whose survival function G(x) = P(D ≥ x) is a sum of exponential or Erlang-2 terms (an
 * exponential decay, or an exponential decay followed by the exponential tail of the IRF).
 *
 * For channel [a, b) the probability is ∫ g(j) Σₘ [G(a + mP − j − o) − G(b + mP − j − o)] dj. The
 * inner sum over earlier pulses m has an exact geometric closed form; the outer integral over the
 * jitter is done by 5-point Gauss–Legendre on pieces cut at every kink of the integrand (the points
 * where a channel edge meets the jitter) and at most half a width or half a lifetime long, so every
 * piece is smooth and the quadrature is accurate to rounding. This deliberately shares nothing with
 * the fitter's analytic reconvolution: it is the simulator's own statement of what it draws.
 */

/** Survival term of the delay: coef·e^(−x/τ) ('exp') or coef·(1 + x/τ)e^(−x/τ) ('erlang2'), x > 0. */
export interface DelayTerm {
  coef: number;
  tauNs: number;
  kind: 'exp' | 'erlang2';
}

/** One way a photon can arrive: its share of photons, its offset and its delay distribution. */
export interface ArrivalBranch {
  /** Share of the photons taking this branch (all branches together: 1). */
  weight: number;
  /** Fixed offset added to the jitter, ns. */
  offsetNs: number;
  /** Survival terms of the delay; an empty list is a delay of exactly 0. */
  terms: DelayTerm[];
}

export type JitterDensity =
  | { kind: 'gaussian'; centerNs: number; sigmaNs: number }
  /** Piecewise-uniform density: bin k covers [startNs + k·binWidthNs, startNs + (k+1)·binWidthNs). */
  | { kind: 'binned'; startNs: number; binWidthNs: number; weights: Float64Array };

export interface ArrivalModel {
  channels: number;
  binWidthNs: number;
  /** Repetition period, ns, or null for a single pulse (photons after the window are lost). */
  periodNs: number | null;
  jitter: JitterDensity;
  branches: ArrivalBranch[];
}

const GL_X = [-0.906179845938664, -0.5384693101056831, 0, 0.5384693101056831, 0.906179845938664];
const GL_W = [
  0.2369268850561891, 0.4786286704993665, 0.5688888888888889, 0.4786286704993665, 0.2369268850561891,
];

/** How far into the Gaussian's tails to integrate, in σ; the mass beyond is below 1e-22. */
const GAUSS_REACH = 10;

/**
 * Probability per channel that one photon lands there (the sum is below 1 when photons fall outside the
 * window). Multiply by the number of photons and add the background to get the expected counts.
 */
export function expectedHistogram(model: ArrivalModel): Float64Array {
  const { channels } = model;
  const out = new Float64Array(channels);
  const survival = new Float64Array(channels + 1);
  const pieces = jitterPieces(model.jitter);
  for (const branch of mergeBranches(model.branches)) {
    let hMax = Infinity;
    for (const t of branch.terms) hMax = Math.min(hMax, t.tauNs / 2);
    if (model.jitter.kind === 'gaussian') hMax = Math.min(hMax, model.jitter.sigmaNs / 2);
    const filler = survivalFiller(branch, model);
    for (const piece of pieces) {
      const cuts = kinkPoints(piece.lo, piece.hi, branch.offsetNs, model);
      let left = piece.lo;
      for (let c = 0; c <= cuts.length; c++) {
        const right = c < cuts.length ? cuts[c] : piece.hi;
        const nSub = Math.max(1, Math.ceil((right - left) / hMax));
        const h = (right - left) / nSub;
        for (let s = 0; s < nSub; s++) {
          const a = left + s * h;
          const mid = a + h / 2;
          for (let q = 0; q < 5; q++) {
            const j = mid + (h / 2) * GL_X[q];
            const w = piece.density(j) * (h / 2) * GL_W[q];
            if (w === 0) continue;
            filler(j, survival);
            for (let k = 0; k < channels; k++) out[k] += w * (survival[k] - survival[k + 1]);
          }
        }
        left = right;
      }
    }
  }
  // Quadrature rounding can leave −1e-17 where the truth is 0.
  for (let k = 0; k < channels; k++) if (out[k] < 0) out[k] = 0;
  return out;
}

/**
 * Branches with the same offset share their kinks and their pulse counting, and S is linear in them:
 * one pass with the weights folded into the term coefficients does the work of all of them.
 */
function mergeBranches(branches: ArrivalBranch[]): ArrivalBranch[] {
  const byOffset = new Map<number, ArrivalBranch>();
  for (const b of branches) {
    if (b.weight === 0) continue;
    const merged = byOffset.get(b.offsetNs) ?? { weight: 0, offsetNs: b.offsetNs, terms: [] };
    merged.weight += b.weight;
    for (const t of b.terms) merged.terms.push({ ...t, coef: t.coef * b.weight });
    byOffset.set(b.offsetNs, merged);
  }
  return [...byOffset.values()];
}

interface Piece {
  lo: number;
  hi: number;
  density: (j: number) => number;
}

function jitterPieces(jitter: JitterDensity): Piece[] {
  if (jitter.kind === 'gaussian') {
    const { centerNs, sigmaNs } = jitter;
    const norm = 1 / (sigmaNs * Math.sqrt(2 * Math.PI));
    return [
      {
        lo: centerNs - GAUSS_REACH * sigmaNs,
        hi: centerNs + GAUSS_REACH * sigmaNs,
        density: (j) => {
          const z = (j - centerNs) / sigmaNs;
          return norm * Math.exp(-0.5 * z * z);
        },
      },
    ];
  }
  const { startNs, binWidthNs, weights } = jitter;
  let total = 0;
  for (const w of weights) total += w > 0 ? w : 0;
  const pieces: Piece[] = [];
  for (let k = 0; k < weights.length; k++) {
    if (!(weights[k] > 0)) continue;
    const d = weights[k] / total / binWidthNs;
    pieces.push({ lo: startNs + k * binWidthNs, hi: startNs + (k + 1) * binWidthNs, density: () => d });
  }
  return pieces;
}

/** Jitter values in (lo, hi), ascending, where j + offset meets a channel edge of some pulse. */
function kinkPoints(lo: number, hi: number, offsetNs: number, model: ArrivalModel): number[] {
  const { channels, binWidthNs, periodNs } = model;
  const window = channels * binWidthNs;
  const pts: number[] = [];
  const mLo = periodNs ? Math.floor((lo + offsetNs - window) / periodNs) : 0;
  const mHi = periodNs ? Math.ceil((hi + offsetNs) / periodNs) : 0;
  for (let m = mLo; m <= mHi; m++) {
    const base = (periodNs ?? 0) * m - offsetNs;
    const kFrom = Math.max(0, Math.ceil((lo - base) / binWidthNs));
    const kTo = Math.min(channels, Math.floor((hi - base) / binWidthNs));
    for (let k = kFrom; k <= kTo; k++) {
      const p = base + k * binWidthNs;
      if (p > lo && p < hi) pts.push(p);
    }
  }
  pts.sort((x, y) => x - y);
  return pts;
}

/**
 * Returns a function that fills S(e_k), k = 0 … channels, for a jitter value j, such that the
 * branch's share of channel k is S(e_k) − S(e_{k+1}). Single pulse: S(e) = G(e − j − o). Periodic:
 * S(e) = w·m₁ + Σ_{m ≥ m₁} G(e + mP − j − o), m₁ the first pulse index with a positive argument; the
 * integer counts the pulses whose argument is ≤ 0 relative to a fixed origin, and only differences of
 * S are used. G carries the branch weight w: G = w for a non-positive argument, and the terms'
 * coefficients include w (see mergeBranches).
 */
function survivalFiller(branch: ArrivalBranch, model: ArrivalModel): (j: number, out: Float64Array) => void {
  const { channels, binWidthNs, periodNs } = model;
  const terms = branch.terms;
  const weight = branch.weight;
  const nT = terms.length;
  const invTau = terms.map((t) => 1 / t.tauNs);
  const step = terms.map((t) => Math.exp(-binWidthNs / t.tauNs));
  // Geometric sums over earlier pulses: Σ r^m = 1/(1 − r), Σ m r^m = r/(1 − r)².
  const oneMinusR = terms.map((t) => (periodNs ? -Math.expm1(-periodNs / t.tauNs) : 1));
  const rOver = terms.map((t, i) =>
    periodNs ? Math.exp(-periodNs / t.tauNs) / (oneMinusR[i] * oneMinusR[i]) : 0,
  );
  const e = new Float64Array(nT);

  return (j, out) => {
    const jp = j + branch.offsetNs;
    let prevM = NaN;
    let prevX = NaN;
    for (let k = 0; k <= channels; k++) {
      const edge = k * binWidthNs;
      let m = 0;
      let x = edge - jp;
      if (periodNs) {
        m = Math.floor((jp - edge) / periodNs) + 1;
        x = edge + m * periodNs - jp;
        if (x <= 0) {
          m += 1;
          x += periodNs;
        }
      } else if (x <= 0) {
        out[k] = weight;
        continue;
      }
      // Successive edges in the same fold differ by one bin: update e^(−x/τ) by a factor.
      const continues = m === prevM && x > prevX;
      let s = periodNs ? weight * m : 0;
      for (let t = 0; t < nT; t++) {
        e[t] = continues ? e[t] * step[t] : Math.exp(-x * invTau[t]);
        const term = terms[t];
        const xr = x * invTau[t];
        if (!periodNs) {
          s += term.kind === 'exp' ? term.coef * e[t] : term.coef * (1 + xr) * e[t];
        } else if (term.kind === 'exp') {
          s += (term.coef * e[t]) / oneMinusR[t];
        } else {
          s += term.coef * e[t] * ((1 + xr) / oneMinusR[t] + periodNs * invTau[t] * rOver[t]);
        }
      }
      out[k] = s;
      prevM = m;
      prevX = x;
    }
  };
}
