/**
 * lumirate's result schema: the JSON that `lumirate fit --json`, `rates`, `sb`, `batch` (results.json)
 * and `series` write, and that the viewer reads. Plain JSON-ready objects; every number carries its
 * unit in its field name (`tauNs`, `krPerS`); dimensionless numbers carry none.
 *
 * Versioning: SCHEMA_VERSION follows semver. Adding an optional field is a minor change; renaming,
 * removing or changing the meaning of a field is a major one. Readers check the major version.
 */

export const SCHEMA_VERSION = '1.0.0';

export type Statistic = 'poisson' | 'neyman' | 'pearson';

/** How the optimiser stopped. */
export type FitStop = 'converged' | 'maxIterations' | 'nonFinite';

/** Where the instrument response in the model came from. */
export type IrfMode = 'measured' | 'gaussian' | 'none';

export interface ComponentResult {
  tauNs: number;
  tauErrNs: number;
  /** Pre-exponential factor, counts per channel at t = 0 of the unconvolved decay (before scaling by the IRF area). */
  amplitude: number;
  amplitudeErr: number;
  /** Fraction of the steady-state intensity, aᵢτᵢ / Σaⱼτⱼ. */
  intensityFraction: number;
  intensityFractionErr: number;
  /** Fraction of the total amplitude, aᵢ / Σaⱼ. */
  amplitudeFraction: number;
  /** Profile-likelihood (support-plane) 68.3 % interval, when asked for. */
  tauProfileNs?: [number, number];
  /** Standard deviation of τ over the parametric bootstrap, when asked for. */
  tauBootstrapErrNs?: number;
  /** Bootstrap 2.5 % and 97.5 % percentiles, when asked for. */
  tauBootstrapCi95Ns?: [number, number];
  /** True when the lifetime was held fixed (its error is then 0). */
  fixed?: boolean;
}

/**
 * Curves for plotting, all on the same channel axis. `null` marks a channel outside the fit range.
 * A batch's results.json stores them rounded for plotting (time to the decimals its channel width
 * needs, counts exactly, model and IRF to 7 significant digits, residuals and autocorrelation to 6
 * decimals; see shared/curvesJson.ts); the fit's parameters and statistics keep full precision.
 */
export interface FitCurves {
  /** Left edge of each channel, ns. */
  timeNs: number[];
  /** Measured counts per channel. */
  data: number[];
  /** Fitted model, counts per channel. */
  model: (number | null)[];
  /** The IRF as used in the model (shifted), scaled to the decay's peak for display; empty when none. */
  irf: number[];
  /** (data − model)/σ under the chosen statistic (deviance residuals for Poisson). */
  weightedResiduals: (number | null)[];
  /** Residual autocorrelation C(j), j = 0 … len−1, over the fit range. */
  autocorrelation: number[];
  /** First and last channel index (inclusive) of the fit range. */
  fitStartIndex: number;
  fitEndIndex: number;
}

/** Why a number of components was chosen, when `components` was `auto`. */
export interface ComponentSelection {
  chosen: number;
  candidates: {
    nComponents: number;
    deviance: number;
    chi2Reduced: number;
    aic: number;
    bic: number;
    /** p-value of the likelihood-ratio test against one component fewer. */
    lrtPValue?: number;
  }[];
  reason: string;
}

