import type { Statistic } from '../../shared/schema.js';

/**
 * Options of a decay fit. Every field is optional; defaults are documented on each field.
 * Parameter names used by `fix` and `bounds`: tau1Ns … tau4Ns, shiftNs, background (counts per
 * channel), scatter (fraction), irfFwhmNs (modelled Gaussian IRF only).
 */
export interface FitOptions {
  /** Number of exponential components, 1–4, or 'auto' (model selection). Default: 1. */
  components?: number | 'auto';
  /** Figure of merit. Default: 'poisson' (maximum likelihood, Poisson deviance). */
  statistic?: Statistic;
  /** Fit range [start, end) in ns on the decay's time axis. Default: chosen from the data (see fitter docs). */
  rangeNs?: [number, number];
  /** Fit range [start, end) in channel indices; wins over rangeNs when both are given. */
  rangeChannels?: [number, number];
  /** Laser repetition period, ns; adds the tails of earlier pulses. Default: null (single pulse). */
  periodNs?: number | null;
  /** Parameters held fixed at the given value, by name (see above). Default: none. */
  fix?: Record<string, number>;
  /** Bounds on parameters, by name. Defaults: τ in [0.005, 1000] ns, |shift| ≤ 2 ns, background ≥ 0. */
  bounds?: Record<string, { min?: number; max?: number }>;
  /** Allow negative amplitudes (rise components of excited-state reactions). Default: false. */
  allowNegativeAmplitudes?: boolean;
  /**
   * How the IRF enters: 'measured' (the given IRF histogram), 'gaussian' (a modelled Gaussian with
   * fitted width and position), 'none' (a tail fit from `tailStartNs`, no reconvolution).
   * Default: 'measured' when an IRF is given, otherwise 'gaussian'.
   */
  irfMode?: 'measured' | 'gaussian' | 'none';
  /** Tail fit only: where the fitted tail starts, ns. Default: peak channel + 2 IRF widths. */
  tailStartNs?: number;
  /**
   * When the IRF's channel width differs from the decay's, rebin the IRF onto the decay's channels
   * (counts-conserving) instead of refusing. Default: false (widths must agree within 0.1 %).
   */
  resampleIrf?: boolean;
  /** Include a scatter term (a fraction of the IRF itself). Default: false. */
  scatter?: boolean;
  /** Parametric bootstrap replicates. Default: 0 (none). */
  bootstrap?: number;
  /** Profile-likelihood intervals for each lifetime. Default: false. */
  profile?: boolean;
  /** Seed for anything random (bootstrap, multi-start jitter). Default: 1. */
  seed?: number;
  /** Optimiser iteration limit. Default: 200. */
  maxIterations?: number;
  /**
   * Fill the plotting curves of the result (time, data, model, IRF, residuals, autocorrelation).
   * Default: true. Callers that refit many times (bootstrap, profiles, component selection) may
   * turn it off; the curves then hold empty arrays and only the fit range indices.
   */
  curves?: boolean;
}
