import {
  SCHEMA_VERSION,
  type SampleResult,
  type SeriesPoint,
  type SeriesResult,
} from '../../shared/schema.js';
import { InputError } from '../errors.js';
import { invertSymmetric, levenbergMarquardt, type LmProblem } from '../fit/lm.js';
import { efficiencyFromTemperatureSeries } from '../physics/efficiency.js';
import { AVOGADRO_PER_MOL, ELEMENTARY_CHARGE_C, GAS_CONSTANT_J_PER_MOL_K } from '../physics/constants.js';

/** One measured point of a series: x from the manifest metadata, y with its standard error. */
export interface XY {
  sample: string;
  x: number;
  y: number;
  yErr: number;
}

/** J/mol per eV per particle: the Faraday constant N_A·e. */
const J_PER_MOL_PER_EV = AVOGADRO_PER_MOL * ELEMENTARY_CHARGE_C;

function checkPoints(points: XY[], what: string, minimum: number): void {
  if (points.length < minimum) {
    throw new InputError(`${what} needs at least ${minimum} usable samples, found ${points.length}`);
  }
  for (const p of points) {
    if (!(p.yErr > 0) || !Number.isFinite(p.y) || !Number.isFinite(p.x)) {
      throw new InputError(
        `sample '${p.sample}' has no usable value or error for the ${what} (y = ${p.y} ± ${p.yErr})`,
      );
    }
  }
}

/** Weighted straight line y = a + b·x (or through a fixed intercept); parameters with covariance. */
export function weightedLine(
  points: XY[],
  fixedIntercept?: number,
): { a: number; b: number; aErr: number; bErr: number; covAB: number; chi2: number; dof: number } {
  let sw = 0,
    sx = 0,
    sy = 0,
    sxx = 0,
    sxy = 0;
  for (const p of points) {
    const w = 1 / (p.yErr * p.yErr);
    const y = fixedIntercept === undefined ? p.y : p.y - fixedIntercept;
    sw += w;
    sx += w * p.x;
    sy += w * y;
    sxx += w * p.x * p.x;
    sxy += w * p.x * y;
  }
  let a: number, b: number, aErr: number, bErr: number, covAB: number, nPar: number;
  if (fixedIntercept !== undefined) {
    a = fixedIntercept;
    b = sxy / sxx;
    aErr = 0;
    bErr = Math.sqrt(1 / sxx);
    covAB = 0;
    nPar = 1;
  } else {
    const det = sw * sxx - sx * sx;
    a = (sxx * sy - sx * sxy) / det;
    b = (sw * sxy - sx * sy) / det;
    aErr = Math.sqrt(sxx / det);
    bErr = Math.sqrt(sw / det);
    covAB = -sx / det;
    nPar = 2;
  }
  let chi2 = 0;
  for (const p of points) chi2 += ((p.y - a - b * p.x) / p.yErr) ** 2;
  return { a, b, aErr, bErr, covAB, chi2, dof: points.length - nPar };
}

export interface ArrheniusFit {
  k0PerS: number;
  k0ErrPerS: number;
  aPerS: number;
  aErrPerS: number;
  eaJPerMol: number;
  eaErrJPerMol: number;
  chi2: number;
  dof: number;
  converged: boolean;
}

/**
 * Weighted nonlinear least squares of k(T) = k₀ + A·exp(−E_a/(R·T)) (Arrhenius law with a
 * temperature-independent offset; common practice for k_nr(T), e.g. Lakowicz ch. 6/8 from memory).
 * The model is linear in k₀ and A for a fixed E_a, so a scan over E_a with those two solved exactly
 * (variable projection) gives a start that cannot land in a far-off valley; Gauss–Newton with a
 * Levenberg damping then refines (k₀, ln A, E_a) together. Errors from the inverse of JᵀWJ with the
 * given y errors taken as absolute standard errors.
 */
