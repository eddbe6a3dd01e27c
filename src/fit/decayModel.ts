import type { IrfMode } from '../../shared/schema.js';
import {
  binMeans,
  exponentialBasis,
  exponentialBasisBinMeans,
  irfShape,
  shiftedSpan,
  shiftIrf,
  tailBasis,
  type ChannelBins,
  type ChannelSpan,
  type IrfShape,
} from '../model/reconvolve.js';
import { emgBasis, gaussianIrfFractions } from '../model/gaussianIrf.js';

/**
 * The parametric decay model the fitter varies: Σ aⱼ·basis(τⱼ) + background + scatter·IRF, with the
 * IRF measured (shifted by a sub-channel amount), Gaussian (fitted centre and width) or absent (tail
 * fit). It owns its work arrays, so evaluating it allocates nothing.
 *
 * Parameter vector (all parameters, free or fixed), in this order:
 *   a₁ … aₙ (amplitudes, counts per channel), ln τ₁ … ln τₙ (τ in ns), background (counts per channel),
 *   [scatter (fraction of the counts in the fit range)], then
 *   measured IRF: shiftNs;  Gaussian IRF: irfCenterNs, irfSigmaNs;  tail fit: nothing.
 */

export interface DecayModelSetup {
  mode: IrfMode;
  nComponents: number;
  /** Channels on the full axis (the model is computed from channel 0, since the convolution needs them). */
  channels: number;
  binWidthNs: number;
  /** Left edge of channel 0, ns. */
  firstEdgeNs: number;
  periodNs: number | null;
  /** IRF fractions on the decay's channel grid (measured mode). */
  irf: Float64Array | null;
  scatter: boolean;
  /** Counts that one unit of the scatter parameter stands for (the data total in the fit range). */
  scatterScale: number;
  /** Fit range [fitStart, fitEnd) in channels. */
  fitStart: number;
  fitEnd: number;
  /** Tail fit: first channel of the tail (t₀ of the exponentials). */
  tailStart: number;
}

export interface ParamLayout {
  amplitude: number[];
  lnTau: number[];
  background: number;
  scatter: number;
  shift: number;
  irfCenter: number;
  irfSigma: number;
  count: number;
  names: string[];
}

export function paramLayout(mode: IrfMode, nComponents: number, scatter: boolean): ParamLayout {
  const amplitude: number[] = [];
  const lnTau: number[] = [];
  const names: string[] = [];
  for (let j = 0; j < nComponents; j++) {
    amplitude.push(j);
    names.push(`amplitude${j + 1}`);
  }
  for (let j = 0; j < nComponents; j++) {
    lnTau.push(nComponents + j);
    names.push(`tau${j + 1}Ns`);
  }
  let k = 2 * nComponents;
  const background = k++;
  names.push('background');
  let sc = -1;
  if (scatter && mode !== 'none') {
    sc = k++;
    names.push('scatter');
  }
  let shift = -1;
  let irfCenter = -1;
  let irfSigma = -1;
  if (mode === 'measured') {
    shift = k++;
    names.push('shiftNs');
  } else if (mode === 'gaussian') {
    irfCenter = k++;
    irfSigma = k++;
    names.push('irfCenterNs', 'irfFwhmNs');
  }
  return { amplitude, lnTau, background, scatter: sc, shift, irfCenter, irfSigma, count: k, names };
}

/** Relative and absolute finite-difference steps for the Gaussian-IRF model's nonlinear parameters. */
const FD_LN_TAU = 1e-5;
const FD_REL = 1e-5;

/**
 * The IRF's slopes and span (see `irfShape`) by IRF array: the fitter's IRF arrays are made once per
 * IRF and decay axis and never written to, and a batch builds one model per decay from the same one.
 */
const shapeCache = new WeakMap<Float64Array, IrfShape>();
function shapeOf(irf: Float64Array): IrfShape {
  let d = shapeCache.get(irf);
  if (!d) shapeCache.set(irf, (d = irfShape(irf)));
  return d;
}

let pool: Float64Array[] | null = null;
/** Five work arrays of length n, kept for the next model of the same length. */
function scratchPool(n: number): Float64Array[] {
  if (!pool || pool[0].length !== n) pool = Array.from({ length: 5 }, () => new Float64Array(n));
  return pool;
}

