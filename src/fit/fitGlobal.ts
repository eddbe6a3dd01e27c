/**
 * Global (linked-lifetime) analysis of a group of decays: one set of lifetimes shared by every member,
 * each member with its own amplitudes, background, and IRF shift (or modelled IRF centre and width)
 * and scatter where those are fitted.
 *
 * Method: one joint maximum-likelihood fit of every member's decay model, run by the fitter's own
 * Levenberg–Marquardt minimiser on the summed figure of merit (Poisson deviance by default). The
 * starting point comes from variable projection: the lifetimes are first pooled from each member's own
 * fit (inverse-variance mean of ln τ), then every member is refitted with the lifetimes held there, which
 * projects its own parameters out exactly; the joint fit then moves everything together. Under a
 * Poisson likelihood the member parameters are not a linear least-squares solution, so the joint fit,
 * not a projected one, gives the optimum and its curvature.
 *
 * Errors: the joint covariance is 2·H⁻¹, H the Gauss–Newton (Fisher) Hessian of the summed merit over
 * all free parameters; the shared lifetimes' errors are its diagonal, so every member's nuisance
 * parameters are accounted for.
 *
 * Each member's own result is its single-decay fit with the lifetimes held at the shared values (the
 * same optimum, since given the lifetimes the members separate), with the lifetimes' errors replaced by
 * the global ones.
 */

import type { FitResult, GlobalGroupResult } from '../../shared/schema.js';
import { ComputationError, InputError } from '../errors.js';
import type { Histogram } from '../io/types.js';
import type { DecayModel } from './decayModel.js';
import { resolveFitSetup, type FitSetup } from './fitSetup.js';
import { fitModel as defaultFitModel } from './fitModel.js';
import { decayModelFor, freeParameters, parameterBounds, parametersFromFit } from './globalBlock.js';
import { invertSymmetric, levenbergMarquardt, type LmProblem } from './lm.js';
import type { FitOptions } from './options.js';
import type { FitModelFn } from './selectComponents.js';

export interface GlobalMember {
  sample: string;
  decay: Histogram;
  irf: Histogram | null;
}

export interface GlobalSettings {
  /** Group name reported in the result. Default: the member names joined by '+'. */
  group?: string;
  /** The single-decay fitter used for the separate fits and the member reports. Default: fitModel. */
  fitModel?: FitModelFn;
}

export interface GlobalFitResult {
  global: GlobalGroupResult;
  /** Each member's fit at the shared lifetimes: its own statistics, the lifetimes' errors from the global fit. */
  members: FitResult[];
  /** Each member fitted on its own with free lifetimes (the starting point); null where that failed. */
  separate: (FitResult | null)[];
}

/** One member inside the joint problem. */
interface MemberBlock {
  setup: FitSetup;
  model: DecayModel;
  /** Full parameter vector of this member's model (fixed values in place). */
  all: Float64Array;
  /** For each joint free parameter index used by this member: [joint index, member parameter index]. */
  links: [number, number][];
  freeRow: Int32Array;
  jac: Float64Array;
  full: Float64Array;
  /** Offset of this member's fitted channels in the joint data vector. */
  offset: number;
  nFit: number;
}

/**
 * Fits the members with linked lifetimes. Throws InputError for an empty group or a bad option
 * (naming the member's file), ComputationError when the joint fit cannot be evaluated.
 */