export interface FitResult {
  schemaVersion: string;
  statistic: Statistic;
  nComponents: number;
  components: ComponentResult[];
  /** Amplitude-weighted average lifetime Σaᵢτᵢ/Σaᵢ, ns. */
  tauAmpAvgNs: number;
  tauAmpAvgErrNs: number;
  /** Intensity-weighted average lifetime Σaᵢτᵢ²/Σaᵢτᵢ, ns. */
  tauIntAvgNs: number;
  tauIntAvgErrNs: number;
  /**
   * Shift of the IRF relative to the decay's fluorescence, ns (positive: the decay arrives later): the
   * colour shift between the IRF's wavelength and the emission's. The scatter term keeps the IRF's
   * own timing (scattered light has the excitation wavelength).
   */
  shiftNs: number;
  shiftErrNs: number;
  /** Constant background, counts per channel. */
  background: number;
  backgroundErr: number;
  /**
   * Scatter: amplitude of the IRF-shaped term (the measured IRF unshifted), as a fraction of the total
   * counts in the fit range.
   */
  scatter: number;
  scatterErr: number;
  /** Width (FWHM) of the modelled Gaussian IRF, ns; only when irfMode is 'gaussian'. */
  irfFwhmNs?: number;
  irfFwhmErrNs?: number;
  /** Centre of the modelled Gaussian IRF on the decay's time axis, ns; only when irfMode is 'gaussian'. */
  irfCenterNs?: number;
  irfCenterErrNs?: number;
  /** Full covariance of the free parameters at the optimum (inverse Fisher information), with their names. */
  covariance?: { names: string[]; matrix: number[][] };
  /** Pearson χ² divided by degrees of freedom. */
  chi2Reduced: number;
  chi2: number;
  /** Poisson deviance (likelihood χ²) and per degree of freedom. */
  deviance: number;
  deviancePerDof: number;
  dof: number;
  durbinWatson: number;
  /** Wald–Wolfowitz runs test on the residual signs: z score and two-sided p-value. */
  runsZ: number;
  runsPValue: number;
  aic: number;
  bic: number;
  converged: boolean;
  stop: FitStop;
  iterations: number;
  warnings: string[];
  irfMode: IrfMode;
  /** Fit range [start, end), ns. */
  rangeNs: [number, number];
  periodNs: number | null;
  binWidthNs: number;
  peakCounts: number;
  totalCounts: number;
  /** Parameters that were held fixed, by name, in the units of their names. */
  fixed: Record<string, number>;
  componentSelection?: ComponentSelection;
  curves: FitCurves;
}

/** Which lifetime the rates were computed from. */
export type RatesLifetimeBasis = 'single' | 'amplitudeWeighted' | 'perComponent';

export interface RatesResult {
  schemaVersion: string;
  qy: number;
  qyErr: number;
  tauNs: number;
  tauErrNs: number;
  tauBasis: RatesLifetimeBasis;
  krPerS: number;
  krErrPerS: number;
  knrPerS: number;
  knrErrPerS: number;
  /** Covariance of k_r and k_nr, s⁻², from the shared τ. */
  krKnrCovPerS2: number;
  /** Natural radiative lifetime 1/k_r, ns. */
  tau0Ns: number;
  tau0ErrNs: number;
  /** Per-component rates when a common k_r is asserted. */
  perComponent?: { tauNs: number; knrPerS: number; knrErrPerS: number }[];
  notes: string[];
  warnings: string[];
}

export interface StricklerBergResult {
  schemaVersion: string;
  krSbPerS: number;
  tau0SbNs: number;
  /** ⟨ν̃_f⁻³⟩^(−1/3), cm⁻¹. */
  emissionMeanWavenumberCm: number;
  /** ⟨ν̃_f⁻³⟩⁻¹, cm⁻³. */
  emissionInvCubeMeanCm3: number;
  /** ∫ε d ln ν̃, L mol⁻¹ cm⁻¹. */
  integratedEpsLnNu: number;
  /** ∫ε dν̃, L mol⁻¹ cm⁻². */
  integratedEpsNu: number;
  oscillatorStrength: number;
  dipoleDebye: number;
  einsteinAVacuumPerS: number;
  einsteinAMediumPerS: number;
  refractiveIndex: number;
  degeneracyRatio: number;
  /** Absorption band integrated over, cm⁻¹, and how it was chosen. */
  bandCm: [number, number];
  bandChoice: string;
  /** What was assumed about the emission spectrum's ordinate (photons per nm, per cm⁻¹, energy per nm). */
  emissionAssumption: string;
  /** How the result was reached and what it assumes (conventions, Jacobians, refractive-index model). */
  notes?: string[];
  /** With a measured Φ and τ. */
  qySb?: number;
  krRatio?: number;
  /** Uncertainties of qySb and krRatio from the measured Φ and τ alone (k_r^SB's own is not estimated). */
  qySbErr?: number;
  krRatioErr?: number;
  note?: string;
  warnings: string[];
}

