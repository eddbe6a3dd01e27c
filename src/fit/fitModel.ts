import { SCHEMA_VERSION, type ComponentResult, type FitResult } from '../../shared/schema.js';
import { ComputationError } from '../errors.js';
import type { Histogram } from '../io/types.js';
import { FWHM_PER_SIGMA } from '../model/gaussianIrf.js';
import type { DecayModel } from './decayModel.js';
import { decayModelFor } from './globalBlock.js';
import { durbinWatson, informationCriteria, residualAutocorrelation, runsTest } from './diagnostics.js';
import {
  peakIndex,
  resolveFitSetup,
  SHIFT_MAX_NS,
  TAU_MAX_NS,
  TAU_MIN_NS,
  type FitSetup,
} from './fitSetup.js';
import {
  invertSymmetric,
  levenbergMarquardt,
  lmWorkspace,
  type LmProblem,
  type LmResult,
  type LmWorkspace,
} from './lm.js';
import type { FitOptions } from './options.js';
import { gridStarts, tailLifetimeEstimate } from './startValues.js';

/**
 * Fits one model with a fixed number of exponential components to a decay: the engine under
 * `fitDecay`, component selection, profile likelihood, bootstrap and global fits.
 *
 * Statistics. 'poisson' minimises the Poisson deviance D = 2Σ[m − n + n ln(n/m)] (2m where n = 0),
 * i.e. maximum likelihood; 'neyman' minimises Σ(n − m)²/max(n, 1); 'pearson' minimises Σ(n − m)²/m
 * with the model in the weights (its exact minimum, not iterated reweighting). Channels with n = 0
 * need no special case under any of them; a model of 0 under a count is impossible and rejected.
 *
 * Amplitudes, background and scatter are fitted jointly with the lifetimes and the shift: under the
 * Poisson likelihood they are not a linear least-squares solution, and with the analytic Jacobian
 * they cost one extra row each. Variable projection is used where it is exact, in the start-value
 * search (weighted linear least squares on a grid of lifetimes). Lifetimes are varied as ln τ
 * (always positive, better scaled); bounds apply to τ.
 *
 * Uncertainties: covariance = inverse Fisher information at the optimum, Σᵢ ∇mᵢ∇mᵢᵀ·wᵢ with
 * wᵢ = 1/mᵢ (Poisson and Pearson) or 1/max(nᵢ, 1) (Neyman). It is not scaled by χ²_red: the
 * counting statistics fix σ, and a χ²_red far above 1 is reported as a warning about the model
 * instead of being absorbed into wider error bars. Errors of the average lifetimes and intensity
 * fractions follow by the delta method with the full covariance.
 *
 * Components are reported in ascending order of τ unless a lifetime was fixed or bounded by name (then
 * in the order of those names).
 */
export function fitModel(
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions & { components: number },
): FitResult {
  return fitResolved(resolveFitSetup(decay, irf, options), decay, options.curves ?? true);
}

/** `fitModel` on a setup already resolved from `decay` (by `resolveFitSetup`). */
export function fitResolved(setup: FitSetup, decay: Histogram, curves: boolean): FitResult {
  return buildResult(setup, runFit(setup), decay, curves);
}

interface FitRun {
  model: DecayModel;
  all: Float64Array;
  free: number[];
  freeRow: Int32Array;
  /** The optimiser's result; its `model` is the model over the fit range at the optimum. */
  lm: LmResult;
  lower: Float64Array;
  upper: Float64Array;
}

