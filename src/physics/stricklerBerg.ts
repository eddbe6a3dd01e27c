/**
 * Strickler–Berg radiative rate from an absorption and an emission spectrum (Strickler & Berg,
 * J. Chem. Phys. 37, 814 (1962)):
 *
 *   k_r^SB = K · n² · ⟨ν̃_f⁻³⟩⁻¹ · (g_l/g_u) · ∫ε d ln ν̃,    K = 8πc·ln10·1000/N_A (c in cm s⁻¹),
 *   ⟨ν̃_f⁻³⟩⁻¹ = ∫F(ν̃) dν̃ / ∫ν̃⁻³ F(ν̃) dν̃,
 *
 * with ε in L mol⁻¹ cm⁻¹, ν̃ in cm⁻¹ and F the emission spectrum as photon counts per unit wavenumber.
 * Emission recorded per nm is turned into a per-wavenumber photon spectrum with the Jacobian
 * |dλ/dν̃| ∝ λ² (and a further λ for an energy spectrum, since photons ∝ energy·λ). ε is not a density
 * and needs no Jacobian: ∫ε d ln ν̃ is integrated on the ln ν̃ grid of either axis.
 *
 * The absorption integral runs over the band of the lowest-energy transition: limits given by the
 * caller, or chosen automatically (see chooseAbsorptionBand) and always reported.
 */
import { SCHEMA_VERSION, type StricklerBergResult } from '../../shared/schema.js';
import { InputError } from '../errors.js';
import type { Spectrum } from '../io/types.js';
import {
  DIPOLE2_PER_INTEGRATED_EPS_LN_NU,
  EINSTEIN_A_PER_NU3_MU2,
  OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS,
  STRICKLER_BERG_K,
} from './conversions.js';

export interface StricklerBergInput {
  /** Molar absorption coefficient ε (L mol⁻¹ cm⁻¹) on a nm or cm⁻¹ axis. */
  absorption: Spectrum;
  /** Emission spectrum: photons per axis unit unless `emissionOrdinate` is 'energyPerAxisUnit'. */
  emission: Spectrum;
  /** Refractive index of the solvent (at the emission wavelengths, in principle; n_D in practice). */
  refractiveIndex: number;
  /** g_l/g_u, lower- over upper-state degeneracy. Default: 1. */
  degeneracyRatio?: number;
  /** Absorption band to integrate, cm⁻¹ [low, high]. Default: chosen automatically. */
  bandCm?: [number, number];
  /** Measured fluorescence quantum yield, for the comparison with the prediction. */
  qy?: number;
  /** Measured lifetime, ns, for the comparison with the prediction. */
  tauNs?: number;
  /** Standard uncertainty of the measured Φ. Default: 0. */
  qyErr?: number;
  /** Standard uncertainty of the measured τ, ns. Default: 0. */
  tauErrNs?: number;
  /** Tuning of the automatic band choice. */
  autoBand?: AutoBandOptions;
}

export interface AutoBandOptions {
  /** Half-width of the moving-average smoothing, cm⁻¹. Default: 150. */
  smoothingHalfWidthCm?: number;
  /**
   * A minimum is "clear" once the smoothed ε has fallen to this fraction of the band maximum (vibronic
   * dips within one band are usually shallower). Default: 0.35.
   */
  valleyFraction?: number;
}

/** A spectrum on an ascending wavenumber grid. */
export interface WavenumberSeries {
  nuCm: Float64Array;
  y: Float64Array;
}

function spectrumLabel(s: Spectrum): string {
  return s.source || `${s.kind} spectrum`;
}

function validateSpectrum(s: Spectrum, role: 'absorption' | 'emission'): void {
  const where = { file: spectrumLabel(s) };
  if (s.x.length !== s.y.length) {
    throw new InputError(
      `the ${role} spectrum has ${s.x.length} axis values but ${s.y.length} ordinates.`,
      where,
    );
  }
  if (s.x.length < 3)
    throw new InputError(`the ${role} spectrum has ${s.x.length} points; at least 3 are needed.`, where);
  for (let i = 0; i < s.x.length; i++) {
    if (!Number.isFinite(s.x[i]) || !Number.isFinite(s.y[i])) {
      throw new InputError(`the ${role} spectrum has a non-finite value at point ${i + 1}.`, where);
    }
    if (!(s.x[i] > 0)) {
      throw new InputError(
        `the ${role} spectrum's axis value ${s.x[i]} ${s.axis} at point ${i + 1} must be > 0.`,
        where,
      );
    }
    if (i > 0 && !(s.x[i] > s.x[i - 1])) {
      throw new InputError(
        `the ${role} spectrum's axis is not strictly ascending at point ${i + 1} (${s.x[i]} ${s.axis}).`,
        where,
      );
    }
  }
}

