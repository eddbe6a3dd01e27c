/**
 * Fluorescence quantum efficiency from lifetimes when no yield was measured.
 *
 * (1) With a predicted radiative rate: η = k_r^SB·τ. This is an estimate resting on the Strickler–Berg
 *     assumptions (same transition in absorption and emission, no strong geometry change, one species).
 * (2) From a temperature series: non-radiative channels are usually thermally activated, so at low
 *     temperature the lifetime levels off at a plateau. Taking the plateau as purely radiative,
 *     η(T) = τ(T)/τ_plateau. Where residual non-radiative decay survives at the plateau, every η is an
 *     overestimate by the plateau's own efficiency, 1/η_plateau.
 */
import { InputError } from '../errors.js';

export interface EfficiencyEstimate {
  eta: number;
  etaErr: number;
  notes: string[];
  warnings: string[];
}

/** η = k_r^SB·τ, with first-order errors when given. Throws InputError for non-positive inputs. */
export function efficiencyFromSb(
  krSbPerS: number,
  tauNs: number,
  errors: { krSbErrPerS?: number; tauErrNs?: number } = {},
): EfficiencyEstimate {
  if (!(Number.isFinite(krSbPerS) && krSbPerS > 0))
    throw new InputError(`the radiative rate ${krSbPerS} s⁻¹ must be > 0.`);
  if (!(Number.isFinite(tauNs) && tauNs > 0))
    throw new InputError(`the lifetime τ = ${tauNs} ns must be > 0.`);
  const eta = krSbPerS * tauNs * 1e-9;
  const etaErr = eta * Math.hypot((errors.krSbErrPerS ?? 0) / krSbPerS, (errors.tauErrNs ?? 0) / tauNs);
  const warnings: string[] = [];
  if (eta > 1) {
    warnings.push(
      `η = k_r^SB·τ = ${eta.toPrecision(3)} exceeds 1: the predicted radiative rate is too high for this lifetime ` +
        '(band limits, ε scale, aggregation), or τ belongs to another species.',
    );
  }
  return {
    eta,
    etaErr,
    notes: [
      'Estimate η = k_r^SB·τ: assumes the whole radiative rate is the Strickler–Berg prediction for the absorbing ' +
        'transition and that τ is the lifetime of the same emitting state. It is not a measured quantum yield.',
    ],
    warnings,
  };
}

export interface TemperaturePoint {
  temperatureK: number;
  tauNs: number;
  tauErrNs?: number;
}

export interface TemperatureEfficiencyOptions {
  /**
   * Lifetimes within this relative distance of the plateau mean join the plateau even when their error
   * bars are tighter. Default: 0.03 (3 %).
   */
  relativeTolerance?: number;
  /** Number of combined standard errors within which a lifetime agrees with the plateau. Default: 2. */
  sigmas?: number;
}

export interface TemperatureEfficiencyResult {
  plateauTauNs: number;
  plateauTauErrNs: number;
  /** Temperatures (K) of the points that form the plateau. */
  plateauMembers: number[];
  points: { temperatureK: number; eta: number; etaErr: number }[];
  notes: string[];
  warnings: string[];
}

/**
 * η(T) = τ(T)/τ_plateau. Plateau detection: points are sorted by temperature; starting from the coldest,
 * each next-warmer point joins while its lifetime agrees with the current plateau mean within
 * `sigmas` combined standard errors or within `relativeTolerance`, whichever is wider. The plateau τ is
 * the inverse-variance weighted mean of its members (plain mean and standard error of the mean when
 * lifetimes carry no errors). Errors of η combine σ(τ) and σ(τ_plateau) as independent (for plateau
 * members this overstates the error slightly, since they share data with the mean).
 */