function runFit(setup: FitSetup): FitRun {
  const counts = setup.counts;
  const i0 = setup.fitStart;
  const i1 = setup.fitEnd;
  const nFit = i1 - i0;
  const dt = setup.binWidthNs;
  const model = decayModelFor(setup, true);
  const L = model.layout;
  const P = L.count;
  const nc = setup.nComponents;
  const lower = new Float64Array(P).fill(-Infinity);
  const upper = new Float64Array(P).fill(Infinity);
  const fixed = new Uint8Array(P);
  const base = new Float64Array(P);
  const fix = setup.fix;
  const bound = (name: string) => setup.bounds[name] ?? {};

  const tauMin: number[] = [];
  const tauMax: number[] = [];
  const fixedTau: number[] = [];
  for (let j = 0; j < nc; j++) {
    const name = `tau${j + 1}Ns`;
    tauMin.push(bound(name).min ?? TAU_MIN_NS);
    tauMax.push(bound(name).max ?? TAU_MAX_NS);
    lower[L.lnTau[j]] = Math.log(tauMin[j]);
    upper[L.lnTau[j]] = Math.log(tauMax[j]);
    fixedTau.push(fix[name] ?? NaN);
    if (fix[name] !== undefined) {
      fixed[L.lnTau[j]] = 1;
      base[L.lnTau[j]] = Math.log(fix[name]);
    }
    if (!setup.allowNegativeAmplitudes) lower[L.amplitude[j]] = 0;
  }
  lower[L.background] = bound('background').min ?? 0;
  upper[L.background] = bound('background').max ?? Infinity;
  if (fix.background !== undefined) {
    fixed[L.background] = 1;
    base[L.background] = fix.background;
  }
  if (L.scatter >= 0) {
    lower[L.scatter] = bound('scatter').min ?? 0;
    upper[L.scatter] = bound('scatter').max ?? Infinity;
    if (fix.scatter !== undefined) {
      fixed[L.scatter] = 1;
      base[L.scatter] = fix.scatter;
    }
  }
  if (L.shift >= 0) {
    lower[L.shift] = bound('shiftNs').min ?? -SHIFT_MAX_NS;
    upper[L.shift] = bound('shiftNs').max ?? SHIFT_MAX_NS;
    base[L.shift] = fix.shiftNs ?? 0;
    if (fix.shiftNs !== undefined) fixed[L.shift] = 1;
  }
  const peak = peakIndex(counts, i0, i1);
  if (L.irfCenter >= 0) {
    const window = setup.channels * dt;
    lower[L.irfCenter] = bound('irfCenterNs').min ?? setup.firstEdgeNs;
    upper[L.irfCenter] = bound('irfCenterNs').max ?? setup.firstEdgeNs + window;
    lower[L.irfSigma] = (bound('irfFwhmNs').min ?? dt / 4) / FWHM_PER_SIGMA;
    upper[L.irfSigma] = (bound('irfFwhmNs').max ?? window / 4) / FWHM_PER_SIGMA;
    // Start: centre at the rising edge's half maximum, width from the 10–90 % rise.
    let half = peak;
    while (half > 0 && counts[half - 1] >= counts[peak] / 2) half--;
    base[L.irfCenter] = fix.irfCenterNs ?? setup.firstEdgeNs + (half + 0.5) * dt;
    base[L.irfSigma] = (fix.irfFwhmNs ?? Math.max(setup.irfFwhmChannels * dt, dt)) / FWHM_PER_SIGMA;
    if (fix.irfCenterNs !== undefined) fixed[L.irfCenter] = 1;
    if (fix.irfFwhmNs !== undefined) fixed[L.irfSigma] = 1;
  }

  // Tail lifetime from the log-slope after the peak, above a rough background.
  let bgGuess = 0;
  const pre = Math.max(0, Math.min(peak - i0 - Math.ceil(3 * setup.irfFwhmChannels), 200));
  if (pre >= 5) {
    for (let i = i0; i < i0 + pre; i++) bgGuess += counts[i];
    bgGuess /= pre;
  }
  const tailFrom =
    setup.mode === 'none' ? Math.max(i0, setup.tailStart) : peak + Math.ceil(2 * setup.irfFwhmChannels);
  let tauTail = tailLifetimeEstimate(counts, tailFrom, i1, setup.periodNs ? 0 : bgGuess, dt);
  if (!(tauTail > 0)) tauTail = (nFit * dt) / 5;
  tauTail = Math.min(Math.max(tauTail, 2 * TAU_MIN_NS), TAU_MAX_NS / 2);

  const gridOptions = {
    tauTailNs: tauTail,
    tauMinNs: tauMin,
    tauMaxNs: tauMax,
    fixedTauNs: fixedTau,
    fixedBackground: fix.background ?? null,
    fixedScatter: L.scatter >= 0 ? (fix.scatter ?? null) : null,
    allowNegative: setup.allowNegativeAmplitudes,
    keep: 3,
  };
  const starts = gridStarts(model, base, counts, gridOptions);
  if (L.scatter >= 0 && L.shift >= 0 && !fixed[L.shift] && starts.length > 0) {
    // Scattered light keeps the IRF's timing while the shift moves the fluorescence; from a zero
    // shift the optimiser can trade the scatter term for a shift the wrong way and stop in a local
    // optimum (seen on simulated decays with a 37 ps colour shift and 5 % scatter: scatter → 0,
    // shift −29 ps, τ 1 % long, deviance 60 above the optimum). So the start search also tries
    // shifts up to one IRF width either way, and the best of all goes first.
    const step = Math.max(dt, (setup.irfFwhmChannels * dt) / 4);
    let best = starts[0];
    for (let k = -4; k <= 4; k++) {
      const shift = Math.min(Math.max(base[L.shift] + k * step, lower[L.shift]), upper[L.shift]);
      if (k === 0 || shift === base[L.shift]) continue;
      const shifted = Float64Array.from(base);
      shifted[L.shift] = shift;
      const [candidate] = gridStarts(model, shifted, counts, { ...gridOptions, keep: 1 });
      if (candidate && candidate.chi2 < best.chi2) best = candidate;
    }
    if (best !== starts[0]) starts.unshift(best);
  }
  if (starts.length === 0) throw new ComputationError('no starting values could be found for this decay');

  const free: number[] = [];
  const freeRow = new Int32Array(P).fill(-1);
  for (let k = 0; k < P; k++) {
    if (!fixed[k]) {
      freeRow[k] = free.length;
      free.push(k);
    }
  }
  const F = free.length;
  const data = counts.subarray(i0, i1);
  let weights: Float64Array | undefined;
  if (setup.statistic === 'neyman') {
    weights = new Float64Array(nFit);
    for (let i = 0; i < nFit; i++) weights[i] = 1 / Math.max(data[i], 1);
  }
  const all = new Float64Array(P);
  const full = fullAxisScratch(setup.channels);
  const problem: LmProblem = {
    nParams: F,
    nPoints: nFit,
    data,
    weights,
    loss: setup.statistic === 'neyman' ? 'leastSquares' : setup.statistic,
    lower: Float64Array.from(free, (k) => lower[k]),
    upper: Float64Array.from(free, (k) => upper[k]),
    onesColumn: freeRow[L.background],
    evaluate(p, out, jac) {
      for (let f = 0; f < F; f++) all[free[f]] = p[f];
      if (!model.evaluate(all, full, jac, freeRow)) return false;
      out.set(full.subarray(i0, i1));
      return true;
    },
  };

  // The best start is fitted first; the next ones only when that fit looks doubtful (not converged,
  // a lifetime or amplitude on a bound, or χ² well above its expected spread), and the lowest
  // objective wins. Most decays need one start, difficult ones get several.
  let best: { lm: LmResult; all: Float64Array } | null = null;
  for (const [k, start] of starts.entries()) {
    all.set(start.params);
    const p0 = Float64Array.from(free, (k) => start.params[k]);
    const lm = levenbergMarquardt(problem, p0, {
      maxIterations: setup.maxIterations,
      ftol: 1e-10,
      atol: 1e-5,
      xtol: 1e-9,
      // The grid starts lie close to the optimum: a lighter first damping than the optimiser's
      // default saves one iteration on typical 2-exponential decays and reaches the same minimum.
      lambda0: 1e-2,
      // The first start's arrays come from a workspace kept between fits (they are the largest
      // allocations of a fit); later starts get their own, so that the best result so far stays intact.
      workspace: k === 0 ? workspaceFor(F, nFit) : undefined,
    });
    if (!best || (Number.isFinite(lm.objective) && !(lm.objective >= best.lm.objective))) {
      const final = Float64Array.from(start.params);
      for (let f = 0; f < F; f++) final[free[f]] = lm.params[f];
      best = { lm, all: final };
    }
    if (!looksDoubtful(best.lm, free, L, nFit)) break;
  }
  const chosen = best!;
  if (chosen.lm.stop === 'nonFinite' || !Number.isFinite(chosen.lm.objective))
    throw new ComputationError(
      setup.statistic === 'neyman'
        ? 'the fit failed: the model is not finite at any starting point'
        : 'the fit failed: the model is 0 where the decay has counts at every starting point (a fixed zero background with counts before the pulse?); free the background or narrow the fit range',
    );
  return { model, all: chosen.all, free, freeRow, lm: chosen.lm, lower, upper };
}

