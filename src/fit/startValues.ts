import type { DecayModel } from './decayModel.js';
import { binCount, binMeans, type ChannelBins } from '../model/reconvolve.js';
import { choleskySolve } from './lm.js';
import { weightedGram } from './weightedGram.js';

/**
 * Automatic starting values, so that a user never guesses: the tail's log-slope gives the longest
 * lifetime's scale; a geometric grid of lifetimes around it (one component: τ_tail·2^k,
 * k = −4 … 4; more components: k = −6 … 0 in steps of 0.75, then 0.5, 1, 1.75, 2.5; steps finer than
 * 2^1.5 start a 2-exponential fit close enough to save an iteration) is tried in every combination,
 * each with its amplitudes, background and scatter solved by weighted linear least squares on the
 * decay cut into ~500 bins (weights from the counts in each bin, amplitudes kept ≥ 0 unless negative
 * ones are allowed); the best few combinations start the full fit.
 */

/**
 * Lifetime from the log-slope of the tail: a weighted straight line through ln(counts − background)
 * from `from` on, over the channels still above max(20, 2 % of the peak) counts.
 */
export function tailLifetimeEstimate(
  counts: ArrayLike<number>,
  from: number,
  to: number,
  background: number,
  binWidthNs: number,
): number {
  let peak = 0;
  for (let i = from; i < to; i++) if (counts[i] - background > peak) peak = counts[i] - background;
  const floor = Math.max(20, 0.02 * peak);
  let sw = 0;
  let sx = 0;
  let sy = 0;
  let sxx = 0;
  let sxy = 0;
  let run = 0;
  for (let i = from; i < to; i++) {
    const v = counts[i] - background;
    if (v < floor) {
      // Stop after the tail has stayed below the floor for a while (noise, or the next pulse).
      if (++run > 20) break;
      continue;
    }
    run = 0;
    const y = Math.log(v);
    const w = v;
    sw += w;
    sx += w * i;
    sy += w * y;
    sxx += w * i * i;
    sxy += w * i * y;
  }
  const den = sw * sxx - sx * sx;
  if (!(sw > 0) || !(den > 0)) return NaN;
  const slope = (sw * sxy - sx * sy) / den;
  return slope < 0 ? -binWidthNs / slope : NaN;
}

/**
 * Every strictly ascending choice of k indices out of 0 … n − 1, in lexicographic order, packed k
 * per choice (one empty choice when k = 0, as an empty array).
 */
function ascendingChoices(n: number, k: number): Int32Array {
  const out: number[] = [];
  const chosen = new Int32Array(k);
  const pick = (from: number, depth: number) => {
    if (depth === k) {
      for (let j = 0; j < k; j++) out.push(chosen[j]);
      return;
    }
    for (let g = from; g < n; g++) {
      chosen[depth] = g;
      pick(g + 1, depth + 1);
    }
  };
  pick(0, 0);
  return Int32Array.from(out);
}

/** Points (bins of the fit range) on which the lifetime grid is ranked. */
const GRID_POINTS = 500;

/**
 * Work arrays of the grid search, kept between calls (they are a fit's largest allocations after
 * the optimiser's): `scratch(k, length)` is slot k, grown when too short, as a view of `length`.
 * Every element a caller reads it has written first in the same call.
 */
const scratchSlots: Float64Array[] = [];
function scratch(k: number, length: number): Float64Array {
  if (!(scratchSlots[k]?.length >= length)) scratchSlots[k] = new Float64Array(length);
  return scratchSlots[k].subarray(0, length);
}

export interface StartCandidate {
  /** Full parameter vector (layout of the DecayModel). */
  params: Float64Array;
  /** Weighted χ² of the linear solve, for ranking. */
  chi2: number;
}

interface GridOptions {
  tauTailNs: number;
  tauMinNs: number[];
  tauMaxNs: number[];
  /** Lifetimes held fixed, per component (NaN = free). */
  fixedTauNs: number[];
  fixedBackground: number | null;
  fixedScatter: number | null;
  allowNegative: boolean;
  keep: number;
}

/** Grid steps k of τ_tail·2^k: for one component, and for more. */
const STEPS_ONE = [-4, -3, -2, -1, 0, 1, 2, 3, 4];
const STEPS_MANY = [-6, -5.25, -4.5, -3.75, -3, -2.25, -1.5, -0.75, 0, 0.5, 1, 1.75, 2.5];

