/**
 * Reconvolution kernels on a channel axis: a measured, piecewise-constant instrument response
 * convolved with exponential decays, every term integrated exactly over each channel.
 *
 * Conventions shared by every kernel here:
 * - Channel i covers [iΔ, (i+1)Δ) with Δ the bin width, ns.
 * - `irf` holds IRF fractions per channel: baseline removed, non-negative, summing to 1
 *   (see `prepareIrf`).
 * - A basis curve is in counts per channel for a unit pre-exponential factor: for a narrow IRF,
 *   basisᵢ ≈ e^{−tᵢ/τ}, so an amplitude is "counts per channel at t = 0 of the unconvolved decay".
 * - Derivatives with respect to the lifetime are taken with respect to ln τ (τ·∂/∂τ), which is what
 *   the fitter varies.
 *
 * Exact channel integration. Within channel k the IRF is taken as the straight line that keeps its
 * channel integral qₖ and has the central-difference slope dₖ = (qₖ₊₁ − qₖ₋₁)/2 per channel, i.e.
 * IRF(t) = (qₖ + dₖ(s − ½))/Δ at t = (k + s)Δ, 0 ≤ s < 1 (a piecewise-constant IRF would leave an error
 * of order Δ²/(στ) against a smooth response; this takes it to order Δ³). The slope is limited to
 * |dₖ| ≤ 2qₖ so that the line never goes negative. With h = Δ/τ, x = e^{−h},
 * the convolution y(t) = ∫IRF(t′)e^{−(t−t′)/τ}dt′ integrated over channel i is
 *   Yᵢ/Δ = φ(h)·qᵢ + φ₁(h)·dᵢ + ψ(h)²·Sᵢ,   Sᵢ₊₁ = x·Sᵢ + qᵢ + ρ(h)·dᵢ,  S₀ = 0,
 * with φ(h) = (h − 1 + e^{−h})/h² and φ₁(h) = (2 − h − (2 + h)e^{−h})/(2h³) (the channel's own
 * contribution), ψ(h) = (1 − e^{−h})/h (an exponential tail integrated over one channel) and
 * ρ(h) = [h(1 + e^{−h}) − 2(1 − e^{−h})]/(2h(1 − e^{−h})) (the slope's weight in the tail). This is an
 * O(N) recursion, exact for that IRF at any τ relative to Δ; series replace the closed forms at small
 * h, where they cancel.
 *
 * Repetition period T (≥ the window NΔ): earlier pulses add Σₙ≥₁ Yᵢ(t + nT). Once the shifted IRF is
 * complete inside the window their contribution is the window-end tail continued,
 *   Pᵢ = ψ(h)²·S_N·e^{−(T/Δ − N + i)h}/(1 − e^{−T/τ}),
 * exact under that condition (the geometric sum over previous pulses).
 *
 * Sub-channel shift s of the IRF: the piecewise-linear IRF is moved and integrated over each channel
 * again (see `shiftIrf`); the model is linear in the IRF, so its derivative with respect to s is the
 * same recursion run on ∂q/∂s.
 */

