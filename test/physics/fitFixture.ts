import { SCHEMA_VERSION, type ComponentResult, type FitResult } from '../../shared/schema.js';

/**
 * A fit result as the fitter reports it, built from lifetimes and amplitudes; the fields the physics
 * layer does not read carry neutral values. The averages follow their definitions in the schema.
 */
export function fitResultWith(
  components: { tauNs: number; tauErrNs: number; amplitude: number }[],
  tauAmpAvgErrNs = 0,
): FitResult {
  const sumA = components.reduce((s, c) => s + c.amplitude, 0);
  const sumAT = components.reduce((s, c) => s + c.amplitude * c.tauNs, 0);
  const comps: ComponentResult[] = components.map((c) => ({
    ...c,
    amplitudeErr: 0,
    intensityFraction: (c.amplitude * c.tauNs) / sumAT,
    intensityFractionErr: 0,
    amplitudeFraction: c.amplitude / sumA,
  }));
  return {
    schemaVersion: SCHEMA_VERSION,
    statistic: 'poisson',
    nComponents: comps.length,
    components: comps,
    tauAmpAvgNs: sumAT / sumA,
    tauAmpAvgErrNs,
    tauIntAvgNs: components.reduce((s, c) => s + c.amplitude * c.tauNs ** 2, 0) / sumAT,
    tauIntAvgErrNs: 0,
    shiftNs: 0,
    shiftErrNs: 0,
    background: 0,
    backgroundErr: 0,
    scatter: 0,
    scatterErr: 0,
    chi2Reduced: 1,
    chi2: 100,
    deviance: 100,
    deviancePerDof: 1,
    dof: 100,
    durbinWatson: 2,
    runsZ: 0,
    runsPValue: 1,
    aic: 0,
    bic: 0,
    converged: true,
    stop: 'converged',
    iterations: 10,
    warnings: [],
    irfMode: 'measured',
    rangeNs: [0, 50],
    periodNs: null,
    binWidthNs: 0.05,
    peakCounts: 1e4,
    totalCounts: 1e6,
    fixed: {},
    curves: {
      timeNs: [],
      data: [],
      model: [],
      irf: [],
      weightedResiduals: [],
      autocorrelation: [],
      fitStartIndex: 0,
      fitEndIndex: 0,
    },
  };
}