let sharedFull: Float64Array | null = null;

/** The optimiser's full-axis model array, kept between fits (fits run one at a time in a thread). */
function fullAxisScratch(n: number): Float64Array {
  if (!sharedFull || sharedFull.length !== n) sharedFull = new Float64Array(n);
  return sharedFull;
}

let sharedWorkspace: LmWorkspace | null = null;

/**
 * The optimiser's work arrays for this problem size, reused from the previous fit when the size
 * matches. Safe because a fit's optimiser result is read only before `fitModel` returns, and fits
 * run one at a time in a thread.
 */
function workspaceFor(nParams: number, nPoints: number): LmWorkspace {
  const w = sharedWorkspace;
  if (w && w.nParams === nParams && w.nPoints === nPoints) return w;
  return (sharedWorkspace = lmWorkspace(nParams, nPoints));
}

/** True when a fit deserves another start: not converged, a lifetime or amplitude on a bound, or a poor objective. */
function looksDoubtful(lm: LmResult, free: number[], L: DecayModel['layout'], nFit: number): boolean {
  if (lm.stop !== 'converged') return true;
  for (let f = 0; f < free.length; f++) {
    const k = free[f];
    if (lm.atBound[f] && (L.lnTau.includes(k) || L.amplitude.includes(k))) return true;
  }
  const dof = nFit - free.length;
  return lm.objective > dof + 5 * Math.sqrt(2 * dof);
}