/** Absorption ε on an ascending wavenumber grid. ε is a coefficient, not a density: values carry over unchanged. */
export function absorptionOnWavenumber(s: Spectrum): WavenumberSeries {
  const n = s.x.length;
  const nuCm = new Float64Array(n);
  const y = new Float64Array(n);
  if (s.axis === 'cm-1') {
    nuCm.set(s.x);
    y.set(s.y);
  } else {
    for (let i = 0; i < n; i++) {
      nuCm[i] = 1e7 / s.x[n - 1 - i];
      y[i] = s.y[n - 1 - i];
    }
  }
  return { nuCm, y };
}

/**
 * Emission as relative photon counts per unit wavenumber on an ascending grid, and a sentence saying what
 * was assumed. Per nm: F(ν̃) ∝ F_λ·λ² (photons) or E_λ·λ³ (energy). Per cm⁻¹: F(ν̃) = F_ν̃ (photons) or
 * E_ν̃/ν̃ (energy). Constant factors are dropped: only ratios of integrals of F enter.
 */
export function emissionPhotonsPerWavenumber(s: Spectrum): WavenumberSeries & { assumption: string } {
  const n = s.x.length;
  const nuCm = new Float64Array(n);
  const y = new Float64Array(n);
  const energy = s.emissionOrdinate === 'energyPerAxisUnit';
  if (s.axis === 'cm-1') {
    for (let i = 0; i < n; i++) {
      nuCm[i] = s.x[i];
      y[i] = energy ? s.y[i] / s.x[i] : s.y[i];
    }
  } else {
    for (let i = 0; i < n; i++) {
      const lambdaNm = s.x[n - 1 - i];
      nuCm[i] = 1e7 / lambdaNm;
      y[i] = s.y[n - 1 - i] * lambdaNm ** (energy ? 3 : 2);
    }
  }
  const assumption =
    s.axis === 'cm-1'
      ? energy
        ? 'emission given as energy per cm⁻¹; converted to photons per cm⁻¹ by dividing by ν̃'
        : 'emission given as photon counts per cm⁻¹; used as is'
      : energy
        ? 'emission given as energy per nm; converted to photons per cm⁻¹ with F(ν̃) ∝ E_λ·λ³ (λ² Jacobian × λ for photons)'
        : 'emission given as photon counts per nm; converted to photons per cm⁻¹ with the λ² Jacobian, F(ν̃) ∝ F_λ·λ²';
  return { nuCm, y, assumption };
}

/** Trapezoid ∫ y dx over [lo, hi] on an ascending grid, with linear interpolation at limits between nodes. */
export function trapezoidBetween(x: ArrayLike<number>, y: ArrayLike<number>, lo: number, hi: number): number {
  const n = x.length;
  let sum = 0;
  for (let i = 0; i < n - 1; i++) {
    const a = Math.max(x[i], lo);
    const b = Math.min(x[i + 1], hi);
    if (!(b > a)) continue;
    const slope = (y[i + 1] - y[i]) / (x[i + 1] - x[i]);
    const ya = y[i] + slope * (a - x[i]);
    const yb = y[i] + slope * (b - x[i]);
    sum += 0.5 * (ya + yb) * (b - a);
  }
  return sum;
}

/** Robust noise level of a sampled curve: MAD of second differences, scaled to one point's σ for white noise. */
export function noiseSigma(y: ArrayLike<number>): number {
  const n = y.length;
  if (n < 5) return 0;
  const d = new Float64Array(n - 2);
  for (let i = 1; i < n - 1; i++) d[i - 1] = Math.abs(y[i + 1] - 2 * y[i] + y[i - 1]);
  d.sort();
  const mad = d[Math.floor(d.length / 2)];
  // For white noise, Δ²y has σ·√6; the MAD of a normal variable is 0.6745σ.
  return mad / 0.6745 / Math.sqrt(6);
}

