/**
 * A small Levenberg–Marquardt minimiser for sums of per-point losses Σ ρ(yᵢ, mᵢ(p)) with an analytic
 * Jacobian: least squares with fixed weights, Poisson deviance (Fisher scoring) and Pearson χ² with
 * model weights. Used by every decay fit and by the NIST StRD checks.
 *
 * Why not ml-levenberg-marquardt for the decay fits (measured with test/bench/fit.ts and the NIST test,
 * on a shared 2-core machine): it differentiates by finite differences and allocates per iteration. On
 * the benchmark's 2-exponential, 4096-channel reconvolution (its own Jacobian over our reconvolved
 * curve, Neyman weights) it took 0.25–1 s per fit and stopped after 200 iterations 15–40 % away from
 * the true lifetimes, where a whole fit with this minimiser (start values, 3 iterations, errors and
 * diagnostics) takes about 1.2 ms. On NIST
 * Lanczos3 it reached 0.9 and 1.8 correct digits from the two starts after 2000 iterations; this one
 * reaches the certified values to ≥ 6 digits. It also minimises only weighted least squares (no
 * Poisson likelihood) and reports neither covariance nor a stop reason. It stays in the NIST test as an
 * outside reference point.
 *
 * Algorithm: Marquardt's damping of the diagonal (scaled by the running maximum of the Hessian
 * diagonal, as MINPACK does), Cholesky solves of the P×P normal equations, simple bounds by projection
 * with parameters on an active bound taken out of the step, and a convergence test on the actual and
 * predicted reduction of the objective (relative `ftol` plus absolute `atol`) or the relative step size
 * (`xtol`). The Hessian returned is the Gauss–Newton/Fisher one of the objective; for least squares
 * and for the Poisson deviance (−2 ln L) the covariance of the estimate is 2·H⁻¹.
 */
import { weightedGram } from './weightedGram.js';

export type LossKind = 'leastSquares' | 'poisson' | 'pearson';

export interface LmProblem {
  nParams: number;
  nPoints: number;
  /**
   * Fills `model` (length nPoints) and, when `jac` is given, jac[k·nPoints + i] = ∂mᵢ/∂p_k.
   * Returns false when the model cannot be evaluated at p (non-finite values).
   */
  evaluate(p: Float64Array, model: Float64Array, jac: Float64Array | null): boolean;
  /** Observed values yᵢ (counts for 'poisson' and 'pearson'). */
  data: Float64Array;
  /** 'leastSquares' only: weights wᵢ = 1/σᵢ². Default: all 1. */
  weights?: Float64Array;
  loss: LossKind;
  lower?: Float64Array;
  upper?: Float64Array;
  /**
   * Index of a parameter whose Jacobian row is 1 at every point (a constant offset), or −1 / absent.
   * The Hessian then takes that row's entries from sums instead of dot products; the row itself
   * must still be filled by `evaluate`. Default: none.
   */
  onesColumn?: number;
}

export interface LmOptions {
  /** Iteration limit (accepted plus rejected steps). Default: 200. */
  maxIterations?: number;
  /** Relative reduction of the objective below which the fit has converged. Default: 1e-10. */
  ftol?: number;
  /** Absolute reduction of the objective below which the fit has converged. Default: 0. */
  atol?: number;
  /** Relative step size below which the fit has converged. Default: 1e-10. */
  xtol?: number;
  /** Initial damping λ relative to the Hessian diagonal. Default: 0.1 (from good starts, fewer rejected steps than 1e-3). */
  lambda0?: number;
  /**
   * Reusable arrays for the models and Jacobians (the largest allocations of a fit), from
   * `lmWorkspace`. When given, the result's `model` and `jacobian` live in it and are valid only until
   * the next call with the same workspace. Default: fresh arrays per call.
   */
  workspace?: LmWorkspace;
}

/** Work arrays that one problem size can reuse across calls (see `LmOptions.workspace`). */
export interface LmWorkspace {
  nParams: number;
  nPoints: number;
  arrays: Float64Array[];
}

/** A workspace for problems of `nParams` parameters and `nPoints` points. */
export function lmWorkspace(nParams: number, nPoints: number): LmWorkspace {
  const sizes = [nPoints, nPoints, nParams * nPoints, nParams * nPoints, nPoints, nPoints, nPoints, nPoints];
  return { nParams, nPoints, arrays: sizes.map((len) => new Float64Array(len)) };
}