export function fitArrhenius(points: XY[]): ArrheniusFit {
  checkPoints(points, 'Arrhenius fit', 3);
  for (const p of points)
    if (!(p.x > 0)) throw new InputError(`sample '${p.sample}': temperature ${p.x} K must be positive`);
  const R = GAS_CONSTANT_J_PER_MOL_K;
  // Profile over E_a: for each trial, the weighted linear fit of y on exp(−E_a/RT) gives k₀ and A.
  let best = { chi2: Infinity, k0: 0, lnA: 0, ea: 0 };
  for (let eaKj = 0.5; eaKj <= 200; eaKj *= 1.05) {
    const ea = eaKj * 1000;
    const line = weightedLine(points.map((p) => ({ ...p, x: Math.exp(-ea / (R * p.x)) })));
    if (!(line.b > 0)) continue;
    if (line.chi2 < best.chi2) best = { chi2: line.chi2, k0: line.a, lnA: Math.log(line.b), ea };
  }
  if (!Number.isFinite(best.chi2)) {
    throw new InputError('no Arrhenius term fits: the rate does not rise with temperature in these samples');
  }
  // Refine (k₀, ln A, E_a) together with the fitter's own Levenberg–Marquardt (analytic Jacobian).
  const n = points.length;
  const invRT = Float64Array.from(points, (pt) => 1 / (R * pt.x));
  const problem: LmProblem = {
    nParams: 3,
    nPoints: n,
    data: Float64Array.from(points, (pt) => pt.y),
    weights: Float64Array.from(points, (pt) => 1 / (pt.yErr * pt.yErr)),
    loss: 'leastSquares',
    evaluate(q, model, jac) {
      for (let i = 0; i < n; i++) {
        const e = Math.exp(q[1] - q[2] * invRT[i]);
        model[i] = q[0] + e;
        if (jac) {
          jac[i] = 1;
          jac[n + i] = e;
          jac[2 * n + i] = -e * invRT[i];
        }
        if (!Number.isFinite(model[i])) return false;
      }
      return true;
    },
  };
  const lm = levenbergMarquardt(problem, [best.k0, best.lnA, best.ea]);
  const p = lm.params;
  const chi2 = lm.objective;
  const converged = lm.stop === 'converged';
  // For least squares the objective's Gauss–Newton Hessian is 2·JᵀWJ, so the covariance is 2·H⁻¹.
  const inv = invertSymmetric(lm.hessian, 3);
  const cov = inv ? inv.map((v) => 2 * v) : null;
  const aPerS = Math.exp(p[1]);
  const sd = (i: number) => (cov && cov[i * 3 + i] >= 0 ? Math.sqrt(cov[i * 3 + i]) : NaN);
  return {
    k0PerS: p[0],
    k0ErrPerS: sd(0),
    aPerS,
    aErrPerS: aPerS * sd(1),
    eaJPerMol: p[2],
    eaErrJPerMol: sd(2),
    chi2,
    dof: points.length - 3,
    converged,
  };
}

/** What y of a sample a series uses. */
interface LifetimeOf {
  tauNs: number;
  tauErrNs: number;
}

/** The lifetime a series uses: the single lifetime of a one-component fit, else the amplitude-weighted average. */
export function seriesLifetime(s: SampleResult): LifetimeOf | null {
  const fit = s.fit;
  if (!fit) return null;
  if (fit.nComponents === 1 && fit.components.length === 1) {
    return { tauNs: fit.components[0].tauNs, tauErrNs: fit.components[0].tauErrNs };
  }
  return { tauNs: fit.tauAmpAvgNs, tauErrNs: fit.tauAmpAvgErrNs };
}

function metadataNumber(s: SampleResult, x: string): number | null {
  const raw = s.metadata[x];
  if (raw === undefined || raw.trim() === '') return null;
  const v = Number(raw.trim());
  if (!Number.isFinite(v)) throw new InputError(`sample '${s.sample}': ${x} '${raw}' is not a number`);
  return v;
}