export function efficiencyFromTemperatureSeries(
  points: TemperaturePoint[],
  options: TemperatureEfficiencyOptions = {},
): TemperatureEfficiencyResult {
  const tol = options.relativeTolerance ?? 0.03;
  const k = options.sigmas ?? 2;
  if (points.length < 2)
    throw new InputError(`a temperature series needs at least 2 points, got ${points.length}.`);
  points.forEach((p, i) => {
    if (!(Number.isFinite(p.temperatureK) && p.temperatureK > 0)) {
      throw new InputError(`point ${i + 1}: temperature ${p.temperatureK} K must be > 0.`);
    }
    if (!(Number.isFinite(p.tauNs) && p.tauNs > 0))
      throw new InputError(`point ${i + 1}: lifetime ${p.tauNs} ns must be > 0.`);
    if (p.tauErrNs !== undefined && !(Number.isFinite(p.tauErrNs) && p.tauErrNs >= 0)) {
      throw new InputError(`point ${i + 1}: lifetime uncertainty ${p.tauErrNs} ns must be ≥ 0.`);
    }
  });
  const sorted = [...points].sort((a, b) => a.temperatureK - b.temperatureK);
  const haveErrors = sorted.every((p) => (p.tauErrNs ?? 0) > 0);

  const plateauOf = (members: TemperaturePoint[]): { mean: number; err: number } => {
    if (haveErrors) {
      let sw = 0;
      let swx = 0;
      for (const p of members) {
        const w = 1 / (p.tauErrNs as number) ** 2;
        sw += w;
        swx += w * p.tauNs;
      }
      return { mean: swx / sw, err: Math.sqrt(1 / sw) };
    }
    const m = members.reduce((s, p) => s + p.tauNs, 0) / members.length;
    if (members.length < 2) return { mean: m, err: 0 };
    const v = members.reduce((s, p) => s + (p.tauNs - m) ** 2, 0) / (members.length - 1);
    return { mean: m, err: Math.sqrt(v / members.length) };
  };

  const members: TemperaturePoint[] = [sorted[0]];
  for (let i = 1; i < sorted.length; i++) {
    const { mean, err } = plateauOf(members);
    const p = sorted[i];
    const combined = Math.hypot(p.tauErrNs ?? 0, err);
    const allowed = Math.max(k * combined, tol * mean);
    if (Math.abs(p.tauNs - mean) <= allowed) members.push(p);
    else break;
  }
  const plateau = plateauOf(members);
  const warnings: string[] = [];
  const notes = [
    'η(T) = τ(T)/τ_plateau, taking the low-temperature plateau as purely radiative. If non-radiative decay survives ' +
      'at the plateau, every η is overestimated by the factor 1/η_plateau.',
    `Plateau: the ${members.length} coldest point(s) whose lifetimes agree with their mean within ${k} combined standard ` +
      `errors or ${Math.round(tol * 100)} % (${members.map((m) => m.temperatureK).join(', ')} K); τ_plateau is their ` +
      `${haveErrors ? 'inverse-variance weighted' : 'plain'} mean.`,
  ];
  if (members.length < 2) {
    warnings.push(
      'No plateau: the two coldest lifetimes disagree, so the lifetime is still rising as the temperature falls. ' +
        'τ_plateau is the coldest lifetime alone and η values are upper bounds.',
    );
  }
  if (members.length === sorted.length) {
    warnings.push(
      'Every lifetime belongs to the plateau: the series shows no thermally activated decay, and η ≈ 1 throughout.',
    );
  }
  const out = sorted.map((p) => {
    const eta = p.tauNs / plateau.mean;
    const etaErr = eta * Math.hypot((p.tauErrNs ?? 0) / p.tauNs, plateau.err / plateau.mean);
    return { temperatureK: p.temperatureK, eta, etaErr };
  });
  const over = out.filter(
    (p) => p.eta - 2 * p.etaErr > 1 && !members.some((m) => m.temperatureK === p.temperatureK),
  );
  if (over.length) {
    warnings.push(
      `At ${over.map((p) => p.temperatureK).join(', ')} K the lifetime exceeds the plateau beyond its errors (η > 1): ` +
        'the low-temperature points may not be radiatively limited, or the decay changes character.',
    );
  }
  return {
    plateauTauNs: plateau.mean,
    plateauTauErrNs: plateau.err,
    plateauMembers: members.map((m) => m.temperatureK),
    points: out,
    notes,
    warnings,
  };
}