export type LmStop = 'converged' | 'maxIterations' | 'nonFinite';

export interface LmResult {
  params: Float64Array;
  objective: number;
  /** Model at the optimum (length nPoints). */
  model: Float64Array;
  /** Jacobian at the optimum, row k = ∂m/∂p_k. */
  jacobian: Float64Array;
  /** Each point's loss ρ(yᵢ, mᵢ) at the optimum (they sum to `objective`). */
  pointLoss: Float64Array;
  /** Gauss–Newton (Fisher) Hessian of the objective at the optimum, P×P row-major. */
  hessian: Float64Array;
  iterations: number;
  stop: LmStop;
  /** Parameters that ended on a bound. */
  atBound: boolean[];
}

/** Lower limit on the model value in Poisson/Pearson curvature weights, so empty early channels cannot blow them up. */
const MODEL_FLOOR = 1e-10;

/** Objective Σρ for the loss; Infinity when the model is impossible (negative, or zero under a count). */
export function lossValue(
  loss: LossKind,
  data: Float64Array,
  model: Float64Array,
  weights: Float64Array | undefined,
  terms: Float64Array | null = null,
): number {
  let sum = 0;
  const n = data.length;
  // `terms`, when given, receives every point's ρ (valid only when the sum is finite).
  const t = terms ?? lossScratch(n);
  if (loss === 'leastSquares') {
    for (let i = 0; i < n; i++) {
      const r = data[i] - model[i];
      const v = (weights ? weights[i] : 1) * r * r;
      t[i] = v;
      sum += v;
    }
    return sum;
  }
  if (loss === 'poisson') {
    for (let i = 0; i < n; i++) {
      const m = model[i];
      const y = data[i];
      if (!(m >= 0)) return Infinity;
      let v: number;
      if (y > 0) {
        if (m === 0) return Infinity;
        v = 2 * (m - y + y * Math.log(y / m));
      } else v = 2 * m;
      t[i] = v;
      sum += v;
    }
    return sum;
  }
  for (let i = 0; i < n; i++) {
    const m = model[i];
    const y = data[i];
    if (!(m >= 0)) return Infinity;
    if (m === 0) {
      if (y > 0) return Infinity;
      t[i] = 0;
      continue;
    }
    const r = y - m;
    const v = (r * r) / m;
    t[i] = v;
    sum += v;
  }
  return sum;
}

let lossTerms = new Float64Array(0);
/** Where `lossValue` writes the terms nobody asked for (one store per point costs less than a branch). */
function lossScratch(n: number): Float64Array {
  if (lossTerms.length < n) lossTerms = new Float64Array(n);
  return lossTerms;
}

/** Accumulates gradient g = Σρ′∇m and Gauss–Newton Hessian H = Σh∇m∇mᵀ. */
function gradientAndHessian(
  prob: LmProblem,
  model: Float64Array,
  jac: Float64Array,
  g: Float64Array,
  H: Float64Array,
  dRho: Float64Array,
  hW: Float64Array,
): void {
  const { nParams: P, nPoints: N, data, loss, weights } = prob;
  // Per-point first derivative of ρ and curvature weight, one tight loop per loss.
  if (loss === 'leastSquares') {
    for (let i = 0; i < N; i++) {
      const w = weights ? weights[i] : 1;
      dRho[i] = -2 * w * (data[i] - model[i]);
      hW[i] = 2 * w;
    }
  } else if (loss === 'poisson') {
    for (let i = 0; i < N; i++) {
      const m = model[i];
      const inv = 1 / (m > MODEL_FLOOR ? m : MODEL_FLOOR);
      dRho[i] = 2 - 2 * data[i] * inv;
      hW[i] = 2 * inv;
    }
  } else {
    for (let i = 0; i < N; i++) {
      const m = model[i];
      const inv = 1 / (m > MODEL_FLOOR ? m : MODEL_FLOOR);
      const y = data[i];
      dRho[i] = 1 - y * y * inv * inv;
      hW[i] = 2 * inv;
    }
  }
  weightedGram(jac, P, N, hW, dRho, H, g, prob.onesColumn ?? -1);
}

/**
 * Cholesky solve of A x = b for a symmetric P×P matrix (row-major). Works in `L` (scratch, P×P).
 * Returns false when A is not positive definite.
 */