export class DecayModel {
  readonly layout: ParamLayout;
  private readonly n: number;
  private readonly basis: Float64Array;
  private readonly dBasis: Float64Array;
  private readonly dShiftBasis: Float64Array;
  private readonly irfShifted: Float64Array;
  private readonly dIrf: Float64Array;
  private work: Float64Array | null = null;
  private readonly shape: IrfShape | null;
  /** Non-zero span of `irfShifted` (and of `dIrf`) after the last shift. */
  private readonly span: ChannelSpan = { first: 0, end: 0 };

  /**
   * `sharedScratch`: take the work arrays from a pool kept between models of the same length instead
   * of allocating them (they are the largest allocations of a single fit). Only for a model that is
   * used alone until it is dropped, as a single-decay fit's is: models sharing the pool overwrite each
   * other's arrays, and `basisCurve(…, sameIrf)` relies on the previous call's shifted IRF.
   */
  constructor(
    readonly setup: DecayModelSetup,
    sharedScratch = false,
  ) {
    this.layout = paramLayout(setup.mode, setup.nComponents, setup.scatter);
    const n = setup.channels;
    this.n = n;
    const pool = sharedScratch ? scratchPool(n) : null;
    [this.basis, this.dBasis, this.dShiftBasis, this.irfShifted, this.dIrf] =
      pool ?? Array.from({ length: 5 }, () => new Float64Array(n));
    this.shape = setup.irf ? shapeOf(setup.irf) : null;
  }

  /**
   * Shape of the scatter term at these parameters (fractions per channel): the measured IRF as
   * measured (scatter has the IRF's timing, see `evaluate`), or the modelled Gaussian IRF.
   */
  scatterCurve(all: Float64Array): Float64Array {
    const s = this.setup;
    return s.mode === 'measured' && s.irf ? s.irf : this.irfCurve(all);
  }

  /** IRF shape as used by the model at these parameters (fractions per channel), for display. */
  irfCurve(all: Float64Array): Float64Array {
    const s = this.setup;
    const out = new Float64Array(this.n);
    if (s.mode === 'measured' && s.irf)
      shiftIrf(s.irf, all[this.layout.shift] / s.binWidthNs, out, null, this.shape);
    else if (s.mode === 'gaussian')
      gaussianIrfFractions(
        this.n,
        s.firstEdgeNs,
        s.binWidthNs,
        all[this.layout.irfCenter],
        all[this.layout.irfSigma],
        out,
      );
    return out;
  }

  /** The measured IRF shifted into `irfShifted` (its derivative into `dIrf` when asked), noting its span. */
  private shiftMeasured(all: Float64Array, withDerivative: boolean): void {
    const shift = all[this.layout.shift] / this.setup.binWidthNs;
    const shape = this.shape as IrfShape;
    shiftIrf(
      this.setup.irf as Float64Array,
      shift,
      this.irfShifted,
      withDerivative ? this.dIrf : null,
      shape,
    );
    shiftedSpan(shape, shift, this.n, this.span);
  }

  /**
   * Basis curve of one lifetime at the IRF settings in `all` (full axis), into `out`. `sameIrf`: the
   * IRF parameters are those of the previous call, so the shifted IRF is reused.
   */
  private basisCurve(all: Float64Array, tauNs: number, out: Float64Array, sameIrf = false): void {
    const s = this.setup;
    if (s.mode === 'measured' && s.irf) {
      if (!sameIrf) this.shiftMeasured(all, false);
      exponentialBasis(this.irfShifted, s.binWidthNs, tauNs, s.periodNs, out, null, null, null, this.span);
    } else if (s.mode === 'gaussian') {
      emgBasis(
        this.n,
        s.firstEdgeNs,
        s.binWidthNs,
        all[this.layout.irfCenter],
        all[this.layout.irfSigma],
        tauNs,
        s.periodNs,
        out,
      );
    } else tailBasis(this.n, s.tailStart, s.binWidthNs, tauNs, s.periodNs, out, null);
  }

  /**
   * Means of the basis curve of one lifetime over channel bins (see `binMeans`), into
   * out[offset + k], at the IRF settings in `all`; `sameIrf` as for `basisCurve`. A measured IRF with
   * a single pulse takes the closed-form tail (`exponentialBasisBinMeans`); other models bin the
   * whole curve.
   */
  basisBinMeans(
    all: Float64Array,
    tauNs: number,
    bins: ChannelBins,
    out: Float64Array,
    offset: number,
    sameIrf = false,
  ): void {
    const s = this.setup;
    if (s.mode === 'measured' && s.irf && !(s.periodNs !== null && s.periodNs > 0)) {
      if (!sameIrf) this.shiftMeasured(all, false);
      exponentialBasisBinMeans(
        this.irfShifted,
        s.binWidthNs,
        tauNs,
        bins,
        out,
        offset,
        this.basis,
        this.span,
      );
      return;
    }
    this.basisCurve(all, tauNs, this.basis, sameIrf);
    binMeans(this.basis, bins, out, offset);
  }

