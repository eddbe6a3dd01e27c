/**
 * Profile-likelihood (support-plane) intervals for the lifetimes: for each free τᵢ, the range of values
 * where the figure of merit, minimised over every other parameter with τᵢ held fixed, stays within 1 of
 * its minimum. For one parameter of interest Δ(−2 ln L) = 1 (or Δχ² = 1 for least squares) is the
 * 68.3 % interval of Wilks' theorem; unlike the curvature error it may be asymmetric, which it is for
 * lifetimes at low counts.
 *
 * Matching: the fitter returns components sorted by ascending lifetime and names them tau1Ns … in that
 * order, so `components[i]` is profiled by fixing `tau${i + 1}Ns`.
 */

import type { FitResult } from '../../shared/schema.js';
import type { Histogram } from '../io/types.js';
import { TAU_MAX_NS, TAU_MIN_NS } from './fitSetup.js';
import type { FitOptions } from './options.js';
import { meritOf, type FitModelFn } from './selectComponents.js';

export interface ProfileSettings {
  /** Rise of the figure of merit that bounds the interval. Default: 1 (68.3 % for one parameter). */
  deltaMerit?: number;
  /** Refits allowed per side of each interval. Default: 12. */
  maxRefitsPerSide?: number;
  /** Stop when the merit is within this of its target. Default: 0.01. */
  meritTolerance?: number;
}

export interface ProfileCrossing {
  /** Where the merit crossed its target; the bound when the interval is open there; NaN when not found. */
  tauNs: number;
  /** Refits spent. */
  refits: number;
  /** Why the crossing is open or missing. */
  warning?: string;
}

export interface CrossingSearch {
  /** Rise of the profiled merit above its minimum at a fixed τ (NaN when the refit failed). */
  profile: (tauNs: number) => number;
  bestTauNs: number;
  /** First step away from the optimum, ns (about one standard error). */
  firstStepNs: number;
  direction: 1 | -1;
  /** The τ bound on this side, ns. */
  boundNs: number;
  /** The rise that bounds the interval (1 for 68.3 %). */
  target: number;
  /** Accept a point whose rise is within this of the target. */
  tolerance: number;
  maxRefits: number;
  /** Names the search in warnings. */
  label: string;
}

/**
 * Finds where the profiled merit crosses its target on one side of the optimum. The profile is close to
 * a parabola, so √Δ is close to linear in τ: the search steps outwards until √Δ exceeds √target, then
 * interpolates linearly in √Δ (regula falsi, kept off the bracket's ends) inside the bracket.
 */
export function profileCrossing(search: CrossingSearch): ProfileCrossing {
  const { profile, bestTauNs, firstStepNs, direction, boundNs, target, tolerance, maxRefits, label } = search;
  const root = Math.sqrt(target);
  const rise = (tau: number): number => Math.sqrt(Math.max(profile(tau), 0));
  // Inner point of the bracket: the optimum itself, where the rise is 0.
  let inTau = bestTauNs;
  let inRise = 0;
  let step = firstStepNs;
  let refits = 0;
  let outTau = NaN;
  let outRise = NaN;
  while (refits < maxRefits) {
    let tau = inTau + direction * step;
    if (direction * (tau - boundNs) >= 0) tau = boundNs;
    const r = rise(tau);
    refits++;
    if (!Number.isFinite(r))
      return { tauNs: NaN, refits, warning: `${label}: a refit with τ fixed at ${tau} ns failed` };
    if (Math.abs(r * r - target) <= tolerance) return { tauNs: tau, refits };
    if (r > root) {
      outTau = tau;
      outRise = r;
      break;
    }
    if (tau === boundNs) {
      return {
        tauNs: boundNs,
        refits,
        warning: `${label}: the interval is open up to the bound ${boundNs} ns`,
      };
    }
    // Still inside: the next step aims at the crossing of the linear √Δ model, at least doubling.
    const slope = (r - inRise) / Math.abs(tau - inTau);
    const aim = slope > 0 ? (root - r) / slope : Infinity;
    inTau = tau;
    inRise = r;
    step = Math.min(Math.max(1.2 * aim, step), 8 * step);
  }
  if (!Number.isFinite(outTau)) {
    return { tauNs: NaN, refits, warning: `${label}: no crossing found within ${maxRefits} refits` };
  }
  let best = outTau;
  while (refits < maxRefits) {
    // Regula falsi in √Δ, kept off the bracket's ends so that the bracket shrinks by ≥ 10 % per refit.
    const frac = Math.min(0.9, Math.max(0.1, (root - inRise) / (outRise - inRise)));
    const tau = inTau + frac * (outTau - inTau);
    const r = rise(tau);
    refits++;
    if (!Number.isFinite(r))
      return { tauNs: NaN, refits, warning: `${label}: a refit with τ fixed at ${tau} ns failed` };
    best = tau;
    if (Math.abs(r * r - target) <= tolerance) return { tauNs: tau, refits };
    if (r > root) {
      outTau = tau;
      outRise = r;
    } else {
      inTau = tau;
      inRise = r;
    }
  }
  return { tauNs: best, refits, warning: `${label}: stopped after ${maxRefits} refits near ${best} ns` };
}

