/**
 * Choosing the number of exponential components (`components: 'auto'`): fit 1, 2, … components, keep
 * adding while the extra component is both statistically significant (likelihood-ratio test) and worth
 * its parameters (BIC), and stop at the first fit that is degenerate.
 */

import type { ComponentSelection, FitResult } from '../../shared/schema.js';
import { formatNumber } from '../../shared/format.js';
import type { Histogram } from '../io/types.js';
import { likelihoodRatioPValue } from './diagnostics.js';
import { TAU_MAX_NS, TAU_MIN_NS } from './fitSetup.js';
import type { FitOptions } from './options.js';

/** The single-model fit that the wrappers drive (injected so that they can be tested on their own). */
export type FitModelFn = (
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions & { components: number },
) => FitResult;

export interface SelectionSettings {
  /** Most components tried. Default: 4. */
  maxComponents?: number;
  /** Significance level of the likelihood-ratio test. Default: 0.01. */
  alpha?: number;
  /** A component below this fraction of both the amplitude and the intensity counts as absent. Default: 0.01. */
  minFraction?: number;
  /** Adjacent lifetimes closer than this ratio count as merged. Default: 1.1. */
  minTauRatio?: number;
}

/** Free parameters added with each component: its lifetime and its amplitude. */
const PARAMS_PER_COMPONENT = 2;

const ORDINALS = ['first', 'second', 'third', 'fourth', 'fifth', 'sixth'];

/**
 * The minimised figure of merit, whose difference between nested fits is the likelihood-ratio statistic:
 * the Poisson deviance, or for least squares the weighted χ² the fit minimised. The reported `chi2` is
 * always Pearson's, so for least squares the minimised value is taken back out of AIC = merit + 2k,
 * with k = fitted channels − dof.
 */
export function meritOf(fit: FitResult): number {
  if (fit.statistic === 'poisson') return fit.deviance;
  const nPoints = fit.curves.fitEndIndex - fit.curves.fitStartIndex + 1;
  return fit.aic - 2 * (nPoints - fit.dof);
}

export function meritName(fit: FitResult): string {
  return fit.statistic === 'poisson' ? 'deviance' : 'χ²';
}

/**
 * Why a fit cannot be trusted as an n-component description, or null when it can: a lifetime on its
 * bound, two lifetimes that merged, a component too small to matter, or a fit that did not finish.
 */
export function degeneracyOf(
  fit: FitResult,
  options: FitOptions,
  settings: SelectionSettings = {},
): string | null {
  const minFraction = settings.minFraction ?? 0.01;
  const minTauRatio = settings.minTauRatio ?? 1.1;
  if (fit.stop === 'nonFinite' || !Number.isFinite(meritOf(fit)))
    return 'the fit did not reach a finite optimum';
  const comps = fit.components;
  for (let i = 0; i < comps.length; i++) {
    const name = `tau${i + 1}Ns`;
    if (comps[i].fixed || options.fix?.[name] !== undefined) continue;
    const lo = options.bounds?.[name]?.min ?? TAU_MIN_NS;
    const hi = options.bounds?.[name]?.max ?? TAU_MAX_NS;
    const tau = comps[i].tauNs;
    if (!Number.isFinite(tau)) return `τ${i + 1} is not finite`;
    if (tau <= lo * 1.001) return `τ${i + 1} sits at its lower bound ${formatNumber(lo, { digits: 3 })} ns`;
    if (tau >= hi * 0.999) return `τ${i + 1} sits at its upper bound ${formatNumber(hi, { digits: 3 })} ns`;
  }
  const order = comps.map((c, i) => ({ tau: c.tauNs, i })).sort((a, b) => a.tau - b.tau);
  for (let j = 1; j < order.length; j++) {
    const a = comps[order[j - 1].i];
    const b = comps[order[j].i];
    const overlap = Math.abs(b.tauNs - a.tauNs) < 2 * Math.hypot(a.tauErrNs, b.tauErrNs);
    if (b.tauNs < a.tauNs * minTauRatio || overlap) {
      return `τ${order[j - 1].i + 1} = ${formatNumber(a.tauNs, { digits: 3 })} ns and τ${order[j].i + 1} = ${formatNumber(b.tauNs, { digits: 3 })} ns are not resolved`;
    }
  }
  for (let i = 0; i < comps.length && comps.length > 1; i++) {
    const c = comps[i];
    if (Math.abs(c.amplitudeFraction) < minFraction && Math.abs(c.intensityFraction) < minFraction) {
      return `component ${i + 1} carries under ${Number((100 * minFraction).toPrecision(3))} % of both amplitude and intensity`;
    }
  }
  return null;
}