/** Where a result came from, so that it can be reproduced. */
export interface Provenance {
  lumirateVersion: string;
  schemaVersion: string;
  /** Input files with their SHA-256 (hex). Paths as written in the manifest. */
  inputs: { role: string; path: string; sha256: string }[];
  settings: Record<string, unknown>;
  /** ISO 8601, UTC. */
  timeUtc: string;
  seed: number | null;
}

export type SampleStatus = 'ok' | 'failed';

/** Linked-lifetime (global) analysis of a group, attached to each member. */
export interface GlobalGroupResult {
  group: string;
  members: string[];
  /** Lifetimes shared by every member. */
  components: { tauNs: number; tauErrNs: number }[];
  chi2Reduced: number;
  deviancePerDof: number;
  dof: number;
  warnings: string[];
}

/** One row of a batch: everything known about one sample. */
export interface SampleResult {
  schemaVersion: string;
  sample: string;
  /** Data row of the manifest this sample came from (1 = first row after the header); keeps batch order across shards. */
  manifestRow?: number;
  status: SampleStatus;
  /** The error that stopped this sample, when status is 'failed'. */
  error?: string;
  group?: string;
  /** Manifest columns lumirate does not interpret (temperature_k, quencher_m …), untouched. */
  metadata: Record<string, string>;
  fit?: FitResult;
  global?: GlobalGroupResult;
  rates?: RatesResult;
  sb?: StricklerBergResult;
  warnings: string[];
  provenance: Provenance;
}

export type SeriesModel = 'arrhenius' | 'stern-volmer' | 'fret' | 'efficiency';

export interface SeriesPoint {
  sample: string;
  x: number;
  y: number;
  yErr: number;
  /** Model value at x, and the weighted residual. */
  fit: number | null;
  residual: number | null;
}

/** Series parameters that count things: shown as whole numbers, never with an error or decimals. */
export const SERIES_COUNT_PARAMETERS: ReadonlySet<string> = new Set(['plateauSamples']);

export interface SeriesResult {
  schemaVersion: string;
  model: SeriesModel;
  xName: string;
  yName: string;
  /** Fitted parameters with their errors; names carry units (eaEv, k0PerS, kqPerMPerS …). */
  parameters: Record<string, number>;
  points: SeriesPoint[];
  chi2Reduced: number | null;
  dof: number;
  notes: string[];
  warnings: string[];
}

/** What the viewer embeds: the batch's samples and any series analyses. */
export interface ReportData {
  schemaVersion: string;
  title: string;
  createdUtc: string;
  lumirateVersion: string;
  samples: SampleResult[];
  series: SeriesResult[];
}

/** True when a parsed JSON value claims a schema version this code can read (same major). */
export function isCompatibleSchema(version: unknown): boolean {
  if (typeof version !== 'string') return false;
  return version.split('.')[0] === SCHEMA_VERSION.split('.')[0];
}

export function isSampleResult(x: unknown): x is SampleResult {
  if (typeof x !== 'object' || x === null) return false;
  const o = x as Record<string, unknown>;
  return (
    isCompatibleSchema(o.schemaVersion) &&
    typeof o.sample === 'string' &&
    (o.status === 'ok' || o.status === 'failed') &&
    typeof o.metadata === 'object' &&
    Array.isArray(o.warnings)
  );
}

export function isFitResult(x: unknown): x is FitResult {
  if (typeof x !== 'object' || x === null) return false;
  const o = x as Record<string, unknown>;
  return (
    isCompatibleSchema(o.schemaVersion) &&
    Array.isArray(o.components) &&
    typeof o.statistic === 'string' &&
    typeof o.curves === 'object'
  );
}