/** Fixed-width number for messages. */
const fmt = (v: number) =>
  Math.abs(v) >= 1e4 || (Math.abs(v) < 1e-3 && v !== 0)
    ? v.toExponential(3)
    : Number(v.toPrecision(4)).toString();

/**
 * The fit's parameters, covariance and flags in reported order (lifetimes ascending unless one was
 * fixed or bounded by name). Internal units: ln τ, σ of the Gaussian IRF. Covariance entries of fixed
 * parameters are 0; all are NaN when the Fisher information is singular.
 */
interface ReportedOrder {
  all: Float64Array;
  /** P × P, row-major. */
  cov: Float64Array;
  free: boolean[];
  atBound: boolean[];
  lower: number[];
  singular: boolean;
}

/** Does any key of `o` name a lifetime (`tau1Ns` …)? */
function namesLifetime(o: Record<string, unknown>): boolean {
  for (const k in o) if (/^tau\dNs$/.test(k)) return true;
  return false;
}

function reportedOrder(setup: FitSetup, run: FitRun): ReportedOrder {
  const { model, lm, free } = run;
  const L = model.layout;
  const P = L.count;
  const F = free.length;
  const nc = setup.nComponents;
  const raw = run.all;

  // Component order: ascending ln τ by insertion (stable, and nc ≤ 4).
  const order = new Int32Array(nc);
  for (let j = 0; j < nc; j++) order[j] = j;
  if (!namesLifetime(setup.fix) && !namesLifetime(setup.bounds)) {
    for (let a = 1; a < nc; a++) {
      const o = order[a];
      const t = raw[L.lnTau[o]];
      let b = a - 1;
      while (b >= 0 && raw[L.lnTau[order[b]]] > t) {
        order[b + 1] = order[b];
        b--;
      }
      order[b + 1] = o;
    }
  }
  // perm[k]: the internal index of reported parameter k.
  const perm = new Int32Array(P);
  for (let k = 0; k < P; k++) perm[k] = k;
  for (let j = 0; j < nc; j++) {
    perm[L.amplitude[j]] = L.amplitude[order[j]];
    perm[L.lnTau[j]] = L.lnTau[order[j]];
  }
  // Free position of each internal parameter (−1 when fixed).
  const freeAt = new Int32Array(P).fill(-1);
  for (let f = 0; f < F; f++) freeAt[free[f]] = f;

  const invH = invertSymmetric(lm.hessian, F);
  const all = new Float64Array(P);
  const cov = new Float64Array(P * P);
  const isFree = new Array<boolean>(P);
  const atBound = new Array<boolean>(P);
  const lower = new Array<number>(P);
  for (let a = 0; a < P; a++) {
    const fa = freeAt[perm[a]];
    all[a] = raw[perm[a]];
    isFree[a] = fa >= 0;
    atBound[a] = fa >= 0 && lm.atBound[fa];
    lower[a] = run.lower[perm[a]];
    for (let b = 0; b < P; b++) {
      const fb = freeAt[perm[b]];
      cov[a * P + b] = !invH ? NaN : fa >= 0 && fb >= 0 ? 2 * invH[fa * F + fb] : 0;
    }
  }
  return { all, cov, free: isFree, atBound, lower, singular: !invH };
}