function pText(p: number): string {
  if (!Number.isFinite(p)) return 'p undefined';
  return p < 1e-4 ? 'p < 0.0001' : `p = ${formatNumber(p, { digits: 2 })}`;
}

function changeText(delta: number, what: string): string {
  const v = formatNumber(Math.abs(delta), { digits: 2 });
  return delta <= 0 ? `lowered ${what} by ${v}` : `raised ${what} by ${v}`;
}

const CAVEAT =
  ' (The likelihood-ratio p-value is approximate: a vanishing component lies on the boundary of the ' +
  'parameter space, where the χ² reference distribution only roughly holds, so BIC must agree as well.)';

/**
 * Fits 1 … maxComponents components with `fitModel` and returns the chosen fit with `componentSelection`
 * filled in: every candidate with its deviance (or χ²), reduced χ², AIC, BIC and the p-value of the
 * likelihood-ratio test against one component fewer (Δp = 2 per added component), and a plain sentence
 * saying why. A component is added when the test rejects the smaller model at `alpha` AND BIC falls, and
 * the search stops at the first candidate that fails either or is degenerate (see degeneracyOf).
 * Errors from the one-component fit propagate; a larger fit that throws ends the search.
 */
export function selectComponents(
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions,
  fitModel: FitModelFn,
  settings: SelectionSettings = {},
): FitResult {
  const maxComponents = Math.max(1, Math.min(4, Math.floor(settings.maxComponents ?? 4)));
  const alpha = settings.alpha ?? 0.01;
  const candidates: ComponentSelection['candidates'] = [];
  const candidate = (fit: FitResult, lrtPValue?: number): ComponentSelection['candidates'][number] => ({
    nComponents: fit.nComponents,
    deviance: meritOf(fit),
    chi2Reduced: fit.chi2Reduced,
    aic: fit.aic,
    bic: fit.bic,
    ...(lrtPValue === undefined ? {} : { lrtPValue }),
  });

  let chosen = fitModel(decay, irf, { ...options, components: 1 });
  candidates.push(candidate(chosen));
  const firstProblem = degeneracyOf(chosen, options, settings);
  /** Why the last accepted component was accepted, and why the search stopped. */
  let accepted = '';
  let stopped = '';

  for (let n = 2; n <= maxComponents; n++) {
    const ord = ORDINALS[n - 1];
    let next: FitResult;
    try {
      next = fitModel(decay, irf, { ...options, components: n });
    } catch (err) {
      stopped = `a ${n}-component fit failed (${(err as Error).message})`;
      break;
    }
    const deltaMerit = meritOf(next) - meritOf(chosen);
    const deltaBic = next.bic - chosen.bic;
    const p = likelihoodRatioPValue(-deltaMerit, PARAMS_PER_COMPONENT);
    candidates.push(candidate(next, p));
    const effect =
      `the ${ord} ${changeText(deltaMerit, `the ${meritName(next)}`)} (${pText(p)}) ` +
      `and ${changeText(deltaBic, 'BIC')}`;
    const problem = degeneracyOf(next, options, settings);
    if (problem !== null) {
      stopped = `a ${n}-component fit is degenerate (${problem}); ${effect}`;
      break;
    }
    if (!(p < alpha) || !(deltaBic < 0)) {
      stopped = effect;
      break;
    }
    chosen = next;
    accepted = effect;
    if (n === maxComponents) stopped = `${n} is the most tried`;
  }

  const k = chosen.nComponents;
  const parts = [accepted, stopped].filter((t) => t !== '');
  let reason = `${k} component${k > 1 ? 's' : ''}: ${parts.length ? parts.join('; ') : 'only one was tried'}.`;
  if (candidates.length > 1) reason += CAVEAT;
  if (firstProblem !== null && k === 1)
    reason += ` The one-component fit is itself doubtful: ${firstProblem}.`;

  return {
    ...chosen,
    componentSelection: { chosen: chosen.nComponents, candidates, reason },
  };
}
