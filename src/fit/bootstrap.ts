/**
 * Seeded parametric bootstrap of the lifetimes: draw Poisson counts from the fitted model, refit, and
 * take the spread of the refitted lifetimes as their uncertainty. It needs no curvature approximation,
 * so it shows skewed or correlated errors (short components, low counts) that the Fisher-information
 * errors hide; its cost is one fit per replicate.
 *
 * Each replicate is refitted from the best fit's parameters (the usual practice for a parametric
 * bootstrap: the replicates scatter about the best fit, so it is the natural start), by the fitter's
 * minimiser on the same decay model, which skips the single fit's search for starting values and is
 * an order of magnitude quicker. A replicate whose refit fails that way gets a full fit from scratch.
 */

import type { FitResult } from '../../shared/schema.js';
import type { Histogram } from '../io/types.js';
import { createRng } from '../sim/rng.js';
import { resolveFitSetup } from './fitSetup.js';
import { decayModelFor, freeParameters, parameterBounds, parametersFromFit } from './globalBlock.js';
import { levenbergMarquardt, type LmProblem } from './lm.js';
import type { FitOptions } from './options.js';
import type { FitModelFn } from './selectComponents.js';

export interface BootstrapSettings {
  /** Replicates. Default: options.bootstrap, else 200. */
  replicates?: number;
  /** Seed of the Poisson draws. Default: options.seed, else 1. */
  seed?: number;
  /** Fewest successful replicates for which errors are reported. Default: 10. */
  minSuccessful?: number;
  /**
   * How replicates are refitted: 'fromBest' (the minimiser started at the best fit, falling back to a
   * full fit) or 'fullFit' (the injected fitter from scratch, as for the original data). Default: 'fromBest'.
   */
  refit?: 'fromBest' | 'fullFit';
}

/** Lifetimes of one refitted replicate in component order, or null when the refit failed. */
type ReplicateRefit = (counts: Float64Array) => number[] | null;

/**
 * A refit of the best fit's model to new counts, started at the best fit's parameters; null when the
 * model cannot be rebuilt for this result (then every replicate takes the full fit).
 */
function refitFromBest(
  result: FitResult,
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions & { components: number },
): ReplicateRefit | null {
  let setup;
  try {
    setup = resolveFitSetup(decay, irf, options);
  } catch {
    return null;
  }
  if (setup.mode !== result.irfMode || setup.nComponents !== result.nComponents) return null;
  const model = decayModelFor(setup);
  const L = model.layout;
  const best = parametersFromFit(model, result);
  if (!best.every(Number.isFinite)) return null;
  const free = freeParameters(setup, model, true);
  const bounds = free.map((p) => parameterBounds(setup, L.names[p]));
  const start = Float64Array.from(free, (p, f) => Math.min(bounds[f][1], Math.max(bounds[f][0], best[p])));
  const freeRow = new Int32Array(L.count).fill(-1);
  free.forEach((p, row) => (freeRow[p] = row));
  const all = Float64Array.from(best);
  const full = new Float64Array(setup.channels);
  const { fitStart, fitEnd, statistic } = setup;
  const tausByName = [...Object.keys(setup.fix), ...Object.keys(setup.bounds)].some((k) =>
    /^tau\dNs$/.test(k),
  );
  return (counts) => {
    const data = counts.slice(fitStart, fitEnd);
    const problem: LmProblem = {
      nParams: free.length,
      nPoints: data.length,
      data,
      weights: statistic === 'neyman' ? Float64Array.from(data, (n) => 1 / Math.max(n, 1)) : undefined,
      loss: statistic === 'neyman' ? 'leastSquares' : statistic,
      lower: Float64Array.from(bounds, (b) => b[0]),
      upper: Float64Array.from(bounds, (b) => b[1]),
      evaluate(p, out, jac) {
        free.forEach((param, f) => (all[param] = p[f]));
        if (!model.evaluate(all, full, jac, freeRow)) return false;
        out.set(full.subarray(fitStart, fitEnd));
        return true;
      },
    };
    const lm = levenbergMarquardt(problem, start, {
      maxIterations: options.maxIterations ?? 200,
      ftol: 1e-10,
      atol: 1e-7,
      xtol: 1e-9,
    });
    if (lm.stop === 'nonFinite' || !Number.isFinite(lm.objective)) return null;
    free.forEach((param, f) => (all[param] = lm.params[f]));
    const taus = L.lnTau.map((p) => Math.exp(all[p]));
    // Same ordering rule as the fitter: ascending unless a lifetime is fixed or bounded by name.
    if (!tausByName) taus.sort((a, b) => a - b);
    return taus.every(Number.isFinite) ? taus : null;
  };
}