/** Centred moving average over ±halfWidth on a possibly non-uniform grid. */
function smoothOnGrid(x: Float64Array, y: Float64Array, halfWidth: number): Float64Array {
  const n = x.length;
  const out = new Float64Array(n);
  let lo = 0;
  let hi = 0;
  let sum = 0;
  for (let i = 0; i < n; i++) {
    while (hi < n && x[hi] <= x[i] + halfWidth) sum += y[hi++];
    while (x[lo] < x[i] - halfWidth) sum -= y[lo++];
    out[i] = sum / (hi - lo);
  }
  return out;
}

export interface BandChoice {
  bandCm: [number, number];
  description: string;
  warnings: string[];
  /** Wavenumber of the band maximum (smoothed), cm⁻¹. */
  peakCm: number;
}

/**
 * The lowest-energy absorption band: from the red end of the data up to the first clear minimum beyond
 * the first significant maximum. Procedure, on ε smoothed by a moving average (±150 cm⁻¹ by default),
 * scanning from low to high wavenumber: the band maximum is significant once it exceeds max(5σ, 0.5 % of
 * the largest ε), σ the point noise estimated from second differences. A minimum is a point after which
 * ε rises again by more than max(3σ, 2 % of the band maximum); it is clear when it lies below
 * `valleyFraction` of the highest ε seen so far (vibronic dips within one band are usually shallower).
 * If ε falls below that level and never rises again, the band ends at its lowest point. Without a clear
 * minimum the first shallow one is taken, with a warning; without any, the data's blue end.
 */
export function chooseAbsorptionBand(abs: WavenumberSeries, options: AutoBandOptions = {}): BandChoice {
  const { nuCm, y } = abs;
  const n = nuCm.length;
  const halfWidth = options.smoothingHalfWidthCm ?? 150;
  const valleyFraction = options.valleyFraction ?? 0.35;
  const sm = smoothOnGrid(nuCm, y, halfWidth);
  const sigma = noiseSigma(y);
  let globalMax = -Infinity;
  for (const v of sm) globalMax = Math.max(globalMax, v);
  const significant = Math.max(5 * sigma, 0.005 * globalMax);
  const warnings: string[] = [];
  const fmt = (v: number) => `${Math.round(v)} cm⁻¹ (${(1e7 / v).toFixed(1)} nm)`;
  const lowCm = nuCm[0];

  let runMax = -Infinity;
  let peakIdx = -1;
  let cand = -1; // lowest point since the last new maximum
  let shallow = -1; // first minimum that was not clear
  let maxAtShallow = 0;
  let clear = -1;
  for (let i = 0; i < n; i++) {
    if (sm[i] > runMax) {
      runMax = sm[i];
      peakIdx = i;
      cand = i;
      continue;
    }
    if (runMax < significant) continue;
    if (sm[i] < sm[cand]) cand = i;
    const rise = Math.max(3 * sigma, 0.02 * runMax);
    if (sm[i] >= sm[cand] + rise && sm[cand] < runMax - rise) {
      if (sm[cand] <= valleyFraction * runMax) {
        clear = cand;
        break;
      }
      if (shallow < 0) {
        shallow = cand;
        maxAtShallow = runMax;
      }
      cand = i;
    }
  }
  if (peakIdx < 0 || runMax < significant) {
    throw new InputError(
      'the absorption spectrum has no band above its noise level; give the band limits explicitly.',
    );
  }
  const peakCm = nuCm[peakIdx];
  const passedShallow = (end: number) => {
    // A shallow dip followed by a stronger band may separate two transitions rather than vibronic levels.
    if (shallow >= 0 && shallow < end && runMax > maxAtShallow * 1.02) {
      warnings.push(
        `The band passes a shallow minimum at ${fmt(nuCm[shallow])} followed by stronger absorption; if it separates ` +
          'two transitions, give the band limits explicitly.',
      );
    }
  };
  if (clear >= 0) {
    passedShallow(clear);
    return {
      bandCm: [lowCm, nuCm[clear]],
      description:
        `automatic: lowest-energy band from the red end of the data to the first clear minimum at ${fmt(nuCm[clear])} ` +
        `(band maximum at ${fmt(peakCm)}; smoothed ±${halfWidth} cm⁻¹)`,
      warnings,
      peakCm,
    };
  }
  if (cand >= 0 && sm[cand] <= valleyFraction * runMax) {
    passedShallow(cand);
    return {
      bandCm: [lowCm, nuCm[cand]],
      description:
        `automatic: lowest-energy band from the red end of the data to ${fmt(nuCm[cand])}, where ε reaches its lowest ` +
        `value beyond the band maximum at ${fmt(peakCm)} without rising again`,
      warnings,
      peakCm,
    };
  }
  if (shallow >= 0) {
    warnings.push(
      `No clear minimum separates the lowest-energy band from higher transitions; the first shallow minimum at ` +
        `${fmt(nuCm[shallow])} was used. Check the band limits and give them explicitly if needed.`,
    );
    return {
      bandCm: [lowCm, nuCm[shallow]],
      description: `automatic: lowest-energy band up to the first (shallow) minimum at ${fmt(nuCm[shallow])}`,
      warnings,
      peakCm,
    };
  }
  warnings.push(
    'No minimum beyond the lowest-energy band lies inside the absorption data; the whole spectrum was integrated, which ' +
      'may include higher transitions or miss part of the band.',
  );
  return {
    bandCm: [lowCm, nuCm[n - 1]],
    description: 'automatic: no minimum found; whole absorption spectrum',
    warnings,
    peakCm,
  };
}