/** φ(h) = (h − 1 + e^{−h})/h² and its derivative, by series where the closed form cancels. */
function phi(h: number): number {
  if (h < 1e-2) return 0.5 - h / 6 + (h * h) / 24 - (h * h * h) / 120 + (h * h * h * h) / 720;
  return (h - 1 + Math.exp(-h)) / (h * h);
}
function dPhi(h: number): number {
  if (h < 1e-2) return -1 / 6 + h / 12 - (h * h) / 40 + (h * h * h) / 180 - (h * h * h * h) / 1008;
  const e = Math.exp(-h);
  return (1 - e) / (h * h) - (2 * (h - 1 + e)) / (h * h * h);
}
/** φ₁(h) = (2 − h − (2 + h)e^{−h})/(2h³) and its derivative. */
function phi1(h: number): number {
  if (h < 0.1) {
    const h2 = h * h;
    return (
      -1 / 12 +
      h / 24 -
      h2 / 80 +
      (h2 * h) / 360 -
      (h2 * h2) / 2016 +
      (h2 * h2 * h) / 13440 -
      (h2 * h2 * h2) / 103680
    );
  }
  return (2 - h - (2 + h) * Math.exp(-h)) / (2 * h * h * h);
}
function dPhi1(h: number): number {
  if (h < 0.1) {
    const h2 = h * h;
    return 1 / 24 - h / 40 + h2 / 120 - (h2 * h) / 504 + (h2 * h2) / 2688 - (h2 * h2 * h) / 17280;
  }
  const e = Math.exp(-h);
  const N = 2 - h - (2 + h) * e;
  const dN = -1 + (1 + h) * e;
  return dN / (2 * h * h * h) - (3 * N) / (2 * h * h * h * h);
}
/** ρ(h) = [h(1 + e^{−h}) − 2(1 − e^{−h})]/(2h(1 − e^{−h})) and its derivative. */
function rho(h: number): number {
  if (h < 0.1) {
    const h2 = h * h;
    return h / 12 - (h2 * h) / 720 + (h2 * h2 * h) / 30240 - (h2 * h2 * h2 * h) / 1209600;
  }
  const e = Math.exp(-h);
  const D = -Math.expm1(-h);
  return (h * (1 + e) - 2 * D) / (2 * h * D);
}
function dRho(h: number): number {
  if (h < 0.1) {
    const h2 = h * h;
    return 1 / 12 - h2 / 240 + (h2 * h2) / 6048 - (h2 * h2 * h2) / 172800;
  }
  const e = Math.exp(-h);
  const D = -Math.expm1(-h);
  const M = h * (1 + e) - 2 * D;
  const dM = D - h * e;
  return (dM * h * D - M * (D + h * e)) / (2 * h * h * D * D);
}

/** ψ(h) = (1 − e^{−h})/h and its derivative. */
export function psi(h: number): number {
  if (h < 1e-2) return 1 - h / 2 + (h * h) / 6 - (h * h * h) / 24 + (h * h * h * h) / 120;
  return -Math.expm1(-h) / h;
}
function dPsi(h: number): number {
  if (h < 1e-2) return -0.5 + h / 3 - (h * h) / 8 + (h * h * h) / 30 - (h * h * h * h) / 144;
  const e = Math.exp(-h);
  return (e * (h + 1) - 1) / (h * h);
}

export interface PreparedIrf {
  /** IRF fractions per channel (baseline removed inside the support, 0 outside it, unit sum). */
  fractions: Float64Array;
  /** Baseline subtracted, counts per channel. */
  baseline: number;
  /** Channel of the IRF maximum. */
  peakIndex: number;
  /** Full width at half maximum, channels (linear interpolation on both flanks). */
  fwhmChannels: number;
  /** Channels kept as the IRF's support, [first, end); the whole axis when no baseline was measured. */
  support: [number, number];
}

/** Detection level of the support search, in standard errors of a smoothed baseline channel. */
const SUPPORT_SIGMAS = 3;
/** A separate region (a reflection, an afterpulse) is kept only when it stands this far above the noise. */
const SEPARATE_REGION_SIGMAS = 6;

/**
 * Removes the IRF's own background and normalises it to unit sum.
 *
 * The baseline is the mean of the channels well before the rising edge (before peak − 4 FWHM), when
 * there are at least 8 of them; otherwise none is subtracted. The mean of Poisson counts is an unbiased
 * estimate of their level; what must not follow is clipping every channel at 0: on noise-only
 * channels E[max(n − b, 0)] > 0 (≈ 0.37 counts for b = 1), a positive floor under the whole axis that
 * widens the IRF's apparent tail and shortens fitted lifetimes. So the IRF is kept only on its
 * support — the channels where a moving mean over w = max(4, ⌈FWHM⌉) channels stands more than
 * 3 standard errors above the baseline, widened by w on each side — and set to 0 elsewhere
 * (its expected value there after subtraction). The region around the peak is always kept; other
 * regions only when they stand 6 standard errors above the baseline (a reflection, not a fluctuation).
 * Inside the support negative values are clipped at 0, which biases only the few edge channels.
 * The noise of the baseline is measured (sample variance of the pre-edge channels), not assumed
 * Poisson, so IRFs that arrive already background-corrected are handled too.
 *
 * Returns null when nothing is left (an empty or flat IRF).
 */