/** gᵀ·cov·g over the non-zero entries of the gradient g (delta method). */
function varianceOf(g: Float64Array, cov: Float64Array): number {
  const P = g.length;
  let v = 0;
  for (let a = 0; a < P; a++) {
    if (g[a] === 0) continue;
    for (let b = 0; b < P; b++) if (g[b] !== 0) v += g[a] * cov[a * P + b] * g[b];
  }
  return v;
}

/** Standard deviation of parameter k (0 when fixed). */
function sdOf(cov: Float64Array, P: number, k: number): number {
  return Math.sqrt(Math.max(cov[k * P + k], 0));
}

interface LifetimeSummary {
  components: ComponentResult[];
  tauAmpNs: number;
  tauAmpErrNs: number;
  tauIntNs: number;
  tauIntErrNs: number;
}

/** Components and both average lifetimes, with errors by the delta method on the full covariance. */
function lifetimeSummary(setup: FitSetup, L: DecayModel['layout'], o: ReportedOrder): LifetimeSummary {
  const nc = setup.nComponents;
  const P = L.count;
  const { all, cov } = o;
  const amps = new Float64Array(nc);
  const taus = new Float64Array(nc);
  let sumA = 0;
  let V = 0;
  let U = 0;
  for (let j = 0; j < nc; j++) {
    amps[j] = all[L.amplitude[j]];
    taus[j] = Math.exp(all[L.lnTau[j]]);
    sumA += amps[j];
    V += amps[j] * taus[j];
    U += amps[j] * taus[j] * taus[j];
  }
  const tauAmp = V / sumA;
  const tauInt = U / V;
  const g = new Float64Array(P);
  for (let j = 0; j < nc; j++) {
    g[L.amplitude[j]] = (taus[j] - tauAmp) / sumA;
    g[L.lnTau[j]] = (amps[j] * taus[j]) / sumA;
  }
  const tauAmpErr = Math.sqrt(varianceOf(g, cov));
  g.fill(0);
  for (let j = 0; j < nc; j++) {
    g[L.amplitude[j]] = (taus[j] * taus[j] - tauInt * taus[j]) / V;
    g[L.lnTau[j]] = (2 * amps[j] * taus[j] * taus[j] - tauInt * amps[j] * taus[j]) / V;
  }
  const tauIntErr = Math.sqrt(varianceOf(g, cov));

  const components: ComponentResult[] = [];
  for (let k = 0; k < nc; k++) {
    g.fill(0);
    const fk = (amps[k] * taus[k]) / V;
    for (let j = 0; j < nc; j++) {
      g[L.amplitude[j]] = ((j === k ? taus[k] : 0) - fk * taus[j]) / V;
      g[L.lnTau[j]] = ((j === k ? amps[k] * taus[k] : 0) - fk * amps[j] * taus[j]) / V;
    }
    const tauFixed = !o.free[L.lnTau[k]];
    const c: ComponentResult = {
      tauNs: tauFixed ? (setup.fix[`tau${k + 1}Ns`] ?? taus[k]) : taus[k],
      tauErrNs: tauFixed ? 0 : taus[k] * sdOf(cov, P, L.lnTau[k]),
      amplitude: amps[k],
      amplitudeErr: sdOf(cov, P, L.amplitude[k]),
      intensityFraction: fk,
      intensityFractionErr: Math.sqrt(varianceOf(g, cov)),
      amplitudeFraction: amps[k] / sumA,
    };
    if (tauFixed) c.fixed = true;
    components.push(c);
  }
  return { components, tauAmpNs: tauAmp, tauAmpErrNs: tauAmpErr, tauIntNs: tauInt, tauIntErrNs: tauIntErr };
}

/** Covariance of the free parameters in reported units (τ in ns, IRF width as FWHM). */
function reportedCovariance(L: DecayModel['layout'], o: ReportedOrder): FitResult['covariance'] {
  const P = L.count;
  const scale = new Float64Array(P);
  for (let k = 0; k < P; k++) scale[k] = k === L.irfSigma ? FWHM_PER_SIGMA : 1;
  for (let j = 0; j < L.lnTau.length; j++) scale[L.lnTau[j]] = Math.exp(o.all[L.lnTau[j]]);
  const names: string[] = [];
  const matrix: number[][] = [];
  for (let a = 0; a < P; a++) {
    if (!o.free[a]) continue;
    names.push(L.names[a]);
    const row: number[] = [];
    for (let b = 0; b < P; b++) if (o.free[b]) row.push(o.cov[a * P + b] * scale[a] * scale[b]);
    matrix.push(row);
  }
  return { names, matrix };
}