  /**
   * Model over the full axis into `full` (length channels) and, when `jac` is given, the Jacobian rows
   * of the free parameters over the fit range: jac[row·nFit + (i − fitStart)], row = freeRow[param]
   * (−1 for a fixed parameter). Returns false when a value is not finite.
   */
  evaluate(all: Float64Array, full: Float64Array, jac: Float64Array | null, freeRow: Int32Array): boolean {
    const s = this.setup;
    const L = this.layout;
    const n = this.n;
    const i0 = s.fitStart;
    const i1 = s.fitEnd;
    const nFit = i1 - i0;
    const dt = s.binWidthNs;
    const bg = all[L.background];
    full.fill(bg);
    if (jac && freeRow[L.background] >= 0)
      jac.fill(1, freeRow[L.background] * nFit, (freeRow[L.background] + 1) * nFit);

    if (s.mode === 'measured') {
      const irf = s.irf as Float64Array;
      const wantShift = jac !== null && freeRow[L.shift] >= 0;
      this.shiftMeasured(all, wantShift);
      // The shift row (per ns) accumulates straight into the Jacobian: Σ coefficient/Δ · ∂curve/∂s.
      const os = wantShift ? freeRow[L.shift] * nFit - i0 : 0;
      if (wantShift) jac!.fill(0, os + i0, os + i1);
      const irfShifted = this.irfShifted;
      // Scattered excitation light has the excitation wavelength, at which the IRF was measured: it
      // keeps the IRF's own timing, while the shift (the colour shift of the emission) moves only
      // the fluorescence.
      if (L.scatter >= 0) {
        const c = all[L.scatter] * s.scatterScale;
        for (let i = 0; i < n; i++) full[i] += c * irf[i];
        if (jac && freeRow[L.scatter] >= 0) {
          const o = freeRow[L.scatter] * nFit - i0;
          for (let i = i0; i < i1; i++) jac[o + i] = s.scatterScale * irf[i];
        }
      }
      const basis = this.basis;
      const dBasis = this.dBasis;
      const dShiftBasis = this.dShiftBasis;
      for (let j = 0; j < s.nComponents; j++) {
        const a = all[L.amplitude[j]];
        const tau = Math.exp(all[L.lnTau[j]]);
        const wantTau = jac !== null && freeRow[L.lnTau[j]] >= 0;
        exponentialBasis(
          irfShifted,
          dt,
          tau,
          s.periodNs,
          basis,
          wantTau ? dBasis : null,
          wantShift ? this.dIrf : null,
          wantShift ? dShiftBasis : null,
          this.span,
        );
        for (let i = 0; i < i0; i++) full[i] += a * basis[i];
        for (let i = i1; i < n; i++) full[i] += a * basis[i];
        if (!jac) {
          for (let i = i0; i < i1; i++) full[i] += a * basis[i];
          continue;
        }
        // One pass over the fit range for the model and every Jacobian row of this component.
        const ra = freeRow[L.amplitude[j]];
        const wantAmp = ra >= 0;
        const oa = ra * nFit - i0;
        const ot = wantTau ? freeRow[L.lnTau[j]] * nFit - i0 : 0;
        const ks = a / dt;
        for (let i = i0; i < i1; i++) {
          const b = basis[i];
          full[i] += a * b;
          if (wantAmp) jac[oa + i] = b;
          if (wantTau) jac[ot + i] = a * dBasis[i];
          if (wantShift) jac[os + i] += ks * dShiftBasis[i];
        }
      }
    } else if (s.mode === 'none') {
      for (let j = 0; j < s.nComponents; j++) {
        const a = all[L.amplitude[j]];
        const tau = Math.exp(all[L.lnTau[j]]);
        const wantTau = jac !== null && freeRow[L.lnTau[j]] >= 0;
        tailBasis(n, s.tailStart, dt, tau, s.periodNs, this.basis, wantTau ? this.dBasis : null);
        for (let i = 0; i < n; i++) full[i] += a * this.basis[i];
        if (jac) {
          const ra = freeRow[L.amplitude[j]];
          if (ra >= 0) jac.set(this.basis.subarray(i0, i1), ra * nFit);
          if (wantTau) {
            const o = freeRow[L.lnTau[j]] * nFit - i0;
            for (let i = i0; i < i1; i++) jac[o + i] = a * this.dBasis[i];
          }
        }
      }
    } else {
      this.evaluateGaussian(all, full, jac, freeRow);
    }
    // One sum instead of a test per channel: a NaN or an infinity anywhere makes it non-finite.
    let sum = 0;
    for (let i = i0; i < i1; i++) sum += full[i];
    return Number.isFinite(sum);
  }