export function prepareIrf(counts: ArrayLike<number>): PreparedIrf | null {
  const n = counts.length;
  let peakIndex = 0;
  for (let i = 1; i < n; i++) if (counts[i] > counts[peakIndex]) peakIndex = i;
  const rawWidth = fwhm(counts, peakIndex, 0);
  const preEnd = Math.floor(peakIndex - 4 * Math.max(rawWidth, 1));
  let baseline = 0;
  let noise = 0;
  if (preEnd >= 8) {
    let s = 0;
    for (let i = 0; i < preEnd; i++) s += counts[i];
    baseline = s / preEnd;
    let ss = 0;
    for (let i = 0; i < preEnd; i++) ss += (counts[i] - baseline) ** 2;
    noise = Math.sqrt(ss / (preEnd - 1));
  }
  if (counts[peakIndex] - baseline <= 0) return null;
  let first = 0;
  let end = n;
  const keep = noise > 0 ? supportMask(counts, baseline, noise, peakIndex, rawWidth) : null;
  const fractions = new Float64Array(n);
  let sum = 0;
  for (let i = 0; i < n; i++) {
    if (keep && !keep[i]) continue;
    const v = counts[i] - baseline;
    fractions[i] = v > 0 ? v : 0;
    sum += fractions[i];
  }
  if (!(sum > 0)) return null;
  if (keep) {
    while (!keep[first]) first++;
    while (!keep[end - 1]) end--;
  }
  for (let i = 0; i < n; i++) fractions[i] /= sum;
  return {
    fractions,
    baseline,
    peakIndex,
    fwhmChannels: fwhm(fractions, peakIndex, 0),
    support: [first, end],
  };
}

/** Channels that belong to the IRF's support (see `prepareIrf`), 1 = keep. */
function supportMask(
  counts: ArrayLike<number>,
  baseline: number,
  noise: number,
  peakIndex: number,
  widthChannels: number,
): Uint8Array {
  const n = counts.length;
  const w = Math.max(4, Math.ceil(widthChannels));
  const half = w >> 1;
  // Moving mean over [i − half, i − half + w), clamped to the axis; prefix sums keep it O(N).
  const prefix = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) prefix[i + 1] = prefix[i] + counts[i];
  const above = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const a = Math.max(0, i - half);
    const b = Math.min(n, a + w);
    const len = b - a;
    // Excess of the window mean over the baseline, in standard errors of that mean.
    above[i] = ((prefix[b] - prefix[a]) / len - baseline) / (noise / Math.sqrt(len));
  }
  const keep = new Uint8Array(n);
  let i = 0;
  while (i < n) {
    if (!(above[i] > SUPPORT_SIGMAS)) {
      i++;
      continue;
    }
    let j = i;
    let top = 0;
    while (j < n && above[j] > SUPPORT_SIGMAS) top = Math.max(top, above[j++]);
    // Region [i, j) of window starts; the windows reach half channels back and w − half forward.
    const lo = Math.max(0, i - half - w);
    const hi = Math.min(n, j - half + 2 * w);
    const holdsPeak = peakIndex >= lo && peakIndex < hi;
    if (holdsPeak || top > SEPARATE_REGION_SIGMAS) keep.fill(1, lo, hi);
    i = j;
  }
  keep[peakIndex] = 1;
  return keep;
}

