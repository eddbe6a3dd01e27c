import { SCHEMA_VERSION, type FitCurves, type FitResult, type SampleResult } from '../../shared/schema.js';

/**
 * A sample result with a one-component fit of the given lifetime, for tests of the layers above the
 * fitter (series, tables, merge). Only the fields those layers read are meaningful.
 */
export function fakeSample(
  sample: string,
  tauNs: number,
  tauErrNs: number,
  metadata: Record<string, string> = {},
  extra: Partial<SampleResult> = {},
): SampleResult {
  const fit = {
    schemaVersion: SCHEMA_VERSION,
    statistic: 'poisson',
    nComponents: 1,
    components: [
      {
        tauNs,
        tauErrNs,
        amplitude: 1000,
        amplitudeErr: 10,
        intensityFraction: 1,
        intensityFractionErr: 0,
        amplitudeFraction: 1,
      },
    ],
    tauAmpAvgNs: tauNs,
    tauAmpAvgErrNs: tauErrNs,
    tauIntAvgNs: tauNs,
    tauIntAvgErrNs: tauErrNs,
    shiftNs: 0.01,
    shiftErrNs: 0.001,
    background: 2,
    backgroundErr: 0.1,
    chi2Reduced: 1.02,
    chi2: 1020,
    deviance: 1021,
    deviancePerDof: 1.021,
    dof: 1000,
    durbinWatson: 1.98,
    warnings: [],
  } as unknown as FitResult;
  return {
    schemaVersion: SCHEMA_VERSION,
    sample,
    status: 'ok',
    metadata,
    fit,
    warnings: [],
    provenance: {
      lumirateVersion: '0.1.0',
      schemaVersion: SCHEMA_VERSION,
      inputs: [],
      settings: {},
      timeUtc: '2026-01-01T00:00:00Z',
      seed: 1,
    },
    ...extra,
  };
}

/** Three channels of plotting curves, for tests of how curves are stored and packed. */
export const fakeCurves: FitCurves = {
  timeNs: [0, 0.5, 1],
  data: [3, 10, 4],
  model: [null, 9.87654, 4.01],
  irf: [1, 0, 0],
  weightedResiduals: [null, 0.041, -0.005],
  autocorrelation: [1, -0.25],
  fitStartIndex: 1,
  fitEndIndex: 2,
};
