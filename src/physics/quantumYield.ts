/**
 * Relative fluorescence quantum yield by the comparative method: the sample and a standard of known
 * yield are measured with the same instrument settings, and
 *   Φ = Φ_R · (F/F_R) · (f_R/f) · (n²/n_R²),
 * F the integrated, spectrally corrected emission (photon units), f the fraction of excitation light
 * absorbed, n the solvent refractive index (Brouwer, Pure Appl. Chem. 83, 2213 (2011)).
 *
 * f is the absorptance 1 − 10^(−A) by default. The 'linear' form uses f ∝ A, adequate only while
 * A ≲ 0.05. The gradient variant (Williams, Winfield & Miller, Analyst 108, 1067 (1983)) replaces F/f
 * by the slope of F against f over a dilution series.
 */
import { InputError } from '../errors.js';

/** How the absorbed fraction is computed from absorbance A at the excitation wavelength. */
export type AbsorbedFractionForm = 'absorptance' | 'linear';

/** Inner-filter effects (re-absorption, non-uniform excitation) grow beyond this absorbance (common practice). */
export const INNER_FILTER_ABSORBANCE = 0.1;
/** The linear form departs from the absorptance by > 5 % of ln10·A/2 beyond this (≈ 6 % at A = 0.05). */
const LINEAR_FORM_LIMIT = 0.05;

/** Absorbed fraction, or the quantity proportional to it in the linear form (A itself). */
export function absorbedFraction(absorbance: number, form: AbsorbedFractionForm = 'absorptance'): number {
  return form === 'linear' ? absorbance : 1 - 10 ** -absorbance;
}

/** d f / d A for the chosen form. */
function absorbedFractionSlope(absorbance: number, form: AbsorbedFractionForm): number {
  return form === 'linear' ? 1 : Math.LN10 * 10 ** -absorbance;
}

export interface QyMeasurement {
  /** Integrated, corrected emission (any consistent unit; photon units). */
  integratedEmission: number;
  integratedEmissionErr?: number;
  /** Absorbance (decadic) at the excitation wavelength. */
  absorbance: number;
  absorbanceErr?: number;
  refractiveIndex: number;
}

export interface RelativeQyInput {
  sample: QyMeasurement;
  reference: QyMeasurement & { qy: number; qyErr?: number };
  /** Default: 'absorptance'. */
  form?: AbsorbedFractionForm;
}

export interface RelativeQyResult {
  qy: number;
  qyErr: number;
  method: 'single-point' | 'gradient';
  form: AbsorbedFractionForm;
  /** F/f for the sample and the reference (single point), or the fitted slopes (gradient). */
  sampleEmissionPerAbsorbed: number;
  referenceEmissionPerAbsorbed: number;
  /** n²/n_R². */
  refractiveCorrection: number;
  notes: string[];
  warnings: string[];
}

function finite(what: string, x: unknown): number {
  if (typeof x !== 'number' || !Number.isFinite(x))
    throw new InputError(`${what} must be a finite number, got ${String(x)}.`);
  return x;
}

function checkRefYield(qy: number, qyErr: number | undefined): void {
  finite('The standard’s quantum yield', qy);
  if (!(qy > 0 && qy <= 1)) throw new InputError(`the standard’s quantum yield ${qy} is outside (0, 1].`);
  if (qyErr !== undefined && !(Number.isFinite(qyErr) && qyErr >= 0)) {
    throw new InputError(`the standard’s quantum-yield uncertainty must be ≥ 0, got ${qyErr}.`);
  }
}

function checkIndex(who: string, n: number): void {
  finite(`The ${who} refractive index`, n);
  if (!(n >= 1 && n < 3))
    throw new InputError(`the ${who} refractive index ${n} is not a plausible solvent index (1 ≤ n < 3).`);
}

function checkAbsorbance(who: string, a: number, warnings: string[], form: AbsorbedFractionForm): void {
  finite(`The ${who} absorbance`, a);
  if (!(a > 0))
    throw new InputError(
      `the ${who} absorbance ${a} must be > 0 (the solution must absorb at the excitation wavelength).`,
    );
  if (a > INNER_FILTER_ABSORBANCE) {
    warnings.push(
      `The ${who} absorbance ${a} exceeds ${INNER_FILTER_ABSORBANCE}: inner-filter effects bias the yield; dilute (common practice).`,
    );
  }
  if (form === 'linear' && a > LINEAR_FORM_LIMIT) {
    warnings.push(
      `The linear absorbance form is used with ${who} A = ${a} > ${LINEAR_FORM_LIMIT}; the absorptance 1 − 10^(−A) is more accurate.`,
    );
  }
}