/** Full width at half maximum (channels) of a peak at `peak`, above `base`, by linear interpolation. */
export function fwhm(y: ArrayLike<number>, peak: number, base: number): number {
  const half = base + (y[peak] - base) / 2;
  let left = peak;
  while (left > 0 && y[left - 1] > half) left--;
  let right = peak;
  while (right < y.length - 1 && y[right + 1] > half) right++;
  let l = left;
  if (left > 0) l = left - 1 + (half - y[left - 1]) / (y[left] - y[left - 1]);
  let r = right;
  if (right < y.length - 1) r = right + (y[right] - half) / (y[right] - y[right + 1]);
  return r - l;
}

/** Limited central-difference slope of channel j (see the module comment), 0 outside the axis. */
function slopeAt(irf: Float64Array, j: number): number {
  const n = irf.length;
  if (j < 0 || j >= n) return 0;
  const q = irf[j];
  const d = 0.5 * ((j + 1 < n ? irf[j + 1] : 0) - (j > 0 ? irf[j - 1] : 0));
  return d > 2 * q ? 2 * q : d < -2 * q ? -2 * q : d;
}

/** Channels [first, end) outside which a curve (and what goes with it) is 0. */
export interface ChannelSpan {
  first: number;
  end: number;
}

/** What repeated shifts of one IRF need: its slopes, and the span outside which both are 0. */
export interface IrfShape extends ChannelSpan {
  slopes: Float64Array;
}

/** The IRF's limited slopes (see `irfSlopes`) and non-zero span, for repeated shifts of one IRF. */
export function irfShape(irf: Float64Array): IrfShape {
  let end = irf.length;
  while (end > 0 && irf[end - 1] === 0) end--;
  let first = 0;
  while (first < end && irf[first] === 0) first++;
  // A slope is limited to twice its channel's value, so it is 0 wherever the IRF is.
  return { slopes: irfSlopes(irf), first, end };
}

/**
 * The span of `shiftIrf`'s output (and of its derivative) for an IRF of this shape, into `out`:
 * channel k draws on IRF channels k − m and k − m − 1, m = ⌊shift⌋.
 */
export function shiftedSpan(
  shape: ChannelSpan,
  shiftChannels: number,
  n: number,
  out: ChannelSpan,
): ChannelSpan {
  const m = Math.floor(shiftChannels);
  out.first = Math.min(Math.max(shape.first + m, 0), n);
  out.end = Math.max(Math.min(shape.end + m + 1, n), out.first);
  return out;
}

/**
 * IRF moved later by `shiftChannels` (may be negative, need not be whole), written into `out`; when
 * `dOut` is given it receives ∂out/∂shift per channel of shift. Channels moved past either end are lost.
 * `shape` (from `irfShape`) saves recomputing the IRF's slopes and span when one IRF is shifted many
 * times; only the channels the IRF can reach are computed, the rest set to 0.
 *
 * The piecewise-linear IRF of the module comment is moved by s = (m + f) channels and integrated over
 * each channel: q′ₖ = (1 − f)·qₖ₋ₘ + f·qₖ₋ₘ₋₁ + ½f(1 − f)·(dₖ₋ₘ₋₁ − dₖ₋ₘ). Plain linear
 * interpolation of the channel integrals (the first two terms) would widen a sharp IRF by up to a
 * quarter channel² of variance and bias the shift and short lifetimes on coarse channels.
 */
export function shiftIrf(
  irf: Float64Array,
  shiftChannels: number,
  out: Float64Array,
  dOut: Float64Array | null,
  shape: IrfShape | null = null,
): void {
  const sh = shape ?? irfShape(irf);
  const slopes = sh.slopes;
  const n = irf.length;
  const m = Math.floor(shiftChannels);
  const f = shiftChannels - m;
  const c = 0.5 * f * (1 - f);
  const dc = 0.5 * (1 - 2 * f);
  const span = shiftedSpan(sh, shiftChannels, n, { first: 0, end: 0 });
  out.fill(0, 0, span.first);
  out.fill(0, span.end, n);
  if (dOut) {
    dOut.fill(0, 0, span.first);
    dOut.fill(0, span.end, n);
  }
  for (let k = span.first; k < span.end; k++) {
    const j0 = k - m;
    const j1 = j0 - 1;
    const in0 = j0 >= 0 && j0 < n;
    const in1 = j1 >= 0 && j1 < n;
    const a = in0 ? irf[j0] : 0;
    const b = in1 ? irf[j1] : 0;
    const slopeDiff = (in1 ? slopes[j1] : 0) - (in0 ? slopes[j0] : 0);
    out[k] = (1 - f) * a + f * b + c * slopeDiff;
    if (dOut) dOut[k] = b - a + dc * slopeDiff;
  }
}