/** Outside this ratio of measured to predicted k_r the comparison note speaks of a mismatch. */
const AGREEMENT_LOW = 0.7;
const AGREEMENT_HIGH = 1.3;
/** Stokes shift (cm⁻¹) beyond which a strong geometry change is likely. */
const LARGE_STOKES_SHIFT_CM = 6000;
/** Oscillator strength below which the transition is weakly allowed and the relation is known to fail. */
const WEAK_OSCILLATOR_STRENGTH = 0.01;

function positionText(nuCm: number, axis: Spectrum['axis']): string {
  return axis === 'nm' ? `${(1e7 / nuCm).toFixed(1)} nm` : `${nuCm.toFixed(0)} cm⁻¹`;
}

/** The Strickler–Berg analysis; see the module comment. Throws InputError for unusable spectra or parameters. */
export function stricklerBerg(input: StricklerBergInput): StricklerBergResult {
  const { absorption, emission } = input;
  validateSpectrum(absorption, 'absorption');
  validateSpectrum(emission, 'emission');
  const n = input.refractiveIndex;
  if (!(Number.isFinite(n) && n >= 1 && n < 3)) {
    throw new InputError(`the refractive index ${n} is not a plausible solvent index (1 ≤ n < 3).`);
  }
  const g = input.degeneracyRatio ?? 1;
  if (!(Number.isFinite(g) && g > 0))
    throw new InputError(`the degeneracy ratio g_l/g_u = ${g} must be > 0.`);
  if (input.qy !== undefined && !(Number.isFinite(input.qy) && input.qy > 0 && input.qy <= 1)) {
    throw new InputError(`the quantum yield Φ = ${input.qy} is outside (0, 1].`);
  }
  if (input.tauNs !== undefined && !(Number.isFinite(input.tauNs) && input.tauNs > 0)) {
    throw new InputError(`the lifetime τ = ${input.tauNs} ns must be > 0.`);
  }
  for (const [what, v] of [
    ['quantum-yield uncertainty', input.qyErr],
    ['lifetime uncertainty', input.tauErrNs],
  ] as const) {
    if (v !== undefined && !(Number.isFinite(v) && v >= 0))
      throw new InputError(`the ${what} ${v} must be ≥ 0.`);
  }
  const warnings: string[] = [];
  const absWhere = { file: spectrumLabel(absorption) };
  const emWhere = { file: spectrumLabel(emission) };

  const abs = absorptionOnWavenumber(absorption);
  const absLo = abs.nuCm[0];
  const absHi = abs.nuCm[abs.nuCm.length - 1];

  // Band limits.
  let band: [number, number];
  let bandChoice: string;
  let bandPeakCm: number;
  if (input.bandCm) {
    let [lo, hi] = input.bandCm;
    if (!(Number.isFinite(lo) && Number.isFinite(hi) && hi > lo && lo > 0)) {
      throw new InputError(`the band limits [${lo}, ${hi}] cm⁻¹ must be positive and ascending.`);
    }
    if (hi <= absLo || lo >= absHi) {
      throw new InputError(
        `the band limits [${lo}, ${hi}] cm⁻¹ lie outside the absorption data (${absLo.toFixed(0)}–${absHi.toFixed(0)} cm⁻¹).`,
        absWhere,
      );
    }
    if (lo < absLo || hi > absHi) {
      warnings.push(
        `The band limits [${lo}, ${hi}] cm⁻¹ reach beyond the absorption data; integrated over ` +
          `[${Math.max(lo, absLo).toFixed(0)}, ${Math.min(hi, absHi).toFixed(0)}] cm⁻¹ only.`,
      );
      lo = Math.max(lo, absLo);
      hi = Math.min(hi, absHi);
    }
    band = [lo, hi];
    bandChoice = `given: ${lo.toFixed(0)}–${hi.toFixed(0)} cm⁻¹ (${(1e7 / hi).toFixed(1)}–${(1e7 / lo).toFixed(1)} nm)`;
    let pk = -Infinity;
    bandPeakCm = lo;
    for (let i = 0; i < abs.nuCm.length; i++) {
      if (abs.nuCm[i] >= lo && abs.nuCm[i] <= hi && abs.y[i] > pk) {
        pk = abs.y[i];
        bandPeakCm = abs.nuCm[i];
      }
    }
  } else {
    const choice = chooseAbsorptionBand(abs, input.autoBand);
    band = choice.bandCm;
    bandChoice = choice.description;
    bandPeakCm = choice.peakCm;
    warnings.push(...choice.warnings);
  }

  // ε inside the band: negative values mean a baseline problem, not a number to integrate silently.
  const sigmaAbs = noiseSigma(abs.y);
  let epsMax = -Infinity;
  let epsMin = Infinity;
  let epsMinAt = band[0];
  for (let i = 0; i < abs.nuCm.length; i++) {
    const v = abs.nuCm[i];
    if (v < band[0] || v > band[1]) continue;
    epsMax = Math.max(epsMax, abs.y[i]);
    if (abs.y[i] < epsMin) {
      epsMin = abs.y[i];
      epsMinAt = v;
    }
  }
  if (!(epsMax > 0)) {
    throw new InputError('the absorption spectrum has no positive ε inside the integration band.', absWhere);
  }
  if (epsMin < -Math.max(5 * sigmaAbs, 0.02 * epsMax)) {
    throw new InputError(
      `ε = ${epsMin.toPrecision(4)} L mol⁻¹ cm⁻¹ at ${positionText(epsMinAt, absorption.axis)} inside the integration band is ` +
        'negative beyond the noise: a molar absorption coefficient cannot be negative. Correct the baseline (solvent ' +
        'reference) or give band limits that exclude it.',
      absWhere,
    );
  }
  const redEdgeEps = abs.y[0];
  if (band[0] <= absLo && redEdgeEps > 0.05 * epsMax) {
    warnings.push(
      `The absorption data end at ${positionText(absLo, absorption.axis)} with ε still at ` +
        `${Math.round((100 * redEdgeEps) / epsMax)} % of the band maximum: the band is cut off and ∫ε is underestimated.`,
    );
  }

  const lnNu = abs.nuCm.map(Math.log);
  const integratedEpsLnNu = trapezoidBetween(lnNu, abs.y, Math.log(band[0]), Math.log(band[1]));
  const integratedEpsNu = trapezoidBetween(abs.nuCm, abs.y, band[0], band[1]);
  if (!(integratedEpsLnNu > 0)) {
    throw new InputError('the integrated absorption over the band is not positive.', absWhere);
  }

  // Emission.
  const em = emissionPhotonsPerWavenumber(emission);
  const emLo = em.nuCm[0];
  const emHi = em.nuCm[em.nuCm.length - 1];
  let fMax = -Infinity;
  let fMaxAt = emLo;
  let fMin = Infinity;
  for (let i = 0; i < em.y.length; i++) {
    if (em.y[i] > fMax) {
      fMax = em.y[i];
      fMaxAt = em.nuCm[i];
    }
    fMin = Math.min(fMin, em.y[i]);
  }
  if (!(fMax > 0)) throw new InputError('the emission spectrum has no positive intensity.', emWhere);
  if (emLo >= absHi || emHi <= absLo) {
    throw new InputError(
      `the emission spectrum (${emLo.toFixed(0)}–${emHi.toFixed(0)} cm⁻¹) lies entirely outside the absorption spectrum's ` +
        `range (${absLo.toFixed(0)}–${absHi.toFixed(0)} cm⁻¹): the two cannot describe the same transition. Check the ` +
        'files, their axes and units.',
      emWhere,
    );
  }
  if (fMaxAt > band[1]) {
    throw new InputError(
      `the emission maximum (${positionText(fMaxAt, emission.axis)}) lies at higher energy than the whole absorption band ` +
        `(up to ${positionText(band[1], absorption.axis)}); emission from the lowest excited state lies below it. ` +
        'Are the absorption and emission files swapped, or the band limits wrong?',
      emWhere,
    );
  }
  // Negative values within the noise are baseline noise (the importer reports them); deeper ones are not.
  if (fMin < -Math.max(5 * noiseSigma(em.y), 0.02 * fMax)) {
    warnings.push(
      `The emission spectrum has values down to ${Math.round((100 * fMin) / fMax)} % of its maximum: check the background subtraction.`,
    );
  }
  const edgeFraction = Math.max(em.y[0], em.y[em.y.length - 1]) / fMax;
  if (edgeFraction > 0.05) {
    warnings.push(
      `The emission spectrum is cut off: an edge value is ${Math.round(100 * edgeFraction)} % of its maximum, so ⟨ν̃_f⁻³⟩ misses part of the band.`,
    );
  }
  const stokesCm = bandPeakCm - fMaxAt;
  if (stokesCm < 0) {
    warnings.push(
      `The emission maximum lies ${Math.round(-stokesCm)} cm⁻¹ above the absorption maximum (anti-Stokes): check that both spectra belong to the same transition.`,
    );
  } else if (stokesCm > LARGE_STOKES_SHIFT_CM) {
    warnings.push(
      `Large Stokes shift (${Math.round(stokesCm)} cm⁻¹): a strong geometry change or emission from another state makes the Strickler–Berg relation unreliable.`,
    );
  }

  const emInv3 = em.y.map((f, i) => f / em.nuCm[i] ** 3);
  const fIntegral = trapezoidBetween(em.nuCm, em.y, emLo, emHi);
  const fInv3Integral = trapezoidBetween(em.nuCm, emInv3, emLo, emHi);
  if (!(fIntegral > 0 && fInv3Integral > 0)) {
    throw new InputError(
      'the integrated emission is not positive; check the background subtraction.',
      emWhere,
    );
  }
  const emissionInvCubeMeanCm3 = fIntegral / fInv3Integral;
  const emissionMeanWavenumberCm = Math.cbrt(emissionInvCubeMeanCm3);

  const krSbPerS = STRICKLER_BERG_K * n * n * emissionInvCubeMeanCm3 * g * integratedEpsLnNu;
  const oscillatorStrength = OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS * integratedEpsNu;
  const dipoleDebye = Math.sqrt(DIPOLE2_PER_INTEGRATED_EPS_LN_NU * integratedEpsLnNu);
  const einsteinAVacuumPerS = EINSTEIN_A_PER_NU3_MU2 * emissionInvCubeMeanCm3 * dipoleDebye ** 2 * g;

  if (oscillatorStrength < WEAK_OSCILLATOR_STRENGTH) {
    warnings.push(
      `The band is weakly allowed (f = ${oscillatorStrength.toPrecision(2)} < ${WEAK_OSCILLATOR_STRENGTH}); the Strickler–Berg ` +
        'relation is known to fail for weakly allowed transitions, where vibronically borrowed intensity dominates ∫ε.',
    );
  }

  const notes = [
    'k_r^SB = K·n²·⟨ν̃_f⁻³⟩⁻¹·(g_l/g_u)·∫ε d ln ν̃ with K = 8πc·ln10·1000/N_A = ' +
      `${STRICKLER_BERG_K.toPrecision(5)} (CODATA 2018 constants; the 1962 paper prints 2.880e-9).`,
    'The oscillator strength f = 4.319e-9·∫ε dν̃ and the dipole μ (from μ² = 9.186e-3 D²·∫ε d ln ν̃) are apparent values, ' +
      'uncorrected for the medium. Einstein A "vacuum" is the rate that dipole would give in vacuum at ⟨ν̃_f⁻³⟩⁻¹; ' +
      '"medium" multiplies it by n², which is k_r^SB itself (local-field factors cancel between absorption and emission).',
    'Assumes that absorption and emission belong to the same transition, with similar Franck–Condon envelopes (mirror image), ' +
      'a single absorbing and emitting species, and ε of the pure compound.',
  ];

  const result: StricklerBergResult = {
    schemaVersion: SCHEMA_VERSION,
    krSbPerS,
    tau0SbNs: 1e9 / krSbPerS,
    emissionMeanWavenumberCm,
    emissionInvCubeMeanCm3,
    integratedEpsLnNu,
    integratedEpsNu,
    oscillatorStrength,
    dipoleDebye,
    einsteinAVacuumPerS,
    einsteinAMediumPerS: einsteinAVacuumPerS * n * n,
    refractiveIndex: n,
    degeneracyRatio: g,
    bandCm: band,
    bandChoice,
    emissionAssumption: em.assumption,
    notes,
    warnings,
  };

  if (input.tauNs !== undefined) {
    const qySb = krSbPerS * input.tauNs * 1e-9;
    result.qySb = qySb;
    const tauRel = (input.tauErrNs ?? 0) / input.tauNs;
    if (tauRel > 0) result.qySbErr = qySb * tauRel;
    if (input.qy === undefined) {
      result.note =
        `Without a measured yield, η = k_r^SB·τ = ${qySb.toPrecision(3)} estimates the quantum efficiency, assuming the ` +
        'whole radiative rate is the Strickler–Berg one and τ is the lifetime of the same emitting state.';
    }
    if (qySb > 1) {
      warnings.push(
        `The predicted yield k_r^SB·τ = ${qySb.toPrecision(3)} exceeds 1: k_r^SB is overestimated (band limits, ε scale, ` +
          'aggregation) or τ belongs to another species.',
      );
    }
  }
  if (input.qy !== undefined && input.tauNs !== undefined) {
    const krMeasured = input.qy / (input.tauNs * 1e-9);
    const ratio = krMeasured / krSbPerS;
    result.krRatio = ratio;
    const ratioRel = Math.hypot((input.qyErr ?? 0) / input.qy, (input.tauErrNs ?? 0) / input.tauNs);
    if (ratioRel > 0) {
      result.krRatioErr = ratio * ratioRel;
      notes.push(
        'The uncertainties of Φ^SB and of the rate ratio carry only those of the measured Φ and τ; the uncertainty of ' +
          'k_r^SB itself (ε scale, band limits, refractive index) is not estimated and comes on top.',
      );
    }
    result.note = comparisonNote(ratio);
  }
  return result;
}