export function fitGlobal(
  members: GlobalMember[],
  options: FitOptions & { components: number },
  settings: GlobalSettings = {},
): GlobalFitResult {
  if (members.length === 0) throw new InputError('a global fit needs at least one member');
  const fitModel = settings.fitModel ?? defaultFitModel;
  const group = settings.group ?? members.map((m) => m.sample).join('+');
  const nComp = options.components;
  const inner: FitOptions & { components: number } = { ...options, bootstrap: 0, profile: false };
  const setups = members.map((m) => resolveFitSetup(m.decay, m.irf, inner));
  const tauNames = Array.from({ length: nComp }, (_, j) => `tau${j + 1}Ns`);
  const userFixed = tauNames.map((n) => options.fix?.[n]);
  const freeTau = tauNames.map((_, j) => j).filter((j) => userFixed[j] === undefined);
  const warnings: string[] = [];

  // 1. Each member alone, then pooled lifetimes.
  const separate = members.map((m) => {
    try {
      const fit = fitModel(m.decay, m.irf, inner);
      return fit.stop === 'nonFinite' ? null : fit;
    } catch {
      return null;
    }
  });
  separate.forEach((fit, k) => {
    if (fit === null)
      warnings.push(`${members[k].sample} could not be fitted on its own; it still joins the global fit`);
  });
  const lnTau0 = new Float64Array(nComp);
  for (let j = 0; j < nComp; j++) {
    if (userFixed[j] !== undefined) {
      lnTau0[j] = Math.log(userFixed[j] as number);
      continue;
    }
    let sw = 0;
    let swx = 0;
    for (const fit of separate) {
      const c = fit?.components[j];
      if (!c || !(c.tauNs > 0)) continue;
      const sLn = c.tauErrNs / c.tauNs;
      // Members without a usable error still count, with a weak weight.
      const w = sLn > 0 && Number.isFinite(sLn) ? 1 / (sLn * sLn) : 1;
      sw += w;
      swx += w * Math.log(c.tauNs);
    }
    if (!(sw > 0)) throw new ComputationError(`global fit of ${group}: no member could be fitted on its own`);
    lnTau0[j] = swx / sw;
  }
  // Keep the pooled start in ascending order, as the separate fits list their components.
  const pooled = Array.from(lnTau0).sort((a, b) => a - b);
  if (freeTau.length === nComp) lnTau0.set(pooled);

  // 2. Variable projection at the pooled lifetimes: each member's own parameters, lifetimes held.
  const holdAt = (lnTau: Float64Array): Record<string, number> => {
    const fix: Record<string, number> = { ...options.fix };
    for (let j = 0; j < nComp; j++) fix[tauNames[j]] = Math.exp(lnTau[j]);
    return fix;
  };
  const projected = members.map((m) => fitModel(m.decay, m.irf, { ...inner, fix: holdAt(lnTau0) }));

  // 3. The joint problem: shared free ln τ first, then each member's free parameters.
  const lower: number[] = [];
  const upper: number[] = [];
  const start: number[] = [];
  for (const j of freeTau) {
    // Lifetime bounds come from the shared options, the same in every member's setup.
    const [lo, hi] = parameterBounds(setups[0], tauNames[j]);
    lower.push(lo);
    upper.push(hi);
    start.push(lnTau0[j]);
  }
  let offset = 0;
  const blocks: MemberBlock[] = setups.map((setup, k) => {
    const model = decayModelFor(setup);
    const L = model.layout;
    // The projected fit held the lifetimes by name, so its components are in parameter order.
    const all = parametersFromFit(model, projected[k]);
    const links: [number, number][] = freeTau.map((j, a) => [a, L.lnTau[j]]);
    for (const p of freeParameters(setup, model, false)) {
      const [lo, hi] = parameterBounds(setup, L.names[p]);
      links.push([start.length, p]);
      lower.push(lo);
      upper.push(hi);
      start.push(Math.min(hi, Math.max(lo, all[p])));
    }
    const freeRow = new Int32Array(L.count).fill(-1);
    links.forEach(([, p], row) => (freeRow[p] = row));
    const nFit = setup.fitEnd - setup.fitStart;
    const block: MemberBlock = {
      setup,
      model,
      all,
      links,
      freeRow,
      jac: new Float64Array(links.length * nFit),
      full: new Float64Array(setup.channels),
      offset,
      nFit,
    };
    offset += nFit;
    return block;
  });
  const nPoints = offset;
  const nParams = start.length;
  const data = new Float64Array(nPoints);
  for (const b of blocks) data.set(b.setup.counts.subarray(b.setup.fitStart, b.setup.fitEnd), b.offset);
  const statistic = options.statistic ?? 'poisson';
  let weights: Float64Array | undefined;
  if (statistic === 'neyman') weights = Float64Array.from(data, (n) => 1 / Math.max(n, 1));

  const problem: LmProblem = {
    nParams,
    nPoints,
    data,
    weights,
    loss: statistic === 'neyman' ? 'leastSquares' : statistic,
    lower: Float64Array.from(lower),
    upper: Float64Array.from(upper),
    evaluate(p, out, jac) {
      if (jac) jac.fill(0);
      for (const b of blocks) {
        for (const [q, param] of b.links) b.all[param] = p[q];
        if (!b.model.evaluate(b.all, b.full, jac ? b.jac : null, b.freeRow)) return false;
        out.set(b.full.subarray(b.setup.fitStart, b.setup.fitEnd), b.offset);
        if (jac) {
          // Member row r belongs to joint parameter links[r][0]; its columns are this member's channels.
          b.links.forEach(([q], r) =>
            jac.set(b.jac.subarray(r * b.nFit, (r + 1) * b.nFit), q * nPoints + b.offset),
          );
        }
      }
      return true;
    },
  };
  const lm = levenbergMarquardt(problem, Float64Array.from(start), {
    maxIterations: options.maxIterations ?? 200,
    ftol: 1e-10,
    atol: 1e-7,
    xtol: 1e-9,
  });
  if (lm.stop === 'nonFinite' || !Number.isFinite(lm.objective)) {
    throw new ComputationError(`global fit of ${group}: the joint model could not be evaluated`);
  }
  if (lm.stop !== 'converged') {
    warnings.push(`the joint fit stopped without converging (${lm.stop}) after ${lm.iterations} iterations`);
  }

  // 4. Shared lifetimes and their errors from the joint Fisher information.
  const cov = invertSymmetric(lm.hessian, nParams);
  if (cov === null)
    warnings.push('the joint Fisher information is singular: shared lifetime errors are unavailable');
  const lnTau = Float64Array.from(lnTau0);
  const sigmaLn = new Float64Array(nComp);
  freeTau.forEach((j, a) => {
    lnTau[j] = lm.params[a];
    const v = cov ? 2 * cov[a * nParams + a] : NaN;
    sigmaLn[j] = v > 0 ? Math.sqrt(v) : NaN;
    if (lm.atBound[a]) warnings.push(`${tauNames[j]} ended on its bound`);
  });
  const shared = Array.from(lnTau, (x, j) => ({
    tauNs: Math.exp(x),
    tauErrNs: userFixed[j] !== undefined ? 0 : Math.exp(x) * sigmaLn[j],
  })).sort((a, b) => a.tauNs - b.tauNs);

  // 5. Each member's own report at the shared lifetimes.
  const finalLnTau = Float64Array.from(shared, (c) => Math.log(c.tauNs));
  const finalFits = members.map((m) => fitModel(m.decay, m.irf, { ...inner, fix: holdAt(finalLnTau) }));
  const dof = nPoints - nParams;
  const chi2 = finalFits.reduce((s, f) => s + f.chi2, 0);
  const deviance = finalFits.reduce((s, f) => s + f.deviance, 0);
  const global: GlobalGroupResult = {
    group,
    members: members.map((m) => m.sample),
    components: shared,
    chi2Reduced: chi2 / dof,
    deviancePerDof: deviance / dof,
    dof,
    warnings,
  };
  const memberResults = finalFits.map((fit) => {
    const fixedRecord = { ...fit.fixed };
    for (const j of freeTau) delete fixedRecord[tauNames[j]];
    const components = fit.components.map((c) => {
      // The member held every lifetime at a shared value; find which by value.
      let j = 0;
      for (let k = 1; k < nComp; k++)
        if (Math.abs(c.tauNs - shared[k].tauNs) < Math.abs(c.tauNs - shared[j].tauNs)) j = k;
      const { fixed: _held, ...rest } = c;
      const heldByUser = userFixed.some((v) => v !== undefined && Math.abs(v - c.tauNs) <= 1e-12 * v);
      return {
        ...rest,
        tauNs: shared[j].tauNs,
        tauErrNs: shared[j].tauErrNs,
        ...(heldByUser ? { fixed: true } : {}),
      };
    });
    components.sort((a, b) => a.tauNs - b.tauNs);
    return {
      ...fit,
      components,
      fixed: fixedRecord,
      warnings: [
        ...fit.warnings,
        `lifetimes linked across group ${group}: their errors come from the global fit, while amplitude, ` +
          'fraction and average-lifetime errors are conditional on the shared lifetimes',
      ],
    };
  });
  return { global, members: memberResults, separate };
}