/** Limited slopes dₖ of every channel (see the module comment), for repeated shifts of one IRF. */
export function irfSlopes(irf: Float64Array): Float64Array {
  const d = new Float64Array(irf.length);
  for (let j = 0; j < irf.length; j++) d[j] = slopeAt(irf, j);
  return d;
}

/**
 * Channel-integrated reconvolution of `irf` (fractions per channel, already shifted) with e^{−t/τ}.
 * Writes the basis curve into `out` (counts per channel for unit amplitude) and, when given, its
 * derivative with respect to ln τ into `dLnTau`, and the basis run on `dIrf` (∂irf/∂shift) into
 * `dShift`. `periodNs` null or ≤ 0 means a single pulse. `span`: channels outside which `irf` and
 * `dIrf` are known to be 0 (see `shiftedSpan`), or null to find them. No allocation.
 */
export function exponentialBasis(
  irf: Float64Array,
  binWidthNs: number,
  tauNs: number,
  periodNs: number | null,
  out: Float64Array,
  dLnTau: Float64Array | null,
  dIrf: Float64Array | null,
  dShift: Float64Array | null,
  span: ChannelSpan | null = null,
): void {
  const n = irf.length;
  const h = binWidthNs / tauNs;
  const x = Math.exp(-h);
  const A = phi(h);
  const A1 = phi1(h);
  const rh = rho(h);
  const ps = psi(h);
  const K = ps * ps;
  // ∂/∂lnτ of h is −h.
  const dA = -h * dPhi(h);
  const dA1 = -h * dPhi1(h);
  const drh = -h * dRho(h);
  const dK = -h * 2 * ps * dPsi(h);
  const dx = x * h;
  const wantShift = dShift !== null && dIrf !== null;
  let S = 0;
  let dS = 0;
  let sS = 0;
  // Past the last non-zero channel of the IRF (and of ∂irf/∂shift) every q, d and g is 0: the
  // recursion is a pure exponential, run below with the same arithmetic minus the zero terms (so
  // the values are identical). A measured IRF usually ends a few hundred channels into the axis.
  // Before its first non-zero channel everything is 0.
  // `span`, when known, bounds the non-zero channels and saves searching the whole axis for them.
  let end = span ? Math.min(span.end, n) : n;
  while (end > 0 && irf[end - 1] === 0 && (!wantShift || (dIrf as Float64Array)[end - 1] === 0)) end--;
  let start = span ? Math.min(Math.max(span.first, 0), end) : 0;
  while (start < end && irf[start] === 0 && (!wantShift || (dIrf as Float64Array)[start] === 0)) start++;
  out.fill(0, 0, start);
  if (dLnTau) dLnTau.fill(0, 0, start);
  if (wantShift) (dShift as Float64Array).fill(0, 0, start);
  // Central-difference slopes, carried along: qPrev, q, qNext.
  let qPrev = 0;
  let q = start < n ? irf[start] : 0;
  let gPrev = 0;
  let gq = wantShift && start < n ? (dIrf as Float64Array)[start] : 0;
  for (let i = start; i < end; i++) {
    const qNext = i + 1 < n ? irf[i + 1] : 0;
    let d = 0.5 * (qNext - qPrev);
    // Limit the slope so that the line stays ≥ 0 across the channel (|d| ≤ 2q): a steep edge on
    // coarse channels must not give the IRF, and so the model, negative values.
    let clamp = 0;
    if (d > 2 * q) {
      d = 2 * q;
      clamp = 2;
    } else if (d < -2 * q) {
      d = -2 * q;
      clamp = -2;
    }
    out[i] = A * q + A1 * d + K * S;
    if (dLnTau) dLnTau[i] = dA * q + dA1 * d + dK * S + K * dS;
    if (wantShift) {
      const gNext = i + 1 < n ? (dIrf as Float64Array)[i + 1] : 0;
      const gd = clamp === 0 ? 0.5 * (gNext - gPrev) : clamp * gq;
      (dShift as Float64Array)[i] = A * gq + A1 * gd + K * sS;
      sS = x * sS + gq + rh * gd;
      gPrev = gq;
      gq = gNext;
    }
    // Order matters: dS uses the old S.
    dS = x * dS + dx * S + drh * d;
    S = x * S + q + rh * d;
    qPrev = q;
    q = qNext;
  }
  if (dLnTau && wantShift) {
    const dSh = dShift as Float64Array;
    for (let i = end; i < n; i++) {
      out[i] = K * S;
      dLnTau[i] = dK * S + K * dS;
      dSh[i] = K * sS;
      dS = x * dS + dx * S;
      S = x * S;
      sS = x * sS;
    }
  } else if (dLnTau) {
    for (let i = end; i < n; i++) {
      out[i] = K * S;
      dLnTau[i] = dK * S + K * dS;
      dS = x * dS + dx * S;
      S = x * S;
    }
  } else if (wantShift) {
    const dSh = dShift as Float64Array;
    for (let i = end; i < n; i++) {
      out[i] = K * S;
      dSh[i] = K * sS;
      S = x * S;
      sS = x * sS;
    }
  } else {
    for (let i = end; i < n; i++) {
      out[i] = K * S;
      S = x * S;
    }
  }
  if (periodNs !== null && periodNs > 0) {
    const R = periodNs / binWidthNs;
    const oneMinusR = -Math.expm1(-R * h);
    const r = 1 - oneMinusR;
    // E_i = e^{−(R − N + i)h}, advanced by ×x per channel.
    let E = Math.exp(-(R - n) * h);
    const c = (K * S) / oneMinusR;
    const dcTau = (dK * S + K * dS) / oneMinusR + (c * r * R * h) / oneMinusR;
    const cShift = (K * sS) / oneMinusR;
    for (let i = 0; i < n; i++) {
      const Pi = c * E;
      out[i] += Pi;
      if (dLnTau) dLnTau[i] += dcTau * E + Pi * (R - n + i) * h;
      if (dShift && dIrf) dShift[i] += cShift * E;
      E *= x;
    }
  }
}