export function choleskySolve(
  A: Float64Array,
  b: Float64Array,
  x: Float64Array,
  L: Float64Array,
  P: number,
): boolean {
  for (let i = 0; i < P; i++) {
    for (let j = 0; j <= i; j++) {
      let s = A[i * P + j];
      for (let k = 0; k < j; k++) s -= L[i * P + k] * L[j * P + k];
      if (i === j) {
        if (!(s > 0)) return false;
        L[i * P + i] = Math.sqrt(s);
      } else L[i * P + j] = s / L[j * P + j];
    }
  }
  for (let i = 0; i < P; i++) {
    let s = b[i];
    for (let k = 0; k < i; k++) s -= L[i * P + k] * x[k];
    x[i] = s / L[i * P + i];
  }
  for (let i = P - 1; i >= 0; i--) {
    let s = x[i];
    for (let k = i + 1; k < P; k++) s -= L[k * P + i] * x[k];
    x[i] = s / L[i * P + i];
  }
  return true;
}

/**
 * Inverse of a symmetric positive-definite P×P matrix (row-major), or null when it is singular.
 * Scales to unit diagonal first so that parameters of very different size do not spoil it.
 */
export function invertSymmetric(A: Float64Array, P: number): Float64Array | null {
  const d = new Float64Array(P);
  for (let i = 0; i < P; i++) {
    const v = A[i * P + i];
    if (!(v > 0)) return null;
    d[i] = 1 / Math.sqrt(v);
  }
  const S = new Float64Array(P * P);
  for (let i = 0; i < P; i++) for (let j = 0; j < P; j++) S[i * P + j] = A[i * P + j] * d[i] * d[j];
  const L = new Float64Array(P * P);
  const inv = new Float64Array(P * P);
  const e = new Float64Array(P);
  const col = new Float64Array(P);
  for (let j = 0; j < P; j++) {
    e.fill(0);
    e[j] = 1;
    if (!choleskySolve(S, e, col, L, P)) return null;
    for (let i = 0; i < P; i++) inv[i * P + j] = col[i] * d[i] * d[j];
  }
  return inv;
}