/** Percentile by linear interpolation between order statistics (the usual "type 7" definition). */
export function percentile(sorted: ArrayLike<number>, q: number): number {
  const n = sorted.length;
  if (n === 0 || !(q >= 0 && q <= 1)) return NaN;
  const h = (n - 1) * q;
  const lo = Math.floor(h);
  const hi = Math.min(lo + 1, n - 1);
  return sorted[lo] + (h - lo) * (sorted[hi] - sorted[lo]);
}

function standardDeviation(xs: ArrayLike<number>): number {
  const n = xs.length;
  if (n < 2) return NaN;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += xs[i];
  mean /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (xs[i] - mean) ** 2;
  return Math.sqrt(ss / (n - 1));
}

/**
 * Returns a new FitResult whose components carry `tauBootstrapErrNs` (standard deviation over the
 * replicates) and `tauBootstrapCi95Ns` (2.5 % and 97.5 % percentiles). Each replicate keeps the data
 * outside the fit range, replaces the counts inside it by Poisson draws with the fitted model as mean,
 * and is refitted on the same channels with the same fixed parameters (see `settings.refit`). Replicates
 * whose refit fails are left out and counted in a warning. Inputs are not mutated.
 */
export function addBootstrap(
  result: FitResult,
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions,
  fitModel: FitModelFn,
  settings: BootstrapSettings = {},
): FitResult {
  const replicates = Math.floor(
    settings.replicates ?? (options.bootstrap && options.bootstrap > 0 ? options.bootstrap : 200),
  );
  const minSuccessful = settings.minSuccessful ?? 10;
  const rng = createRng(settings.seed ?? options.seed ?? 1);
  const model = result.curves.model;
  const start = result.curves.fitStartIndex;
  const end = result.curves.fitEndIndex;
  const nComp = result.nComponents;
  const refitOptions: FitOptions & { components: number } = {
    ...options,
    components: nComp,
    rangeChannels: [start, end + 1],
    bootstrap: 0,
    profile: false,
  };
  const fromBest =
    (settings.refit ?? 'fromBest') === 'fromBest' ? refitFromBest(result, decay, irf, refitOptions) : null;
  const fullFit = (counts: Float64Array, k: number): number[] | null => {
    const replicate: Histogram = {
      ...decay,
      counts,
      metadata: { ...decay.metadata },
      warnings: [],
      source: `${decay.source} (bootstrap replicate ${k + 1})`,
    };
    try {
      const fit = fitModel(replicate, irf, refitOptions);
      const ok = fit.stop !== 'nonFinite' && fit.components.length === nComp;
      const taus = fit.components.map((c) => c.tauNs);
      return ok && taus.every(Number.isFinite) ? taus : null;
    } catch {
      return null;
    }
  };
  const taus: number[][] = Array.from({ length: nComp }, () => []);
  let failed = 0;
  for (let k = 0; k < replicates; k++) {
    const counts = Float64Array.from(decay.counts);
    for (let i = start; i <= end; i++) {
      const mean = model[i];
      counts[i] = mean === null ? counts[i] : rng.poisson(Math.max(mean, 0));
    }
    const refitted = (fromBest && fromBest(counts)) ?? fullFit(counts, k);
    if (refitted === null) {
      failed++;
      continue;
    }
    refitted.forEach((tau, j) => taus[j].push(tau));
  }
  const ok = replicates - failed;
  const warnings = [...result.warnings];
  if (failed > 0)
    warnings.push(`bootstrap: ${failed} of ${replicates} replicates failed to fit and were left out`);
  const enough = ok >= minSuccessful;
  if (!enough)
    warnings.push(
      `bootstrap: only ${ok} replicates succeeded (need ${minSuccessful}); no bootstrap errors reported`,
    );
  const components = result.components.map((c, i) => {
    if (!enough) return { ...c, tauBootstrapErrNs: NaN, tauBootstrapCi95Ns: [NaN, NaN] as [number, number] };
    const sorted = Float64Array.from(taus[i]).sort();
    return {
      ...c,
      tauBootstrapErrNs: standardDeviation(sorted),
      tauBootstrapCi95Ns: [percentile(sorted, 0.025), percentile(sorted, 0.975)] as [number, number],
    };
  });
  return { ...result, components, warnings };
}