/**
 * Tail model without an IRF: e^{−(t − t₀)/τ} integrated over each channel from `startIndex` on
 * (t₀ = the left edge of that channel), 0 before it; with a repetition period every pulse's tail adds
 * the factor 1/(1 − e^{−T/τ}). Derivative with respect to ln τ into `dLnTau` when given.
 */
export function tailBasis(
  n: number,
  startIndex: number,
  binWidthNs: number,
  tauNs: number,
  periodNs: number | null,
  out: Float64Array,
  dLnTau: Float64Array | null,
): void {
  const h = binWidthNs / tauNs;
  const x = Math.exp(-h);
  const ps = psi(h);
  const dps = -h * dPsi(h);
  let g = 1;
  let dg = 0;
  if (periodNs !== null && periodNs > 0) {
    const R = periodNs / binWidthNs;
    const oneMinusR = -Math.expm1(-R * h);
    g = 1 / oneMinusR;
    dg = (g * (1 - oneMinusR) * R * h) / oneMinusR;
  }
  let E = 1;
  for (let i = 0; i < n; i++) {
    if (i < startIndex) {
      out[i] = 0;
      if (dLnTau) dLnTau[i] = 0;
      continue;
    }
    const k = i - startIndex;
    out[i] = g * ps * E;
    // ∂E/∂lnτ = E·k·h.
    if (dLnTau) dLnTau[i] = dg * ps * E + g * dps * E + g * ps * E * k * h;
    E *= x;
  }
}

