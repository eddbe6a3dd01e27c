/**
 * Radiative and non-radiative rate constants from a lifetime and a fluorescence quantum yield:
 * k_r = Φ/τ, k_nr = (1−Φ)/τ, τ₀ = 1/k_r, with first-order (linear) propagation of independent
 * uncertainties in Φ and τ:
 *   σ(k_r)² = (σ_Φ/τ)² + (Φσ_τ/τ²)²,  σ(k_nr)² = (σ_Φ/τ)² + ((1−Φ)σ_τ/τ²)²,
 *   cov(k_r, k_nr) = −σ_Φ²/τ² + Φ(1−Φ)σ_τ²/τ⁴.
 */
import {
  SCHEMA_VERSION,
  type FitResult,
  type RatesLifetimeBasis,
  type RatesResult,
} from '../../shared/schema.js';
import { InputError } from '../errors.js';

export interface RatesInput {
  /** Fluorescence quantum yield, in (0, 1]. */
  qy: number;
  /** Standard uncertainty of Φ. Default: 0. */
  qyErr?: number;
  /** Lifetime, ns; > 0. */
  tauNs: number;
  /** Standard uncertainty of τ, ns. Default: 0. */
  tauErrNs?: number;
  /** Which lifetime τ is. Default: 'single'. */
  tauBasis?: RatesLifetimeBasis;
}

/** Below this Φ, k_r is a small difference-free number but carries Φ's full relative error; warn. */
const QY_LOW_WARN = 0.05;
/** Above this Φ, k_nr = (1−Φ)/τ is a small difference of nearly equal numbers; warn. */
const QY_HIGH_WARN = 0.95;
/** Relative error above which a rate is reported as ill-determined. */
const ILL_DETERMINED_REL = 0.5;

function requireFinite(name: string, value: unknown): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new InputError(`${name} must be a finite number, got ${String(value)}.`);
  }
  return value;
}

function requireNonNegative(name: string, value: number | undefined): number {
  if (value === undefined) return 0;
  const v = requireFinite(name, value);
  if (v < 0) throw new InputError(`${name} must be ≥ 0 (it is a standard uncertainty), got ${v}.`);
  return v;
}

/** Rates from one Φ and one τ, with their uncertainties. Throws InputError for Φ ∉ (0, 1] or τ ≤ 0. */
export function computeRates(input: RatesInput): RatesResult {
  const qy = requireFinite('The quantum yield Φ', input.qy);
  const tauNs = requireFinite('The lifetime τ', input.tauNs);
  if (!(qy > 0 && qy <= 1)) {
    throw new InputError(
      `the quantum yield Φ = ${qy} is outside (0, 1]; a yield is a fraction of absorbed photons that are emitted ` +
        `(give 0.35, not 35 %).`,
    );
  }
  if (!(tauNs > 0)) throw new InputError(`the lifetime τ = ${tauNs} ns must be > 0.`);
  const qyErr = requireNonNegative('The uncertainty of Φ', input.qyErr);
  const tauErrNs = requireNonNegative('The uncertainty of τ', input.tauErrNs);

  const tauS = tauNs * 1e-9;
  const tauErrS = tauErrNs * 1e-9;
  const krPerS = qy / tauS;
  const knrPerS = (1 - qy) / tauS;
  const dQy = qyErr / tauS; // ∂k/∂Φ · σ_Φ, same magnitude for both rates
  const krErrPerS = Math.hypot(dQy, (qy * tauErrS) / tauS ** 2);
  const knrErrPerS = Math.hypot(dQy, ((1 - qy) * tauErrS) / tauS ** 2);
  const krKnrCovPerS2 = -(qyErr ** 2) / tauS ** 2 + (qy * (1 - qy) * tauErrS ** 2) / tauS ** 4;
  const tau0Ns = 1e9 / krPerS;
  const tau0ErrNs = tau0Ns * (krErrPerS / krPerS);

  const warnings: string[] = [];
  const notes: string[] = [
    'k_r = Φ/τ and k_nr = (1−Φ)/τ assume that every excited molecule either emits or decays without emission from ' +
      'the same emitting state, and that Φ and τ were measured on the same sample under the same conditions.',
  ];
  if (qyErr > 0 || tauErrNs > 0) {
    notes.push('Uncertainties are first-order (linear) propagation of independent σ_Φ and σ_τ.');
  } else {
    notes.push('No uncertainties were given for Φ or τ, so the rates carry none.');
  }
  if (qy <= QY_LOW_WARN) {
    warnings.push(
      `Φ = ${qy} is close to 0: k_nr ≈ 1/τ is well determined, but k_r = Φ/τ carries the full relative error of Φ ` +
        '(small yields are hard to measure accurately).',
    );
  }
  if (qy >= QY_HIGH_WARN) {
    warnings.push(
      `Φ = ${qy} is close to 1: k_r ≈ 1/τ is well determined, but k_nr = (1−Φ)/τ is ill-determined ` +
        '(a small difference of nearly equal numbers).',
    );
  }
  if (qyErr > 0 && (qy - 2 * qyErr <= 0 || qy + 2 * qyErr >= 1)) {
    warnings.push(
      `Φ ± 2σ (${qy} ± ${2 * qyErr}) reaches a physical limit (0 or 1); first-order error bars are not reliable there.`,
    );
  }
  if (knrPerS > 0 && knrErrPerS / knrPerS > ILL_DETERMINED_REL && qy < QY_HIGH_WARN) {
    warnings.push(
      `k_nr has a relative uncertainty of ${Math.round((100 * knrErrPerS) / knrPerS)} %: it is ill-determined.`,
    );
  }
  if (krErrPerS / krPerS > ILL_DETERMINED_REL && qy > QY_LOW_WARN) {
    warnings.push(
      `k_r has a relative uncertainty of ${Math.round((100 * krErrPerS) / krPerS)} %: it is ill-determined.`,
    );
  }

  return {
    schemaVersion: SCHEMA_VERSION,
    qy,
    qyErr,
    tauNs,
    tauErrNs,
    tauBasis: input.tauBasis ?? 'single',
    krPerS,
    krErrPerS,
    knrPerS,
    knrErrPerS,
    krKnrCovPerS2,
    tau0Ns,
    tau0ErrNs,
    notes,
    warnings,
  };
}