function usable(samples: SampleResult[], x: string, group?: string): { s: SampleResult; x: number }[] {
  if (samples.length > 0 && !samples.some((s) => x in s.metadata)) {
    const known = Object.keys(samples[0].metadata);
    throw new InputError(`no sample has a '${x}' column (metadata columns: ${known.join(', ') || 'none'})`);
  }
  const out: { s: SampleResult; x: number }[] = [];
  for (const s of samples) {
    if (s.status !== 'ok' || !s.fit) continue;
    if (group !== undefined && s.group !== group) continue;
    const v = metadataNumber(s, x);
    if (v !== null) out.push({ s, x: v });
  }
  return out.sort((a, b) => a.x - b.x);
}

export interface SeriesOptions {
  model: SeriesResult['model'];
  /** Metadata column holding x. */
  x: string;
  group?: string;
  /** Förster radius, nm (fret). */
  r0Nm?: number;
  /** Reference (unquenched / donor-only) lifetime, ns; default from the samples at x = 0. */
  tau0Ns?: number;
}

function result(
  options: SeriesOptions,
  yName: string,
  parameters: Record<string, number>,
  points: SeriesPoint[],
  chi2: number | null,
  dof: number,
  notes: string[],
  warnings: string[],
): SeriesResult {
  const chi2Reduced = chi2 === null ? null : dof > 0 ? chi2 / dof : null;
  if (chi2Reduced !== null && chi2Reduced > 3) {
    warnings.push(
      `χ²_red = ${chi2Reduced.toFixed(2)}: the law does not describe these points within their errors; parameter errors are too small`,
    );
  }
  return {
    schemaVersion: SCHEMA_VERSION,
    model: options.model,
    xName: options.x,
    yName,
    parameters,
    points,
    chi2Reduced,
    dof,
    notes,
    warnings,
  };
}

/** Reference lifetime τ₀: given, else the weighted mean of the samples at x = 0. */
function referenceLifetime(
  rows: { s: SampleResult; x: number }[],
  options: SeriesOptions,
  what: string,
): LifetimeOf {
  if (options.tau0Ns !== undefined) return { tauNs: options.tau0Ns, tauErrNs: 0 };
  const zero = rows.filter((r) => r.x === 0).map((r) => seriesLifetime(r.s)!);
  if (zero.length === 0)
    throw new InputError(`${what} needs a reference sample with ${options.x} = 0, or --tau0-ns`);
  let sw = 0,
    swt = 0;
  for (const z of zero) {
    const w = z.tauErrNs > 0 ? 1 / z.tauErrNs ** 2 : 1;
    sw += w;
    swt += w * z.tauNs;
  }
  const allErr = zero.every((z) => z.tauErrNs > 0);
  return { tauNs: swt / sw, tauErrNs: allErr ? Math.sqrt(1 / sw) : 0 };
}

/**
 * Fits a series law to the ok samples of a batch, x from a metadata column.
 * - arrhenius: k_nr(T) = k₀ + A·exp(−E_a/(k_B·T)) on k_nr with errors (samples with a quantum yield);
 *   without rates, on the total decay rate 1/τ (then k₀ includes k_r; said in the notes).
 * - stern-volmer: 1/τ = 1/τ₀ + k_q·[Q] by weighted linear least squares, shown as τ₀/τ = 1 + k_q·τ₀·[Q].
 * - fret: E = 1 − τ_DA/τ_D per sample against the donor-only reference, with r = R₀·(1/E − 1)^(1/6) given R₀.
 * - efficiency: η(T) = τ(T)/τ_plateau, the plateau found by the physics layer from the coldest points.
 */
export function runSeries(samples: SampleResult[], options: SeriesOptions): SeriesResult {
  const rows = usable(samples, options.x, options.group);
  switch (options.model) {
    case 'arrhenius':
      return arrheniusSeries(rows, options);
    case 'stern-volmer':
      return sternVolmerSeries(rows, options);
    case 'fret':
      return fretSeries(rows, options);
    case 'efficiency':
      return efficiencySeries(rows, options);
  }
}