/** Counting statistics over the fit range. */
function peakAndTotal(data: Float64Array): { peak: number; total: number } {
  let peak = 0;
  let total = 0;
  for (let i = 0; i < data.length; i++) {
    total += data[i];
    if (data[i] > peak) peak = data[i];
  }
  return { peak, total };
}

/**
 * The result object of a finished fit. Kept to plain loops in short functions: it runs once per
 * decay, and in a batch each thread compiles it anew, so what it asks of the JIT shows in the wall time.
 */
function buildResult(setup: FitSetup, run: FitRun, decay: Histogram, withCurves: boolean): FitResult {
  const { model, lm } = run;
  const L = model.layout;
  const P = L.count;
  const i0 = setup.fitStart;
  const i1 = setup.fitEnd;
  const nFit = i1 - i0;
  const dt = setup.binWidthNs;
  const F = run.free.length;
  const warnings: string[] = setup.notes.slice();

  const o = reportedOrder(setup, run);
  if (o.singular)
    warnings.push(
      'the Fisher information is singular: some parameters are not determined by the data, errors are unavailable',
    );
  const { all, cov } = o;
  const life = lifetimeSummary(setup, L, o);

  // Statistics over the fit range.
  const data = setup.counts.subarray(i0, i1);
  const dof = nFit - F;
  const resid = new Float64Array(nFit);
  // Under the Poisson statistic the optimiser's per-channel losses are the deviance terms already.
  const { chi2, chi2Spread, deviance } = residualStatistics(
    data,
    lm.model,
    setup.statistic,
    resid,
    setup.statistic === 'poisson' ? lm.pointLoss : null,
  );
  const dw = durbinWatson(resid);
  const runs = runsTest(resid);
  const ic = informationCriteria(lm.objective, F, nFit);
  const counted = peakAndTotal(data);
  const chi2Red = chi2 / dof;
  const spread = Math.sqrt(chi2Spread) / dof;
  addWarnings(warnings, {
    setup,
    layout: L,
    all,
    lower: o.lower,
    free: o.free,
    atBound: o.atBound,
    components: life.components,
    peakCounts: counted.peak,
    chi2Red,
    spread,
    runs,
    lm,
  });

  const curves = withCurves
    ? plotCurves(setup, model.irfCurve(all), fullAxisModel(run), resid, decay)
    : emptyCurves(i0, i1);

  const result: FitResult = {
    schemaVersion: SCHEMA_VERSION,
    statistic: setup.statistic,
    nComponents: setup.nComponents,
    components: life.components,
    tauAmpAvgNs: life.tauAmpNs,
    tauAmpAvgErrNs: life.tauAmpErrNs,
    tauIntAvgNs: life.tauIntNs,
    tauIntAvgErrNs: life.tauIntErrNs,
    shiftNs: L.shift >= 0 ? all[L.shift] : 0,
    shiftErrNs: L.shift >= 0 ? sdOf(cov, P, L.shift) : 0,
    background: all[L.background],
    backgroundErr: sdOf(cov, P, L.background),
    scatter: L.scatter >= 0 ? all[L.scatter] : 0,
    scatterErr: L.scatter >= 0 ? sdOf(cov, P, L.scatter) : 0,
    chi2Reduced: chi2Red,
    chi2,
    deviance,
    deviancePerDof: deviance / dof,
    dof,
    durbinWatson: dw,
    runsZ: runs.z,
    runsPValue: runs.pValue,
    aic: ic.aic,
    bic: ic.bic,
    converged: lm.stop === 'converged',
    stop: lm.stop,
    iterations: lm.iterations,
    warnings,
    irfMode: setup.mode,
    rangeNs: [setup.firstEdgeNs + i0 * dt, setup.firstEdgeNs + i1 * dt],
    periodNs: setup.periodNs,
    binWidthNs: dt,
    peakCounts: counted.peak,
    totalCounts: counted.total,
    fixed: { ...setup.fix },
    curves,
  };
  if (setup.mode === 'gaussian') {
    result.irfFwhmNs = all[L.irfSigma] * FWHM_PER_SIGMA;
    result.irfFwhmErrNs = sdOf(cov, P, L.irfSigma) * FWHM_PER_SIGMA;
    result.irfCenterNs = all[L.irfCenter];
    result.irfCenterErrNs = sdOf(cov, P, L.irfCenter);
  }
  result.covariance = reportedCovariance(L, o);
  return result;
}