function finishWarnings(qy: number, warnings: string[]): void {
  if (qy > 1) {
    warnings.push(
      `The computed yield ${qy.toPrecision(3)} exceeds 1: check the standard’s yield, the absorbances, the refractive indices and the spectral correction.`,
    );
  }
}

const COMMON_NOTE =
  'Assumes the same excitation wavelength, slit widths and detector settings for sample and standard, and emission spectra ' +
  'corrected for the detector’s spectral response (integrated in photon units).';

/** Single-point comparative quantum yield, with first-order propagation of the given uncertainties. */
export function relativeQuantumYield(input: RelativeQyInput): RelativeQyResult {
  const form = input.form ?? 'absorptance';
  const { sample: s, reference: r } = input;
  const warnings: string[] = [];
  checkRefYield(r.qy, r.qyErr);
  checkIndex('sample', s.refractiveIndex);
  checkIndex('standard', r.refractiveIndex);
  checkAbsorbance('sample', s.absorbance, warnings, form);
  checkAbsorbance('standard', r.absorbance, warnings, form);
  for (const [who, m] of [
    ['sample', s],
    ['standard', r],
  ] as const) {
    finite(`The ${who} integrated emission`, m.integratedEmission);
    if (!(m.integratedEmission > 0))
      throw new InputError(`the ${who} integrated emission ${m.integratedEmission} must be > 0.`);
  }
  const fS = absorbedFraction(s.absorbance, form);
  const fR = absorbedFraction(r.absorbance, form);
  const nCorr = s.refractiveIndex ** 2 / r.refractiveIndex ** 2;
  const qy = r.qy * (s.integratedEmission / r.integratedEmission) * (fR / fS) * nCorr;
  // Relative errors add in quadrature for a product of independent factors.
  const rel2 =
    ((r.qyErr ?? 0) / r.qy) ** 2 +
    ((s.integratedEmissionErr ?? 0) / s.integratedEmission) ** 2 +
    ((r.integratedEmissionErr ?? 0) / r.integratedEmission) ** 2 +
    (((s.absorbanceErr ?? 0) * absorbedFractionSlope(s.absorbance, form)) / fS) ** 2 +
    (((r.absorbanceErr ?? 0) * absorbedFractionSlope(r.absorbance, form)) / fR) ** 2;
  finishWarnings(qy, warnings);
  return {
    qy,
    qyErr: qy * Math.sqrt(rel2),
    method: 'single-point',
    form,
    sampleEmissionPerAbsorbed: s.integratedEmission / fS,
    referenceEmissionPerAbsorbed: r.integratedEmission / fR,
    refractiveCorrection: nCorr,
    notes: [
      `Φ = Φ_R·(F/F_R)·(f_R/f)·(n²/n_R²) with f = ${form === 'linear' ? 'A (linear absorbance approximation)' : '1 − 10^(−A) (absorptance)'}.`,
      COMMON_NOTE,
    ],
    warnings,
  };
}

export interface DilutionPoint {
  absorbance: number;
  integratedEmission: number;
}

export interface SlopeFit {
  slope: number;
  slopeErr: number;
  /** Zero when fitted through the origin. */
  intercept: number;
  interceptErr: number;
  /** Coefficient of determination (about the mean with an intercept, about zero through the origin). */
  r2: number;
  points: number;
}

/**
 * Ordinary least-squares slope of y on x, through the origin (default) or with an intercept. The slope
 * error is the usual one from the residual scatter: s²/Σx² (through the origin, n − 1 degrees of
 * freedom) or s²/Σ(x − x̄)² (with intercept, n − 2).
 */
export function leastSquaresSlope(
  x: ArrayLike<number>,
  y: ArrayLike<number>,
  withIntercept = false,
): SlopeFit {
  const n = x.length;
  if (n !== y.length) throw new InputError(`the x and y series differ in length (${n} and ${y.length}).`);
  const need = withIntercept ? 3 : 2;
  if (n < need) {
    throw new InputError(
      `a slope ${withIntercept ? 'with an intercept' : 'through the origin'} needs at least ${need} points, got ${n}.`,
    );
  }
  let sx = 0;
  let sy = 0;
  for (let i = 0; i < n; i++) {
    sx += x[i];
    sy += y[i];
  }
  const mx = withIntercept ? sx / n : 0;
  const my = withIntercept ? sy / n : 0;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i] - mx) ** 2;
    sxy += (x[i] - mx) * (y[i] - my);
    syy += (y[i] - my) ** 2;
  }
  if (!(sxx > 0)) throw new InputError('the absorbances do not vary: a slope cannot be fitted.');
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let rss = 0;
  for (let i = 0; i < n; i++) rss += (y[i] - intercept - slope * x[i]) ** 2;
  const dof = n - (withIntercept ? 2 : 1);
  const s2 = dof > 0 ? rss / dof : NaN;
  const slopeErr = Math.sqrt(s2 / sxx);
  const interceptErr = withIntercept ? Math.sqrt(s2 * (1 / n + (mx * mx) / sxx)) : 0;
  return { slope, slopeErr, intercept, interceptErr, r2: syy > 0 ? 1 - rss / syy : 1, points: n };
}