function arrheniusSeries(rows: { s: SampleResult; x: number }[], options: SeriesOptions): SeriesResult {
  const notes: string[] = [];
  const warnings: string[] = [];
  const withRates = rows.filter((r) => r.s.rates);
  let points: XY[];
  let yName: string;
  if (withRates.length >= 3) {
    points = withRates.map((r) => ({
      sample: r.s.sample,
      x: r.x,
      y: r.s.rates!.knrPerS,
      yErr: r.s.rates!.knrErrPerS,
    }));
    yName = 'knrPerS';
    if (withRates.length < rows.length)
      notes.push(`${rows.length - withRates.length} samples without a quantum yield left out`);
  } else {
    points = rows.map((r) => {
      const t = seriesLifetime(r.s)!;
      return { sample: r.s.sample, x: r.x, y: 1e9 / t.tauNs, yErr: (1e9 * t.tauErrNs) / t.tauNs ** 2 };
    });
    yName = 'decayRatePerS';
    notes.push('no quantum yields: fitted the total decay rate 1/τ, so k₀ includes k_r');
  }
  const f = fitArrhenius(points);
  if (!f.converged) warnings.push('the Arrhenius fit did not converge');
  if (f.k0PerS < 0) warnings.push('k₀ came out negative: the offset is not determined by these temperatures');
  const R = GAS_CONSTANT_J_PER_MOL_K;
  const parameters = {
    eaKjPerMol: f.eaJPerMol / 1000,
    eaErrKjPerMol: f.eaErrJPerMol / 1000,
    eaEv: f.eaJPerMol / J_PER_MOL_PER_EV,
    eaErrEv: f.eaErrJPerMol / J_PER_MOL_PER_EV,
    k0PerS: f.k0PerS,
    k0ErrPerS: f.k0ErrPerS,
    aPerS: f.aPerS,
    aErrPerS: f.aErrPerS,
  };
  const seriesPoints = points.map((p) => {
    const model = f.k0PerS + f.aPerS * Math.exp(-f.eaJPerMol / (R * p.x));
    return { sample: p.sample, x: p.x, y: p.y, yErr: p.yErr, fit: model, residual: (p.y - model) / p.yErr };
  });
  notes.push('errors from the curvature of χ² with the sample errors taken as absolute');
  return result(options, yName, parameters, seriesPoints, f.chi2, f.dof, notes, warnings);
}

function sternVolmerSeries(rows: { s: SampleResult; x: number }[], options: SeriesOptions): SeriesResult {
  const notes: string[] = [];
  const warnings: string[] = [];
  for (const r of rows)
    if (r.x < 0)
      throw new InputError(`sample '${r.s.sample}': quencher concentration ${r.x} must not be negative`);
  // 1/τ is linear in [Q] with slope k_q; fitting it avoids dividing every point by one noisy τ₀.
  const rates = rows.map((r) => {
    const t = seriesLifetime(r.s)!;
    return { sample: r.s.sample, x: r.x, y: 1e9 / t.tauNs, yErr: (1e9 * t.tauErrNs) / t.tauNs ** 2 };
  });
  checkPoints(rates, 'Stern–Volmer fit', options.tau0Ns === undefined ? 3 : 2);
  const line = weightedLine(rates, options.tau0Ns === undefined ? undefined : 1e9 / options.tau0Ns);
  const kq = line.b;
  const tau0Ns = 1e9 / line.a;
  const tau0ErrNs = (1e9 * line.aErr) / line.a ** 2;
  // K_SV = k_q·τ₀ = b/a; first-order propagation with the a–b covariance.
  const ksv = line.b / line.a;
  const ksvErr =
    Math.abs(ksv) *
    Math.sqrt((line.bErr / line.b) ** 2 + (line.aErr / line.a) ** 2 - (2 * line.covAB) / (line.a * line.b));
  if (options.tau0Ns !== undefined) notes.push(`τ₀ held at ${options.tau0Ns} ns`);
  if (kq < 0) warnings.push('k_q came out negative: the lifetime does not shorten with quencher');
  const points = rates.map((p) => {
    const ratio = p.y / line.a; // τ₀/τ
    const model = 1 + ksv * p.x;
    const ratioErr = p.yErr / line.a;
    return {
      sample: p.sample,
      x: p.x,
      y: ratio,
      yErr: ratioErr,
      fit: model,
      residual: (p.y - line.a - kq * p.x) / p.yErr,
    };
  });
  notes.push('fitted 1/τ = 1/τ₀ + k_q·[Q] by weighted least squares; points shown as τ₀/τ, x in mol/L');
  return result(
    options,
    'tau0OverTau',
    { kqPerMPerS: kq, kqErrPerMPerS: line.bErr, tau0Ns, tau0ErrNs, ksvPerM: ksv, ksvErrPerM: ksvErr },
    points,
    line.chi2,
    line.dof,
    notes,
    warnings,
  );
}