/**
 * Returns a new FitResult whose free lifetimes carry `tauProfileNs` = [lower, upper], found by refitting
 * with that lifetime fixed (via `options.fix`) and root-finding on each side. Inputs are not mutated.
 * A side that reaches a τ bound before the merit has risen enough is reported open at that bound; a side
 * that cannot be found is NaN; each such case adds a warning.
 */
export function addProfileIntervals(
  result: FitResult,
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions,
  fitModel: FitModelFn,
  settings: ProfileSettings = {},
): FitResult {
  const deltaMerit = settings.deltaMerit ?? 1;
  const tolerance = settings.meritTolerance ?? 0.01;
  const maxRefits = settings.maxRefitsPerSide ?? 12;
  const best = meritOf(result);
  const warnings = [...result.warnings];
  // Profile on exactly the channels and model of the best fit.
  const base: FitOptions & { components: number } = {
    ...options,
    components: result.nComponents,
    rangeChannels: [result.curves.fitStartIndex, result.curves.fitEndIndex + 1],
    profile: false,
    bootstrap: 0,
  };
  const components = result.components.map((c, i) => {
    const name = `tau${i + 1}Ns`;
    if (c.fixed || options.fix?.[name] !== undefined) return { ...c };
    let lowest = 0;
    const profile = (tauNs: number): number => {
      try {
        const fit = fitModel(decay, irf, { ...base, fix: { ...options.fix, [name]: tauNs } });
        const delta = fit.stop === 'nonFinite' ? NaN : meritOf(fit) - best;
        if (delta < lowest) lowest = delta;
        return delta;
      } catch {
        return NaN;
      }
    };
    const lo = options.bounds?.[name]?.min ?? TAU_MIN_NS;
    const hi = options.bounds?.[name]?.max ?? TAU_MAX_NS;
    const step = Number.isFinite(c.tauErrNs) && c.tauErrNs > 0 ? c.tauErrNs : 0.05 * c.tauNs;
    const label = `profile of τ${i + 1}`;
    const common = { profile, bestTauNs: c.tauNs, target: deltaMerit, tolerance, maxRefits };
    const lower = profileCrossing({
      ...common,
      firstStepNs: Math.min(step, 0.5 * (c.tauNs - lo)),
      direction: -1,
      boundNs: lo,
      label: `${label} (lower side)`,
    });
    const upper = profileCrossing({
      ...common,
      firstStepNs: step,
      direction: 1,
      boundNs: hi,
      label: `${label} (upper side)`,
    });
    for (const side of [lower, upper]) if (side.warning) warnings.push(side.warning);
    if (lowest < -0.1 * deltaMerit) {
      warnings.push(
        `${label}: a refit with τ${i + 1} fixed reached a merit ${(-lowest).toPrecision(2)} below the best fit's, ` +
          'so the best fit was not the global optimum and the interval is approximate',
      );
    }
    return { ...c, tauProfileNs: [lower.tauNs, upper.tauNs] as [number, number] };
  });
  return { ...result, components, warnings };
}
