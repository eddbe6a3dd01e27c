import { SCHEMA_VERSION, type ComponentResult, type FitResult } from '../../shared/schema.js';
import { ComputationError } from '../errors.js';
import type { Histogram } from '../io/types.js';
import { FWHM_PER_SIGMA } from '../model/gaussianIrf.js';
import type { DecayModel } from './decayModel.js';
import { decayModelFor } from './globalBlock.js';
import { durbinWatson, informationCriteria, residualAutocorrelation, runsTest } from './diagnostics.js';
import { resolveFitSetup, SHIFT_MAX_NS, TAU_MAX_NS, TAU_MIN_NS, type FitSetup } from './fitSetup.js';
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
  let peak = i0;
  for (let i = i0; i < i1; i++) if (counts[i] > counts[peak]) peak = i;
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

function buildResult(setup: FitSetup, run: FitRun, decay: Histogram, withCurves: boolean): FitResult {
  const { model, lm, free } = run;
  const L = model.layout;
  const P = L.count;
  const nc = setup.nComponents;
  const i0 = setup.fitStart;
  const i1 = setup.fitEnd;
  const nFit = i1 - i0;
  const dt = setup.binWidthNs;
  const counts = setup.counts;
  const warnings: string[] = [...setup.notes];

  // Covariance over all parameters (internal units: ln τ, σ of the Gaussian IRF); 0 for fixed ones.
  const F = free.length;
  const invH = invertSymmetric(lm.hessian, F);
  const cov = new Float64Array(P * P);
  if (invH) {
    for (let a = 0; a < F; a++) for (let b = 0; b < F; b++) cov[free[a] * P + free[b]] = 2 * invH[a * F + b];
  } else {
    cov.fill(NaN);
    warnings.push(
      'the Fisher information is singular: some parameters are not determined by the data, errors are unavailable',
    );
  }
  let all = run.all;

  // Ascending lifetimes unless one was fixed by name.
  const anyTauFixed = [...Object.keys(setup.fix), ...Object.keys(setup.bounds)].some((k) =>
    /^tau\dNs$/.test(k),
  );
  const order = Array.from({ length: nc }, (_, j) => j);
  if (!anyTauFixed) order.sort((p, q) => all[L.lnTau[p]] - all[L.lnTau[q]]);
  const perm = Array.from({ length: P }, (_, k) => k);
  for (let j = 0; j < nc; j++) {
    perm[L.amplitude[j]] = L.amplitude[order[j]];
    perm[L.lnTau[j]] = L.lnTau[order[j]];
  }
  all = Float64Array.from(perm, (k) => all[k]);
  const covP = new Float64Array(P * P);
  for (let a = 0; a < P; a++) for (let b = 0; b < P; b++) covP[a * P + b] = cov[perm[a] * P + perm[b]];
  const atBoundAll = new Array<boolean>(P).fill(false);
  free.forEach((k, f) => (atBoundAll[k] = lm.atBound[f]));
  const atBound = perm.map((k) => atBoundAll[k]);
  const isFree = new Array<boolean>(P).fill(false);
  free.forEach((k) => (isFree[k] = true));
  const freeP = perm.map((k) => isFree[k]);

  const varOf = (g: Float64Array) => {
    let v = 0;
    for (let a = 0; a < P; a++) {
      if (g[a] === 0) continue;
      for (let b = 0; b < P; b++) if (g[b] !== 0) v += g[a] * covP[a * P + b] * g[b];
    }
    return v;
  };
  const sd = (k: number) => Math.sqrt(Math.max(covP[k * P + k], 0));

  const amps = Array.from({ length: nc }, (_, j) => all[L.amplitude[j]]);
  const taus = Array.from({ length: nc }, (_, j) => Math.exp(all[L.lnTau[j]]));
  const sumA = amps.reduce((s, a) => s + a, 0);
  const V = amps.reduce((s, a, j) => s + a * taus[j], 0);
  const U = amps.reduce((s, a, j) => s + a * taus[j] * taus[j], 0);
  const tauAmp = V / sumA;
  const tauInt = U / V;
  const g = new Float64Array(P);
  for (let j = 0; j < nc; j++) {
    g[L.amplitude[j]] = (taus[j] - tauAmp) / sumA;
    g[L.lnTau[j]] = (amps[j] * taus[j]) / sumA;
  }
  const tauAmpErr = Math.sqrt(varOf(g));
  g.fill(0);
  for (let j = 0; j < nc; j++) {
    g[L.amplitude[j]] = (taus[j] * taus[j] - tauInt * taus[j]) / V;
    g[L.lnTau[j]] = (2 * amps[j] * taus[j] * taus[j] - tauInt * amps[j] * taus[j]) / V;
  }
  const tauIntErr = Math.sqrt(varOf(g));

  const components: ComponentResult[] = [];
  for (let k = 0; k < nc; k++) {
    g.fill(0);
    const fk = (amps[k] * taus[k]) / V;
    for (let j = 0; j < nc; j++) {
      g[L.amplitude[j]] = ((j === k ? taus[k] : 0) - fk * taus[j]) / V;
      g[L.lnTau[j]] = ((j === k ? amps[k] * taus[k] : 0) - fk * amps[j] * taus[j]) / V;
    }
    const tauFixed = !freeP[L.lnTau[k]];
    const c: ComponentResult = {
      tauNs: tauFixed ? (setup.fix[`tau${k + 1}Ns`] ?? taus[k]) : taus[k],
      tauErrNs: tauFixed ? 0 : taus[k] * sd(L.lnTau[k]),
      amplitude: amps[k],
      amplitudeErr: sd(L.amplitude[k]),
      intensityFraction: fk,
      intensityFractionErr: Math.sqrt(varOf(g)),
      amplitudeFraction: amps[k] / sumA,
    };
    if (tauFixed) c.fixed = true;
    components.push(c);
  }

  // Statistics over the fit range.
  const data = counts.subarray(i0, i1);
  const m = lm.model;
  const dof = nFit - F;
  const resid = new Float64Array(nFit);
  // Under the Poisson statistic the optimiser's per-channel losses are the deviance terms already.
  const { chi2, chi2Spread, deviance } = residualStatistics(
    data,
    m,
    setup.statistic,
    resid,
    setup.statistic === 'poisson' ? lm.pointLoss : null,
  );
  const dw = durbinWatson(resid);
  const runs = runsTest(resid);
  const ic = informationCriteria(lm.objective, F, nFit);

  let peakCounts = 0;
  let totalCounts = 0;
  for (let i = 0; i < nFit; i++) {
    totalCounts += data[i];
    if (data[i] > peakCounts) peakCounts = data[i];
  }
  const chi2Red = chi2 / dof;
  const spread = Math.sqrt(chi2Spread) / dof;
  const lowerP = perm.map((k) => run.lower[k]);
  addWarnings(warnings, {
    setup,
    layout: L,
    all,
    lower: lowerP,
    free: freeP,
    atBound,
    components,
    peakCounts,
    chi2Red,
    spread,
    runs,
    lm,
  });

  const curves = withCurves
    ? plotCurves(setup, model.irfCurve(all), fullAxisModel(run), resid, decay)
    : {
        timeNs: [],
        data: [],
        model: [],
        irf: [],
        weightedResiduals: [],
        autocorrelation: [],
        fitStartIndex: i0,
        fitEndIndex: i1 - 1,
      };
  const fixedOut: Record<string, number> = {};
  for (const [k, v] of Object.entries(setup.fix)) fixedOut[k] = v;

  const result: FitResult = {
    schemaVersion: SCHEMA_VERSION,
    statistic: setup.statistic,
    nComponents: nc,
    components,
    tauAmpAvgNs: tauAmp,
    tauAmpAvgErrNs: tauAmpErr,
    tauIntAvgNs: tauInt,
    tauIntAvgErrNs: tauIntErr,
    shiftNs: L.shift >= 0 ? all[L.shift] : 0,
    shiftErrNs: L.shift >= 0 ? sd(L.shift) : 0,
    background: all[L.background],
    backgroundErr: sd(L.background),
    scatter: L.scatter >= 0 ? all[L.scatter] : 0,
    scatterErr: L.scatter >= 0 ? sd(L.scatter) : 0,
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
    peakCounts,
    totalCounts,
    fixed: fixedOut,
    curves,
  };
  if (setup.mode === 'gaussian') {
    result.irfFwhmNs = all[L.irfSigma] * FWHM_PER_SIGMA;
    result.irfFwhmErrNs = sd(L.irfSigma) * FWHM_PER_SIGMA;
    result.irfCenterNs = all[L.irfCenter];
    result.irfCenterErrNs = sd(L.irfCenter);
  }
  // Covariance of the free parameters in reported units (τ in ns, IRF width as FWHM).
  const toReported = (k: number) =>
    L.lnTau.includes(k) ? Math.exp(all[k]) : k === L.irfSigma ? FWHM_PER_SIGMA : 1;
  const freeSorted = Array.from({ length: P }, (_, k) => k).filter((k) => freeP[k]);
  result.covariance = {
    names: freeSorted.map((k) => L.names[k]),
    matrix: freeSorted.map((a) => freeSorted.map((b) => covP[a * P + b] * toReported(a) * toReported(b))),
  };
  return result;
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
