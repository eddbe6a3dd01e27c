/**
 * One decay's model as a block of a larger fit: the decay model built from a checked fit setup, its
 * parameter vector filled from a finished fit, and its free parameters with their bounds. The global
 * (linked-lifetime) fit stacks several blocks; the bootstrap refits one block from the best fit.
 */

import type { FitResult } from '../../shared/schema.js';
import { FWHM_PER_SIGMA } from '../model/gaussianIrf.js';
import { DecayModel } from './decayModel.js';
import { SHIFT_MAX_NS, TAU_MAX_NS, TAU_MIN_NS, type FitSetup } from './fitSetup.js';

/**
 * The decay model of a setup, as the single-decay fitter builds it (scatter scaled by the counts in
 * range). `sharedScratch`: see the DecayModel constructor; only for a model used alone.
 */
export function decayModelFor(setup: FitSetup, sharedScratch = false): DecayModel {
  let totalInRange = 0;
  for (let i = setup.fitStart; i < setup.fitEnd; i++) totalInRange += setup.counts[i];
  return new DecayModel(
    {
      mode: setup.mode,
      nComponents: setup.nComponents,
      channels: setup.channels,
      binWidthNs: setup.binWidthNs,
      firstEdgeNs: setup.firstEdgeNs,
      periodNs: setup.periodNs,
      irf: setup.irf,
      scatter: setup.scatter,
      scatterScale: Math.max(totalInRange, 1),
      fitStart: setup.fitStart,
      fitEnd: setup.fitEnd,
      tailStart: setup.tailStart,
    },
    sharedScratch,
  );
}

/**
 * The model's parameter vector at a finished fit of the same setup. Component j of the result fills
 * amplitude j and lifetime j: the fitter lists components in parameter order (ascending τ, or the order
 * of the names when a lifetime was fixed or bounded by name).
 */
export function parametersFromFit(model: DecayModel, fit: FitResult): Float64Array {
  const L = model.layout;
  const all = new Float64Array(L.count);
  fit.components.forEach((c, j) => {
    all[L.amplitude[j]] = c.amplitude;
    all[L.lnTau[j]] = Math.log(c.tauNs);
  });
  all[L.background] = fit.background;
  if (L.scatter >= 0) all[L.scatter] = fit.scatter;
  if (L.shift >= 0) all[L.shift] = fit.shiftNs;
  if (L.irfCenter >= 0) all[L.irfCenter] = fit.irfCenterNs ?? NaN;
  if (L.irfSigma >= 0) all[L.irfSigma] = (fit.irfFwhmNs ?? NaN) / FWHM_PER_SIGMA;
  return all;
}

/** Bounds of a model parameter (internal units: ln τ, Gaussian σ) with the fitter's defaults. */
export function parameterBounds(setup: FitSetup, name: string): [number, number] {
  const b = setup.bounds[name] ?? {};
  const window = setup.channels * setup.binWidthNs;
  if (name.startsWith('amplitude'))
    return setup.allowNegativeAmplitudes ? [-Infinity, Infinity] : [0, Infinity];
  if (/^tau\dNs$/.test(name)) return [Math.log(b.min ?? TAU_MIN_NS), Math.log(b.max ?? TAU_MAX_NS)];
  if (name === 'background' || name === 'scatter') return [b.min ?? 0, b.max ?? Infinity];
  if (name === 'shiftNs') return [b.min ?? -SHIFT_MAX_NS, b.max ?? SHIFT_MAX_NS];
  if (name === 'irfCenterNs') return [b.min ?? setup.firstEdgeNs, b.max ?? setup.firstEdgeNs + window];
  if (name === 'irfFwhmNs') {
    return [(b.min ?? setup.binWidthNs / 4) / FWHM_PER_SIGMA, (b.max ?? window / 4) / FWHM_PER_SIGMA];
  }
  return [-Infinity, Infinity];
}

/** The model parameters the setup leaves free (not fixed by name), optionally without the lifetimes. */
export function freeParameters(setup: FitSetup, model: DecayModel, withLifetimes: boolean): number[] {
  const L = model.layout;
  const out: number[] = [];
  for (let p = 0; p < L.count; p++) {
    if (!withLifetimes && L.lnTau.includes(p)) continue;
    if (setup.fix[L.names[p]] !== undefined) continue;
    out.push(p);
  }
  return out;
}