/** Curves of a result written without them: empty arrays, the fit range kept. */
function emptyCurves(i0: number, i1: number): FitResult['curves'] {
  return {
    timeNs: [],
    data: [],
    model: [],
    irf: [],
    weightedResiduals: [],
    autocorrelation: [],
    fitStartIndex: i0,
    fitEndIndex: i1 - 1,
  };
}

/** What `addWarnings` needs to know of a finished fit (parameters in reported order). */
interface WarningInputs {
  setup: FitSetup;
  layout: DecayModel['layout'];
  all: Float64Array;
  lower: number[];
  free: boolean[];
  atBound: boolean[];
  components: ComponentResult[];
  peakCounts: number;
  chi2Red: number;
  /** Standard deviation of χ²_red expected from counting noise alone. */
  spread: number;
  runs: { z: number; pValue: number };
  lm: LmResult;
}

/**
 * The result's warnings about the fit, appended to `warnings`. A function of its own: the branches
 * are rare, and taken inside the long result assembly each would throw away its compiled code.
 */
function addWarnings(warnings: string[], w: WarningInputs): void {
  const { setup, layout: L, all, components, peakCounts, chi2Red, spread, runs, lm } = w;
  const nc = setup.nComponents;
  const dt = setup.binWidthNs;
  const names = L.names;
  for (let k = 0; k < L.count; k++) {
    if (!w.free[k] || !w.atBound[k]) continue;
    if (k === L.background || k === L.scatter) continue; // 0 background or scatter simply means none
    const isTau = L.lnTau.includes(k);
    const shown = isTau ? Math.exp(all[k]) : k === L.irfSigma ? all[k] * FWHM_PER_SIGMA : all[k];
    const unit = isTau || k === L.shift || k === L.irfCenter || k === L.irfSigma ? ' ns' : '';
    const side = all[k] <= w.lower[k] ? 'lower' : 'upper';
    warnings.push(`${names[k]} at ${side} bound ${fmt(shown)}${unit}`);
  }
  if (nc >= 2 && peakCounts < 1e4)
    warnings.push(
      `peak counts ${fmt(peakCounts)} are below the ≈10 000 usually needed to separate ${nc} lifetimes reliably`,
    );
  else if (nc === 1 && peakCounts < 100)
    warnings.push(
      `peak counts ${fmt(peakCounts)} are very low: the lifetime is uncertain and the χ² less meaningful`,
    );
  const irfFwhmNs =
    setup.mode === 'gaussian'
      ? all[L.irfSigma] * FWHM_PER_SIGMA
      : setup.mode === 'measured'
        ? setup.irfFwhmChannels * dt
        : NaN;
  if (setup.mode === 'measured' && setup.irfFwhmChannels < 2.5)
    warnings.push(
      `the IRF spans only ${fmt(setup.irfFwhmChannels)} channels (FWHM): its shape inside a channel has to be assumed, which can shift lifetimes by ~0.1 %; finer channels remove this`,
    );
  const windowNs = setup.channels * dt;
  components.forEach((c, k) => {
    if (irfFwhmNs > 0 && c.tauNs < irfFwhmNs / 10)
      warnings.push(
        `tau${k + 1}Ns ${fmt(c.tauNs)} ns is below a tenth of the IRF width (${fmt(irfFwhmNs)} ns FWHM): it depends on the IRF's exact shape`,
      );
    if (c.tauNs > windowNs)
      warnings.push(`tau${k + 1}Ns ${fmt(c.tauNs)} ns is longer than the ${fmt(windowNs)} ns window`);
  });
  for (let a = 0; a < nc; a++)
    for (let b = a + 1; b < nc; b++) {
      const ea = components[a].tauErrNs;
      const eb = components[b].tauErrNs;
      const sep = Math.abs(components[a].tauNs - components[b].tauNs);
      if (!(sep > 2 * Math.hypot(ea, eb)))
        warnings.push(
          `tau${a + 1}Ns and tau${b + 1}Ns are not resolved: they differ by ${fmt(sep)} ns, less than twice their combined error`,
        );
    }
  if (chi2Red > 1 + 3 * spread)
    warnings.push(
      `chi2Reduced ${chi2Red.toFixed(3)} lies ${((chi2Red - 1) / spread).toFixed(1)} standard deviations (${spread.toFixed(3)}) above 1: the model does not describe the data within counting noise`,
    );
  if (runs.pValue < 0.01)
    warnings.push(
      `the residual signs form too ${runs.z < 0 ? 'few' : 'many'} runs (p = ${fmt(runs.pValue)}): systematic misfit`,
    );
  if (lm.stop !== 'converged')
    warnings.push(`the optimiser stopped without converging (${lm.stop}) after ${lm.iterations} iterations`);
}