/**
 * Grid lifetimes, ascending: τ_tail·2^k clamped to [lo, hi], a point dropped when it does not exceed
 * the one before it, and doubled past the last until there are at least `minLength`.
 */
function lifetimeGrid(nc: number, tauTailNs: number, lo: number, hi: number, minLength: number): number[] {
  const steps = nc === 1 ? STEPS_ONE : STEPS_MANY;
  const grid: number[] = [];
  let prev = NaN;
  for (let k = 0; k < steps.length; k++) {
    const t = Math.min(hi, Math.max(lo, tauTailNs * 2 ** steps[k]));
    if (k === 0 || t > prev * 1.0001) grid.push(t);
    prev = t;
  }
  while (grid.length < minLength) grid.push(grid[grid.length - 1] * 2);
  return grid;
}

/**
 * The weighted linear problem of the grid search over its columns (grid bases, fixed-lifetime bases,
 * background, scatter) and the work arrays of one combination's solve.
 */
interface GridProblem {
  nc: number;
  allowNegative: boolean;
  /** Column count of the Gram matrix. */
  C: number;
  gram: Float64Array;
  rhs: Float64Array;
  yWy: number;
  A: Float64Array;
  Lw: Float64Array;
  b: Float64Array;
  sol: Float64Array;
  /** Columns of the combination being solved. */
  cols: Int32Array;
  active: Uint8Array;
  idx: Int32Array;
  /** Coefficients of the last solve, per column of `cols`. */
  coef: Float64Array;
}

function gridProblem(
  nc: number,
  allowNegative: boolean,
  C: number,
  gram: Float64Array,
  rhs: Float64Array,
  yWy: number,
): GridProblem {
  const maxP = nc + 2;
  return {
    nc,
    allowNegative,
    C,
    gram,
    rhs,
    yWy,
    A: new Float64Array(maxP * maxP),
    Lw: new Float64Array(maxP * maxP),
    b: new Float64Array(maxP),
    sol: new Float64Array(maxP),
    cols: new Int32Array(maxP),
    active: new Uint8Array(maxP),
    idx: new Int32Array(maxP),
    coef: new Float64Array(maxP),
  };
}

/**
 * Non-negative weighted least squares of one combination (its K columns in `g.cols`) by active set:
 * the most negative coefficient that must not be negative is dropped and the rest solved again.
 * Leaves the coefficients in `g.coef` and returns χ² = yᵀWy − 2cᵀr + cᵀGc, or NaN.
 */
function solveCombination(g: GridProblem, K: number): number {
  const { A, b, sol, Lw, cols, active, idx, coef, gram, rhs, C } = g;
  active.fill(1, 0, K);
  for (let attempt = 0; attempt <= K; attempt++) {
    let P = 0;
    for (let k = 0; k < K; k++) if (active[k]) idx[P++] = k;
    for (let a = 0; a < P; a++) {
      b[a] = rhs[cols[idx[a]]];
      for (let c = 0; c < P; c++) A[a * P + c] = gram[cols[idx[a]] * C + cols[idx[c]]];
      A[a * P + a] *= 1 + 1e-12;
    }
    coef.fill(0);
    if (P > 0 && !choleskySolve(A, b, sol, Lw, P)) return NaN;
    for (let a = 0; a < P; a++) coef[idx[a]] = sol[a];
    let worst = -1;
    for (let k = 0; k < K; k++) {
      const mayBeNegative = k < g.nc && g.allowNegative;
      if (active[k] && !mayBeNegative && coef[k] < 0 && (worst < 0 || coef[k] < coef[worst])) worst = k;
    }
    if (worst < 0) {
      let chi2 = g.yWy;
      for (let a = 0; a < K; a++) {
        chi2 -= 2 * coef[a] * rhs[cols[a]];
        for (let c = 0; c < K; c++) chi2 += coef[a] * coef[c] * gram[cols[a] * C + cols[c]];
      }
      return chi2;
    }
    active[worst] = 0;
  }
  return NaN;
}