export interface RatesFromFitOptions {
  /**
   * Assert that every decay component shares one radiative rate (one emitting species whose
   * non-radiative decay is heterogeneous). Adds per-component k_nr,i = 1/τᵢ − k_r. Default: false.
   */
  commonKr?: boolean;
}

/** Why the amplitude-weighted average lifetime goes with a steady-state yield. */
export const AMPLITUDE_AVERAGE_NOTE =
  'Multi-exponential decay: τ is the amplitude-weighted average ⟨τ⟩_a = Σaᵢτᵢ/Σaᵢ. A steady-state quantum yield ' +
  'counts all emitted photons, ∫I dt ∝ Σaᵢτᵢ, so with a common radiative rate Φ = k_r·Σaᵢτᵢ/Σaᵢ = k_r⟨τ⟩_a; the ' +
  'intensity-weighted average (the mean photon arrival time) would understate k_r.';

/**
 * Rates from a decay fit and a measured yield. One component: its τ. Several: the amplitude-weighted
 * average ⟨τ⟩_a with its error as the fit reports it (see AMPLITUDE_AVERAGE_NOTE); with `commonKr`
 * also k_nr per component.
 */
export function ratesFromFit(
  fit: FitResult,
  qy: { qy: number; qyErr?: number },
  options: RatesFromFitOptions = {},
): RatesResult {
  const comps = fit.components;
  if (!Array.isArray(comps) || comps.length === 0) {
    throw new InputError(
      'the fit result has no decay components, so there is no lifetime to compute rates from.',
    );
  }
  for (const [i, c] of comps.entries()) {
    if (!(Number.isFinite(c.tauNs) && c.tauNs > 0)) {
      throw new InputError(
        `component ${i + 1} of the fit has lifetime ${c.tauNs} ns; lifetimes must be finite and > 0.`,
      );
    }
  }
  const single = comps.length === 1;
  const extraWarnings: string[] = [];
  let tauNs: number;
  let tauErrNs: number;
  if (single) {
    tauNs = comps[0].tauNs;
    tauErrNs = comps[0].tauErrNs;
  } else {
    tauNs = fit.tauAmpAvgNs;
    tauErrNs = fit.tauAmpAvgErrNs;
    if (!(Number.isFinite(tauNs) && tauNs > 0)) {
      // Recompute rather than trust a missing summary; amplitudes are what define it.
      const sumA = comps.reduce((s, c) => s + c.amplitude, 0);
      tauNs = comps.reduce((s, c) => s + c.amplitude * c.tauNs, 0) / sumA;
    }
    if (comps.some((c) => c.amplitude < 0)) {
      extraWarnings.push(
        'A component has a negative amplitude (a rise): the emitting state is populated in time, and Φ = k_r⟨τ⟩_a ' +
          'no longer holds for one species.',
      );
    }
  }
  if (!(Number.isFinite(tauErrNs) && tauErrNs >= 0)) {
    extraWarnings.push(
      'The fit reports no usable lifetime uncertainty; the rates carry only the yield uncertainty.',
    );
    tauErrNs = 0;
  }
  const base = computeRates({
    qy: qy.qy,
    qyErr: qy.qyErr,
    tauNs,
    tauErrNs,
    tauBasis: single ? 'single' : options.commonKr ? 'perComponent' : 'amplitudeWeighted',
  });
  base.warnings.push(...extraWarnings);
  if (!fit.converged)
    base.warnings.push(`The decay fit did not converge (stop: ${fit.stop}); treat the rates with care.`);
  if (!single) base.notes.push(AMPLITUDE_AVERAGE_NOTE);

  if (options.commonKr && !single) {
    base.notes.push(
      'Per-component rates assume one common k_r: k_nr,i = 1/τᵢ − k_r. Their errors combine σ(τᵢ) and σ(k_r) as ' +
        'independent (the correlation through ⟨τ⟩_a is neglected).',
    );
    base.perComponent = comps.map((c, i) => {
      const kTot = 1e9 / c.tauNs;
      const knrPerS = kTot - base.krPerS;
      const knrErrPerS = Math.hypot((kTot * (c.tauErrNs || 0)) / c.tauNs, base.krErrPerS);
      if (knrPerS < 0) {
        base.warnings.push(
          `Component ${i + 1} (τ = ${c.tauNs} ns) is longer than the radiative lifetime τ₀ = ${base.tau0Ns.toPrecision(4)} ns: ` +
            'a common k_r is inconsistent with it (its k_nr comes out negative).',
        );
      }
      return { tauNs: c.tauNs, knrPerS, knrErrPerS };
    });
  } else if (options.commonKr && single) {
    base.notes.push(
      'A common k_r was asserted, but the decay has one component: nothing per component to add.',
    );
  }
  return base;
}