/**
 * Pearson χ², its expected spread term Σ(2 + 1/m), the Poisson deviance Σdᵢ with
 * dᵢ = 2[m − n + n ln(n/m)] (2m where n = 0), and the weighted residuals of the fitted statistic
 * (into `resid`), in one loop. `devianceTerms`: the dᵢ when already known (the optimiser's losses under
 * the Poisson statistic, the same formula), which saves a logarithm per channel. A function of its
 * own so that the JIT optimises this hot loop apart from the long result assembly.
 */
function residualStatistics(
  data: Float64Array,
  m: Float64Array,
  statistic: FitSetup['statistic'],
  resid: Float64Array,
  devianceTerms: Float64Array | null,
): { chi2: number; chi2Spread: number; deviance: number } {
  let chi2 = 0;
  let chi2Spread = 0;
  let deviance = 0;
  const code = statistic === 'poisson' ? 0 : statistic === 'neyman' ? 1 : 2;
  for (let i = 0; i < resid.length; i++) {
    const n = data[i];
    const mi = m[i];
    const r = n - mi;
    if (mi > 0) {
      chi2 += (r * r) / mi;
      chi2Spread += 2 + 1 / mi;
    }
    const d = devianceTerms
      ? devianceTerms[i]
      : !(mi >= 0)
        ? Infinity
        : n > 0
          ? 2 * (mi - n + n * Math.log(n / mi))
          : 2 * mi;
    deviance += d;
    if (code === 0) resid[i] = Math.sign(r) * Math.sqrt(Math.max(d, 0));
    else if (code === 1) resid[i] = r / Math.sqrt(Math.max(n, 1));
    else resid[i] = mi > 0 ? r / Math.sqrt(mi) : 0;
  }
  return { chi2, chi2Spread, deviance };
}

/** The model at the optimum over the whole channel axis (the optimiser holds only the fit range). */
function fullAxisModel(run: FitRun): Float64Array {
  const out = new Float64Array(run.model.setup.channels);
  run.model.evaluate(run.all, out, null, run.freeRow);
  return out;
}

/** Longest autocorrelation lag reported, channels: enough to show correlated structure, cheap to compute. */
const MAX_AUTOCORRELATION_LAG = 256;

/** Curves for plotting on the full channel axis; model and residuals are null outside the fit range. */
function plotCurves(
  setup: FitSetup,
  irfCurve: Float64Array,
  modelFull: Float64Array,
  resid: Float64Array,
  decay: Histogram,
): FitResult['curves'] {
  const n = setup.channels;
  const i0 = setup.fitStart;
  const i1 = setup.fitEnd;
  const counts = setup.counts;
  let irfMax = 0;
  for (let i = 0; i < n; i++) if (irfCurve[i] > irfMax) irfMax = irfCurve[i];
  let dataMax = 0;
  for (let i = 0; i < n; i++) if (counts[i] > dataMax) dataMax = counts[i];
  const timeNs = new Array<number>(n);
  const data = new Array<number>(n);
  const model = new Array<number | null>(n);
  const residuals = new Array<number | null>(n);
  const irf = irfMax > 0 ? new Array<number>(n) : [];
  const irfScale = irfMax > 0 ? dataMax / irfMax : 0;
  for (let i = 0; i < n; i++) {
    timeNs[i] = decay.timeNs[i];
    data[i] = counts[i];
    const inside = i >= i0 && i < i1;
    model[i] = inside ? modelFull[i] : null;
    residuals[i] = inside ? resid[i - i0] : null;
    if (irfMax > 0) irf[i] = irfCurve[i] * irfScale;
  }
  const lag = Math.min(Math.floor(resid.length / 2), MAX_AUTOCORRELATION_LAG);
  return {
    timeNs,
    data,
    model,
    irf,
    weightedResiduals: residuals,
    autocorrelation: Array.from(residualAutocorrelation(resid, lag)),
    fitStartIndex: i0,
    fitEndIndex: i1 - 1,
  };
}