/** A hedged plain-language reading of k_r(measured)/k_r^SB. */
export function comparisonNote(ratio: number): string {
  const r = ratio.toPrecision(3);
  if (ratio >= AGREEMENT_LOW && ratio <= AGREEMENT_HIGH) {
    return (
      `Measured and predicted k_r agree within 30 % (ratio ${r}), as is usual for a strongly allowed transition whose ` +
      'emission mirrors its absorption.'
    );
  }
  if (ratio < AGREEMENT_LOW) {
    return (
      `The measured k_r is ${(1 / ratio).toPrecision(3)} times smaller than predicted (ratio ${r}). This often means ` +
      'that the emission comes from another, less allowed state than the one absorbing (a charge-transfer or twisted ' +
      'state), that the geometry changes strongly in the excited state, or that aggregates or impurities add to the ' +
      'absorption. It can also mean Φ or τ were measured under different conditions. The numbers alone cannot tell which.'
    );
  }
  return (
    `The measured k_r is ${ratio.toPrecision(3)} times larger than predicted (ratio ${r}). This often means a weakly ` +
    'allowed transition whose absorption underestimates the emitting strength (vibronically borrowed intensity), band ' +
    'limits that cut off part of the transition, an ε scale that is too low (concentration), or emission from a minority ' +
    'species. The numbers alone cannot tell which.'
  );
}