  /** Gaussian IRF: amplitudes and background analytic, lifetimes, centre and width by central differences. */
  private evaluateGaussian(
    all: Float64Array,
    full: Float64Array,
    jac: Float64Array | null,
    freeRow: Int32Array,
  ) {
    const s = this.setup;
    const L = this.layout;
    const n = this.n;
    const i0 = s.fitStart;
    const i1 = s.fitEnd;
    const nFit = i1 - i0;
    const dt = s.binWidthNs;
    const x0 = s.firstEdgeNs;
    const T = s.periodNs;
    const center = all[L.irfCenter];
    const sigma = all[L.irfSigma];
    const hc = FD_REL * Math.max(sigma, dt);
    const hs = FD_REL * sigma;
    const wantC = jac !== null && freeRow[L.irfCenter] >= 0;
    const wantS = jac !== null && freeRow[L.irfSigma] >= 0;
    const oc = wantC ? freeRow[L.irfCenter] * nFit - i0 : 0;
    const os = wantS ? freeRow[L.irfSigma] * nFit - i0 : 0;
    if (wantC) jac!.fill(0, oc + i0, oc + i1);
    if (wantS) jac!.fill(0, os + i0, os + i1);
    const g = this.basis;
    // Second curve of each central difference; only this mode needs it.
    const w = (this.work ??= new Float64Array(n));
    // Adds c·(f(+h) − f(−h))/(2h) of a curve family into a Jacobian row.
    const central = (o: number, c: number, h: number, eval2: (sign: number, out: Float64Array) => void) => {
      eval2(1, g);
      eval2(-1, w);
      const k = c / (2 * h);
      for (let i = i0; i < i1; i++) jac![o + i] += k * (g[i] - w[i]);
    };
    if (L.scatter >= 0) {
      const c = all[L.scatter] * s.scatterScale;
      gaussianIrfFractions(n, x0, dt, center, sigma, g);
      for (let i = 0; i < n; i++) full[i] += c * g[i];
      if (jac && freeRow[L.scatter] >= 0) {
        const o = freeRow[L.scatter] * nFit - i0;
        for (let i = i0; i < i1; i++) jac[o + i] = s.scatterScale * g[i];
      }
      if (wantC)
        central(oc, c, hc, (sg, out) => gaussianIrfFractions(n, x0, dt, center + sg * hc, sigma, out));
      if (wantS)
        central(os, c, hs, (sg, out) => gaussianIrfFractions(n, x0, dt, center, sigma + sg * hs, out));
    }
    for (let j = 0; j < s.nComponents; j++) {
      const a = all[L.amplitude[j]];
      const lt = all[L.lnTau[j]];
      const tau = Math.exp(lt);
      if (wantC) central(oc, a, hc, (sg, out) => emgBasis(n, x0, dt, center + sg * hc, sigma, tau, T, out));
      if (wantS) central(os, a, hs, (sg, out) => emgBasis(n, x0, dt, center, sigma + sg * hs, tau, T, out));
      if (jac && freeRow[L.lnTau[j]] >= 0) {
        const o = freeRow[L.lnTau[j]] * nFit - i0;
        jac.fill(0, o + i0, o + i1);
        central(o, a, FD_LN_TAU, (sg, out) =>
          emgBasis(n, x0, dt, center, sigma, Math.exp(lt + sg * FD_LN_TAU), T, out),
        );
      }
      emgBasis(n, x0, dt, center, sigma, tau, T, g);
      for (let i = 0; i < n; i++) full[i] += a * g[i];
      const ra = jac ? freeRow[L.amplitude[j]] : -1;
      if (ra >= 0) jac!.set(g.subarray(i0, i1), ra * nFit);
    }
  }
}