function fretSeries(rows: { s: SampleResult; x: number }[], options: SeriesOptions): SeriesResult {
  const ref = referenceLifetime(rows, options, 'A FRET series');
  const notes = [
    `τ_D = ${ref.tauNs} ns ${options.tau0Ns === undefined ? `(samples with ${options.x} = 0)` : '(given)'}`,
  ];
  const warnings: string[] = [];
  const pairs = options.tau0Ns === undefined ? rows.filter((r) => r.x !== 0) : rows;
  if (pairs.length === 0)
    throw new InputError(`a FRET series needs donor–acceptor samples with ${options.x} ≠ 0`);
  const parameters: Record<string, number> = { tauDNs: ref.tauNs, tauDErrNs: ref.tauErrNs };
  if (options.r0Nm !== undefined) parameters.r0Nm = options.r0Nm;
  const points: SeriesPoint[] = pairs.map((r) => {
    const t = seriesLifetime(r.s)!;
    const ratio = t.tauNs / ref.tauNs;
    const e = 1 - ratio;
    const eErr = ratio * Math.sqrt((t.tauErrNs / t.tauNs) ** 2 + (ref.tauErrNs / ref.tauNs) ** 2);
    if (options.r0Nm !== undefined) {
      if (e > 0 && e < 1) {
        // r = R₀(1/E − 1)^(1/6); dr/dE = −R₀/(6E²)·(1/E − 1)^(−5/6)
        const u = 1 / e - 1;
        const rNm = options.r0Nm * u ** (1 / 6);
        const rErrNm = (options.r0Nm / (6 * e * e)) * u ** (-5 / 6) * eErr;
        parameters[`rNm_${r.s.sample}`] = rNm;
        parameters[`rErrNm_${r.s.sample}`] = rErrNm;
      } else {
        warnings.push(`sample '${r.s.sample}': E = ${e.toFixed(3)} is outside (0, 1); no distance`);
      }
    }
    parameters[`e_${r.s.sample}`] = e;
    parameters[`eErr_${r.s.sample}`] = eErr;
    return { sample: r.s.sample, x: r.x, y: e, yErr: eErr, fit: null, residual: null };
  });
  notes.push('E = 1 − τ_DA/τ_D per sample; no law is fitted across the series');
  return result(options, 'fretEfficiency', parameters, points, null, 0, notes, warnings);
}

function efficiencySeries(rows: { s: SampleResult; x: number }[], options: SeriesOptions): SeriesResult {
  // Rows are sorted by temperature, as are the physics layer's points (both sorts are stable).
  const lifetimes = rows.map((r) => ({ ...seriesLifetime(r.s)!, sample: r.s.sample, x: r.x }));
  const eff = efficiencyFromTemperatureSeries(
    lifetimes.map((p) => ({
      temperatureK: p.x,
      tauNs: p.tauNs,
      tauErrNs: p.tauErrNs > 0 ? p.tauErrNs : undefined,
    })),
  );
  const points: SeriesPoint[] = eff.points.map((p, k) => ({
    sample: lifetimes[k].sample,
    x: p.temperatureK,
    y: p.eta,
    yErr: p.etaErr,
    fit: null,
    residual: null,
  }));
  return result(
    options,
    'efficiency',
    {
      tauPlateauNs: eff.plateauTauNs,
      tauPlateauErrNs: eff.plateauTauErrNs,
      plateauSamples: eff.plateauMembers.length,
    },
    points,
    null,
    0,
    [...eff.notes],
    [...eff.warnings],
  );
}