/** Where the columns of the grid problem sit. */
interface ColumnPlan {
  /** Grid column of each free component slot, per combination: combos[c·F … c·F + F − 1]. */
  combos: Int32Array;
  F: number;
  /** Column of each component whose lifetime is fixed (−1 for free ones). */
  fixedCol: Int32Array;
  bgCol: number;
  scCol: number;
}

/** Fills `g.cols` with combination c's columns (per component, then background and scatter); returns K. */
function setColumns(g: GridProblem, plan: ColumnPlan, c: number): number {
  const cols = g.cols;
  let f = c * plan.F;
  let K = 0;
  for (let j = 0; j < g.nc; j++) cols[K++] = plan.fixedCol[j] >= 0 ? plan.fixedCol[j] : plan.combos[f++];
  if (plan.bgCol >= 0) cols[K++] = plan.bgCol;
  if (plan.scCol >= 0) cols[K++] = plan.scCol;
  return K;
}

/** Does every grid index of combination p lie within one step of combination q's? */
function nearCombination(combos: Int32Array, F: number, p: number, q: number): boolean {
  for (let k = 0; k < F; k++) if (Math.abs(combos[p * F + k] - combos[q * F + k]) > 1) return false;
  return true;
}

/**
 * Combinations by ascending χ², the first `keep` that differ: the later starts serve when the first
 * fit looks doubtful, so a combination whose every lifetime lies within one grid step of an earlier
 * pick is passed over.
 */
function pickCombinations(chi2s: Float64Array, combos: Int32Array, F: number, keep: number): number[] {
  const order: number[] = [];
  for (let c = 0; c < chi2s.length; c++) if (!Number.isNaN(chi2s[c])) order.push(c);
  order.sort((p, q) => chi2s[p] - chi2s[q]);
  const picked: number[] = [];
  for (let i = 0; i < order.length && picked.length < keep; i++) {
    let near = false;
    for (let j = 0; j < picked.length && !near; j++) near = nearCombination(combos, F, picked[j], order[i]);
    if (!near) picked.push(order[i]);
  }
  return picked;
}

/**
 * Ranks lifetime combinations on the grid by the weighted χ² of their linear solve and returns the
 * `keep` best as full parameter vectors (IRF parameters taken from `base`).
 */