/** Minimises Σρ(yᵢ, mᵢ(p)) from `start` (copied, never changed). */
export function levenbergMarquardt(
  prob: LmProblem,
  start: ArrayLike<number>,
  options: LmOptions = {},
): LmResult {
  const P = prob.nParams;
  const N = prob.nPoints;
  const maxIterations = options.maxIterations ?? 200;
  const ftol = options.ftol ?? 1e-10;
  const atol = options.atol ?? 0;
  const xtol = options.xtol ?? 1e-10;
  const lower = prob.lower;
  const upper = prob.upper;

  const p = Float64Array.from(start);
  const trial = new Float64Array(P);
  const ws =
    options.workspace && options.workspace.nParams === P && options.workspace.nPoints === N
      ? options.workspace
      : lmWorkspace(P, N);
  let [model, trialModel, jac, trialJac] = ws.arrays;
  const [, , , , dRho, hW] = ws.arrays;
  let [, , , , , , terms, trialTerms] = ws.arrays;
  const g = new Float64Array(P);
  const H = new Float64Array(P * P);
  const A = new Float64Array(P * P);
  const L = new Float64Array(P * P);
  const rhs = new Float64Array(P);
  const step = new Float64Array(P);
  const scale = new Float64Array(P);
  const active = new Uint8Array(P);
  const atBound = (k: number) =>
    (lower !== undefined && p[k] <= lower[k]) || (upper !== undefined && p[k] >= upper[k]);

  const clamp = (v: Float64Array) => {
    for (let k = 0; k < P; k++) {
      if (lower && v[k] < lower[k]) v[k] = lower[k];
      if (upper && v[k] > upper[k]) v[k] = upper[k];
    }
  };
  clamp(p);

  const finish = (stop: LmStop, iterations: number, objective: number): LmResult => {
    return {
      params: p,
      objective,
      model,
      jacobian: jac,
      pointLoss: terms,
      hessian: H,
      iterations,
      stop,
      atBound: Array.from({ length: P }, (_, k) => atBound(k)),
    };
  };

  if (!prob.evaluate(p, model, jac)) return finish('nonFinite', 0, NaN);
  let F = lossValue(prob.loss, prob.data, model, prob.weights, terms);
  if (!Number.isFinite(F)) return finish('nonFinite', 0, F);
  gradientAndHessian(prob, model, jac, g, H, dRho, hW);
  for (let k = 0; k < P; k++) scale[k] = H[k * P + k];
  let lambda = options.lambda0 ?? 1e-1;

  let iterations = 0;
  while (iterations < maxIterations) {
    iterations++;
    let maxScale = 0;
    for (let k = 0; k < P; k++) {
      if (H[k * P + k] > scale[k]) scale[k] = H[k * P + k];
      if (scale[k] > maxScale) maxScale = scale[k];
    }
    const scaleFloor = maxScale > 0 ? maxScale * 1e-14 : 1;
    // Parameters on a bound whose descent direction points outward sit out this step.
    for (let k = 0; k < P; k++) {
      active[k] =
        (lower !== undefined && p[k] <= lower[k] && g[k] > 0) ||
        (upper !== undefined && p[k] >= upper[k] && g[k] < 0)
          ? 1
          : 0;
    }
    let solved = false;
    for (let pass = 0; pass < 2 && !solved; pass++) {
      for (let a = 0; a < P; a++) {
        for (let b = 0; b < P; b++) {
          A[a * P + b] = active[a] || active[b] ? (a === b ? 1 : 0) : H[a * P + b];
        }
        if (!active[a]) A[a * P + a] += lambda * Math.max(scale[a], scaleFloor);
        rhs[a] = active[a] ? 0 : -g[a];
      }
      if (!choleskySolve(A, rhs, step, L, P)) break;
      solved = true;
      for (let k = 0; k < P; k++) {
        trial[k] = p[k] + step[k];
        const out =
          (lower !== undefined && trial[k] < lower[k]) || (upper !== undefined && trial[k] > upper[k]);
        if (out && !active[k] && atBound(k)) {
          active[k] = 1;
          solved = false;
        }
      }
    }
    if (!solved) {
      lambda *= 10;
      if (lambda > 1e30) return finish('converged', iterations, F);
      continue;
    }
    clamp(trial);
    for (let k = 0; k < P; k++) step[k] = trial[k] - p[k];
    // Predicted reduction of the quadratic model: −gᵀδ − ½δᵀHδ.
    let predicted = 0;
    for (let a = 0; a < P; a++) {
      let hs = 0;
      for (let b = 0; b < P; b++) hs += H[a * P + b] * step[b];
      predicted -= g[a] * step[a] + 0.5 * step[a] * hs;
    }
    // The Jacobian comes with the trial: most steps are accepted, and then it is not computed twice.
    const ok = prob.evaluate(trial, trialModel, trialJac);
    const Ft = ok ? lossValue(prob.loss, prob.data, trialModel, prob.weights, trialTerms) : Infinity;
    if (Number.isFinite(Ft) && Ft <= F) {
      const reduction = F - Ft;
      let relStep = 0;
      for (let k = 0; k < P; k++) {
        const r = Math.abs(step[k]) / (Math.abs(p[k]) + 1e-30);
        if (r > relStep) relStep = r;
      }
      p.set(trial);
      [model, trialModel] = [trialModel, model];
      [jac, trialJac] = [trialJac, jac];
      [terms, trialTerms] = [trialTerms, terms];
      F = Ft;
      gradientAndHessian(prob, model, jac, g, H, dRho, hW);
      lambda = Math.max(lambda / 10, 1e-12);
      const tol = ftol * F + atol;
      if ((reduction <= tol && predicted <= tol) || relStep <= xtol)
        return finish('converged', iterations, F);
      // Newton decrement ½gᵀH⁻¹g at the new point: when even a full Gauss–Newton step would gain less
      // than the tolerance (and this step already gained little), the point is the optimum and the
      // confirming iteration is skipped. Parameters held on a bound by the step are left out.
      if (reduction <= 1e-3 * F + 10 * tol && choleskySolve(H, g, step, L, P)) {
        let decrement = 0;
        for (let k = 0; k < P; k++) {
          const held =
            (lower !== undefined && p[k] <= lower[k] && step[k] > 0) ||
            (upper !== undefined && p[k] >= upper[k] && step[k] < 0);
          if (!held) decrement += 0.5 * g[k] * step[k];
        }
        if (decrement <= tol) return finish('converged', iterations, F);
      }
    } else {
      lambda *= 10;
      // No step of any size lowers F: we sit at the optimum to working precision.
      if (lambda > 1e30 || (predicted >= 0 && predicted <= 1e-15 * Math.abs(F) + atol * 1e-3))
        return finish('converged', iterations, F);
    }
  }
  return finish('maxIterations', iterations, F);
}
