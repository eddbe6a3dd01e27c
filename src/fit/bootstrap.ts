/**
 * Seeded parametric bootstrap of the lifetimes: draw Poisson counts from the fitted model, refit, and
 * take the spread of the refitted lifetimes as their uncertainty. It needs no curvature approximation,
 * so it shows skewed or correlated errors (short components, low counts) that the Fisher-information
 * errors hide; its cost is one fit per replicate.
 */

import type { FitResult } from '../../shared/schema.js';
import type { Histogram } from '../io/types.js';
import { createRng } from '../sim/rng.js';
import type { FitOptions } from './options.js';
import type { FitModelFn } from './selectComponents.js';

export interface BootstrapSettings {
  /** Replicates. Default: options.bootstrap, else 200. */
  replicates?: number;
  /** Seed of the Poisson draws. Default: options.seed, else 1. */
  seed?: number;
  /** Fewest successful replicates for which errors are reported. Default: 10. */
  minSuccessful?: number;
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
 * and is refitted on the same channels with the same fixed parameters. Replicates whose fit throws or
 * ends non-finite are left out and counted in a warning. Inputs are not mutated.
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
  const taus: number[][] = Array.from({ length: nComp }, () => []);
  let failed = 0;
  for (let k = 0; k < replicates; k++) {
    const counts = Float64Array.from(decay.counts);
    for (let i = start; i <= end; i++) {
      const mean = model[i];
      counts[i] = mean === null ? counts[i] : rng.poisson(Math.max(mean, 0));
    }
    const replicate: Histogram = {
      ...decay,
      counts,
      metadata: { ...decay.metadata },
      warnings: [],
      source: `${decay.source} (bootstrap replicate ${k + 1})`,
    };
    let fit: FitResult;
    try {
      fit = fitModel(replicate, irf, refitOptions);
    } catch {
      failed++;
      continue;
    }
    if (
      fit.stop === 'nonFinite' ||
      fit.components.length !== nComp ||
      fit.components.some((c) => !Number.isFinite(c.tauNs))
    ) {
      failed++;
      continue;
    }
    fit.components.forEach((c, i) => taus[i].push(c.tauNs));
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