export interface GradientQyInput {
  sample: { points: DilutionPoint[]; refractiveIndex: number };
  reference: { points: DilutionPoint[]; refractiveIndex: number; qy: number; qyErr?: number };
  /** Default: 'absorptance'. */
  form?: AbsorbedFractionForm;
  /**
   * Fit an intercept as well. Default: false — the line goes through the origin, because a blank-subtracted
   * solution that absorbs nothing emits nothing; an intercept spends a degree of freedom to absorb an offset.
   */
  intercept?: boolean;
}

export interface GradientQyResult extends RelativeQyResult {
  sampleFit: SlopeFit;
  referenceFit: SlopeFit;
}

/** Linearity below this R² suggests inner-filter effects, aggregation or a bad point. */
const R2_WARN = 0.99;

/** Gradient (dilution-series) comparative quantum yield: Φ = Φ_R·(Grad/Grad_R)·(n²/n_R²). */
export function gradientQuantumYield(input: GradientQyInput): GradientQyResult {
  const form = input.form ?? 'absorptance';
  const withIntercept = input.intercept ?? false;
  const { sample: s, reference: r } = input;
  const warnings: string[] = [];
  checkRefYield(r.qy, r.qyErr);
  checkIndex('sample', s.refractiveIndex);
  checkIndex('standard', r.refractiveIndex);
  const fits = (
    [
      ['sample', s.points],
      ['standard', r.points],
    ] as const
  ).map(([who, pts]) => {
    pts.forEach((p, i) => {
      finite(`The ${who} absorbance of point ${i + 1}`, p.absorbance);
      finite(`The ${who} integrated emission of point ${i + 1}`, p.integratedEmission);
      if (!(p.absorbance > 0))
        throw new InputError(`the ${who} absorbance of point ${i + 1} (${p.absorbance}) must be > 0.`);
    });
    const high = pts.filter((p) => p.absorbance > INNER_FILTER_ABSORBANCE).length;
    if (high) {
      warnings.push(
        `${high} ${who} point(s) have absorbance above ${INNER_FILTER_ABSORBANCE}: inner-filter effects bend the line (common practice).`,
      );
    }
    const fit = leastSquaresSlope(
      pts.map((p) => absorbedFraction(p.absorbance, form)),
      pts.map((p) => p.integratedEmission),
      withIntercept,
    );
    if (!(fit.slope > 0))
      throw new InputError(`the ${who} emission does not rise with absorbance (slope ${fit.slope}).`);
    if (fit.r2 < R2_WARN) {
      warnings.push(
        `The ${who} series is not linear (R² = ${fit.r2.toFixed(4)}): look for inner-filter effects, aggregation or a bad point.`,
      );
    }
    return fit;
  });
  const [fitS, fitR] = fits;
  const nCorr = s.refractiveIndex ** 2 / r.refractiveIndex ** 2;
  const qy = r.qy * (fitS.slope / fitR.slope) * nCorr;
  const rel2 =
    ((r.qyErr ?? 0) / r.qy) ** 2 + (fitS.slopeErr / fitS.slope) ** 2 + (fitR.slopeErr / fitR.slope) ** 2;
  finishWarnings(qy, warnings);
  return {
    qy,
    qyErr: qy * Math.sqrt(Number.isFinite(rel2) ? rel2 : 0),
    method: 'gradient',
    form,
    sampleEmissionPerAbsorbed: fitS.slope,
    referenceEmissionPerAbsorbed: fitR.slope,
    refractiveCorrection: nCorr,
    sampleFit: fitS,
    referenceFit: fitR,
    notes: [
      `Φ = Φ_R·(Grad/Grad_R)·(n²/n_R²), Grad = least-squares slope of integrated emission against ` +
        `${form === 'linear' ? 'absorbance A' : 'absorptance 1 − 10^(−A)'}, ${withIntercept ? 'with an intercept' : 'through the origin'}. ` +
        'The error combines the slopes’ standard errors (from the residual scatter) and the standard’s yield uncertainty.',
      COMMON_NOTE,
    ],
    warnings,
  };
}