/** Bins of a channel range: [from + k·width, min(from + (k + 1)·width, to)), k = 0 … ⌈(to − from)/width⌉ − 1. */
export interface ChannelBins {
  from: number;
  to: number;
  width: number;
}

/** Number of bins (the last one may be shorter than `width`). */
export const binCount = (b: ChannelBins): number => Math.ceil((b.to - b.from) / b.width);

/** Means of `curve` (times `scale`) over the bins, into out[offset + k]. */
export function binMeans(
  curve: ArrayLike<number>,
  bins: ChannelBins,
  out: Float64Array,
  offset: number,
  scale = 1,
): void {
  const M = binCount(bins);
  for (let k = 0; k < M; k++) {
    const a = bins.from + k * bins.width;
    const b = Math.min(a + bins.width, bins.to);
    let sum = 0;
    for (let i = a; i < b; i++) sum += curve[i];
    out[offset + k] = (scale * sum) / (b - a);
  }
}

/**
 * Means of the single-pulse basis curve of `exponentialBasis` over the bins, into out[offset + k]:
 * the same values as `binMeans` of the whole curve, to rounding. Past the IRF's last non-zero channel
 * e the curve is geometric, cₑ·x^(i − e) with x = e^{−Δ/τ}, so only channels 0 … e are run one by
 * one and the bins beyond are summed in closed form: the work is the IRF's support plus one step per
 * bin instead of every channel (the start-value search ranks a dozen lifetimes this way). `work`: at
 * least as long as `irf`; `span` as for `exponentialBasis`.
 */
export function exponentialBasisBinMeans(
  irf: Float64Array,
  binWidthNs: number,
  tauNs: number,
  bins: ChannelBins,
  out: Float64Array,
  offset: number,
  work: Float64Array,
  span: ChannelSpan | null = null,
): void {
  const n = irf.length;
  let end = span ? Math.min(span.end, n) : n;
  while (end > 0 && irf[end - 1] === 0) end--;
  // Channels 0 … e, e = end (the first zero after the support, where the curve is cₑ = K·S), run as
  // the full basis would run them; a head that ends in a zero gives the same values there.
  const head = Math.min(end + 1, n);
  exponentialBasis(
    irf.subarray(0, head),
    binWidthNs,
    tauNs,
    null,
    work.subarray(0, head),
    null,
    null,
    null,
    span ? { first: span.first, end: head } : null,
  );
  const h = binWidthNs / tauNs;
  const last = work[head - 1];
  // Σ_{i=a}^{b−1} x^(i − e) over a full bin = x^(a − e)·(1 − x^w)/(1 − x), by expm1 for long τ.
  const fullBinRatio = Math.expm1(-bins.width * h) / Math.expm1(-h);
  const stepFactor = Math.exp(-bins.width * h);
  const M = binCount(bins);
  let power = 0;
  let prevA2 = -1;
  for (let k = 0; k < M; k++) {
    const a = bins.from + k * bins.width;
    const b = Math.min(a + bins.width, bins.to);
    let sum = 0;
    const headEnd = Math.min(b, head);
    for (let i = a; i < headEnd; i++) sum += work[i];
    if (b > head) {
      const a2 = Math.max(a, head);
      // x^(a2 − e) with e = head − 1: exact at the first tail bin, then one factor per bin step.
      power = prevA2 >= 0 && a2 - prevA2 === bins.width ? power * stepFactor : Math.exp(-(a2 - head + 1) * h);
      prevA2 = a2;
      const ratio = b - a2 === bins.width ? fullBinRatio : Math.expm1(-(b - a2) * h) / Math.expm1(-h);
      sum += last * power * ratio;
    }
    out[offset + k] = sum / (b - a);
  }
}