export function gridStarts(
  model: DecayModel,
  base: Float64Array,
  counts: Float64Array,
  opts: GridOptions,
): StartCandidate[] {
  const s = model.setup;
  const L = model.layout;
  const nc = s.nComponents;
  const i0 = s.fitStart;
  const i1 = s.fitEnd;
  const nFit = i1 - i0;

  // Grid lifetimes for the free components, ascending.
  let F = 0;
  let fixedCount = 0;
  const fixedCol = new Int32Array(nc).fill(-1);
  for (let j = 0; j < nc; j++) {
    if (opts.fixedTauNs[j] > 0) fixedCount++;
    else F++;
  }
  let lo = Infinity;
  let hi = -Infinity;
  for (let j = 0; j < opts.tauMinNs.length; j++) lo = Math.min(lo, opts.tauMinNs[j]);
  for (let j = 0; j < opts.tauMaxNs.length; j++) hi = Math.max(hi, opts.tauMaxNs[j]);
  // The log-slope can mislead both ways (a Gaussian IRF's own tail looks like a very short lifetime,
  // a background slope like a long one), so the grid reaches well beyond it on both sides.
  const grid = lifetimeGrid(nc, opts.tauTailNs, lo, hi, F);

  // Starting values need no more than ~500 points: the fit range is cut into bins of `width`
  // channels (the last one may be shorter) and every curve and the counts are taken as bin means.
  // Binning keeps every count (sampling every width-th channel would throw most away), and a mean
  // keeps the background's column at 1. Columns over the bins, packed in one array: grid bases,
  // fixed-lifetime bases, background, scatter.
  const bins: ChannelBins = { from: i0, to: i1, width: Math.max(1, Math.floor(nFit / GRID_POINTS)) };
  const M = binCount(bins);
  const bgCol = opts.fixedBackground === null ? grid.length + fixedCount : -1;
  const irfCurve = L.scatter >= 0 ? model.scatterCurve(base) : null;
  const scCol = irfCurve && opts.fixedScatter === null ? grid.length + fixedCount + (bgCol >= 0 ? 1 : 0) : -1;
  const C = grid.length + fixedCount + (bgCol >= 0 ? 1 : 0) + (scCol >= 0 ? 1 : 0);
  const flat = scratch(0, C * M);
  for (let k = 0; k < grid.length; k++) model.basisBinMeans(base, grid[k], bins, flat, k * M, k > 0);
  let next = grid.length;
  for (let j = 0; j < nc; j++) {
    if (opts.fixedTauNs[j] > 0) {
      fixedCol[j] = next;
      model.basisBinMeans(base, opts.fixedTauNs[j], bins, flat, M * next++);
    }
  }
  if (bgCol >= 0) flat.fill(1, bgCol * M, (bgCol + 1) * M);
  if (scCol >= 0) binMeans(irfCurve!, bins, flat, scCol * M, s.scatterScale);
  // Weighted least squares on the bin means: a mean of c channels holding S counts has variance
  // ≈ max(S, 1)/c², so w = c²/max(S, 1) and χ² is that of the bin sums.
  const w = scratch(2, M);
  const wy = scratch(3, M);
  const y = scratch(4, M);
  binMeans(counts, bins, y, 0);
  const sc = irfCurve && opts.fixedScatter !== null ? scratch(5, M) : null;
  if (sc) binMeans(irfCurve!, bins, sc, 0, opts.fixedScatter! * s.scatterScale);
  let yWy = 0;
  for (let k = 0; k < M; k++) {
    const a = i0 + k * bins.width;
    const c = Math.min(a + bins.width, i1) - a;
    w[k] = (c * c) / Math.max(y[k] * c, 1);
    if (opts.fixedBackground !== null) y[k] -= opts.fixedBackground;
    if (sc) y[k] -= sc[k];
    wy[k] = w[k] * y[k];
    yWy += wy[k] * y[k];
  }
  const gram = new Float64Array(C * C);
  const rhs = new Float64Array(C);
  // Gram matrix and projection of the data in one pass.
  weightedGram(flat, C, M, w, wy, gram, rhs, bgCol);

  // Every ascending choice of grid lifetimes for the free slots.
  const combos = ascendingChoices(grid.length, F);
  const comboCount = F > 0 ? combos.length / F : 1;
  const plan: ColumnPlan = { combos, F, fixedCol, bgCol, scCol };
  const g = gridProblem(nc, opts.allowNegative, C, gram, rhs, yWy);
  const chi2s = new Float64Array(comboCount);
  for (let c = 0; c < comboCount; c++) chi2s[c] = solveCombination(g, setColumns(g, plan, c));

  // Parameter vectors for the best few only: solved again, which is cheap.
  const results: StartCandidate[] = [];
  for (const c of pickCombinations(chi2s, combos, F, opts.keep)) {
    const K = setColumns(g, plan, c);
    solveCombination(g, K);
    results.push({
      params: startVector(L, base, opts, grid, combos.subarray(c * F, c * F + F), g.coef, plan, K),
      chi2: chi2s[c],
    });
  }
  return results;
}

/** A full parameter vector from a combination's grid lifetimes and its solved coefficients. */
function startVector(
  L: DecayModel['layout'],
  base: Float64Array,
  opts: GridOptions,
  grid: number[],
  combo: Int32Array,
  coef: Float64Array,
  plan: ColumnPlan,
  K: number,
): Float64Array {
  const nc = L.lnTau.length;
  const params = base.slice();
  let maxAmp = 0;
  for (let j = 0; j < nc; j++) maxAmp = Math.max(maxAmp, Math.abs(coef[j]));
  let f = 0;
  for (let j = 0; j < nc; j++) {
    const tau = opts.fixedTauNs[j] > 0 ? opts.fixedTauNs[j] : grid[combo[f++]];
    params[L.lnTau[j]] = Math.log(tau);
    // A component switched off by the linear solve restarts small but alive, so that it can move.
    params[L.amplitude[j]] = coef[j] !== 0 ? coef[j] : 0.01 * maxAmp || 1;
  }
  // A background of exactly 0 would make the model 0 under stray counts before the pulse (an
  // impossible Poisson model); start it slightly above.
  if (plan.bgCol >= 0) params[L.background] = Math.max(coef[nc], 1e-2);
  if (plan.scCol >= 0) params[L.scatter] = Math.max(coef[K - 1], 0);
  return params;
}
