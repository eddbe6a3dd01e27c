/**
 * Invented report data for the viewer's tests and benchmark: synthetic decays whose truth the fixture
 * sets (Gaussian IRF ⊗ exponentials, computed here directly, with Poisson noise from a seeded PRNG),
 * plus failed samples, series analyses and hostile sample names. Nothing here is measured data.
 */
import {
  SCHEMA_VERSION,
  type FitResult,
  type ReportData,
  type SampleResult,
  type SeriesResult,
} from '../../shared/schema.js';

/** Mulberry32: a tiny seeded PRNG, enough for reproducible fixture noise. */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Poisson draw: Knuth's product method for small means, a rounded normal for large ones. */
function poisson(mean: number, rand: () => number): number {
  if (mean <= 0) return 0;
  if (mean < 30) {
    const limit = Math.exp(-mean);
    let k = 0;
    let p = rand();
    while (p > limit) {
      k++;
      p *= rand();
    }
    return k;
  }
  const u = Math.max(rand(), 1e-12);
  const z = Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * rand());
  return Math.max(0, Math.round(mean + Math.sqrt(mean) * z));
}

export interface FixtureSampleSpec {
  name: string;
  tausNs: number[];
  fractions: number[];
  channels?: number;
  binWidthNs?: number;
  peakCounts?: number;
  metadata?: Record<string, string>;
  qy?: number;
  failed?: string;
  warnings?: string[];
  seed?: number;
}

function provenance(seed: number) {
  return {
    lumirateVersion: '0.1.0',
    schemaVersion: SCHEMA_VERSION,
    inputs: [{ role: 'decay', path: 'decays/fixture.csv', sha256: '0'.repeat(64) }],
    settings: {},
    timeUtc: '2026-01-01T00:00:00Z',
    seed,
  };
}

/** A synthetic fit result: the "model" is the noiseless truth, the "data" a Poisson draw of it. */
function syntheticFit(spec: FixtureSampleSpec): FitResult {
  const n = spec.channels ?? 1024;
  const dt = spec.binWidthNs ?? 50 / n;
  const peak = spec.peakCounts ?? 10000;
  const rand = prng(spec.seed ?? 1);
  const t0 = 2.0;
  const sigma = 0.08;
  const bg = 3;
  const timeNs = Array.from({ length: n }, (_, i) => i * dt);
  // Gaussian IRF ⊗ Σ aᵢ exp(−t/τᵢ), by direct summation on the channel grid.
  const irfRaw = timeNs.map((t) => Math.exp(-0.5 * ((t - t0) / sigma) ** 2));
  const decay = new Array<number>(n).fill(0);
  for (let i = 0; i < n; i++) {
    if (irfRaw[i] < 1e-9) continue;
    for (let j = i; j < n; j++) {
      let d = 0;
      for (let c = 0; c < spec.tausNs.length; c++)
        d += spec.fractions[c] * Math.exp((-(j - i) * dt) / spec.tausNs[c]);
      decay[j] += irfRaw[i] * d;
    }
  }
  const maxDecay = Math.max(...decay);
  const model = decay.map((v) => (v / maxDecay) * peak + bg);
  const data = model.map((m) => poisson(m, rand));
  const maxIrf = Math.max(...irfRaw);
  const irf = irfRaw.map((v) => (v / maxIrf) * peak);
  const start = Math.floor((t0 - 0.5) / dt);
  const end = n - 1;
  const maskedModel = model.map((m, i) => (i < start || i > end ? null : m));
  const res = model.map((m, i) => (i < start || i > end ? null : (data[i] - m) / Math.sqrt(Math.max(m, 1))));
  const inRange = res.filter((r): r is number => r !== null);
  const len = inRange.length;
  const c0 = inRange.reduce((s, r) => s + r * r, 0) / len;
  const autocorrelation = Array.from({ length: Math.floor(len / 2) }, (_, j) => {
    let s = 0;
    for (let k = 0; k + j < len; k++) s += inRange[k] * inRange[k + j];
    return s / (len - j) / c0;
  });
  const chi2 = inRange.reduce((s, r) => s + r * r, 0);
  const nPar = 2 * spec.tausNs.length + 2;
  const dof = len - nPar;
  const ampSum = spec.fractions.reduce((a, b) => a + b, 0);
  const intSum = spec.fractions.reduce((s, a, i) => s + a * spec.tausNs[i], 0);
  const tauAmp = spec.fractions.reduce((s, a, i) => s + a * spec.tausNs[i], 0) / ampSum;
  const tauInt = spec.fractions.reduce((s, a, i) => s + a * spec.tausNs[i] ** 2, 0) / intSum;
  return {
    schemaVersion: SCHEMA_VERSION,
    statistic: 'poisson',
    nComponents: spec.tausNs.length,
    components: spec.tausNs.map((tau, i) => ({
      tauNs: tau,
      tauErrNs: tau * 0.008 + 0.001,
      amplitude: spec.fractions[i] * peak,
      amplitudeErr: spec.fractions[i] * peak * 0.01,
      intensityFraction: (spec.fractions[i] * tau) / intSum,
      intensityFractionErr: 0.004,
      amplitudeFraction: spec.fractions[i] / ampSum,
    })),
    tauAmpAvgNs: tauAmp,
    tauAmpAvgErrNs: tauAmp * 0.01,
    tauIntAvgNs: tauInt,
    tauIntAvgErrNs: tauInt * 0.01,
    shiftNs: 0.012,
    shiftErrNs: 0.003,
    background: bg,
    backgroundErr: 0.2,
    scatter: 0.001,
    scatterErr: 0.0004,
    chi2Reduced: chi2 / dof,
    chi2,
    deviance: chi2 * 0.99,
    deviancePerDof: (chi2 * 0.99) / dof,
    dof,
    durbinWatson: 1.98,
    runsZ: -0.4,
    runsPValue: 0.69,
    aic: chi2 + 2 * nPar,
    bic: chi2 + nPar * Math.log(len),
    converged: true,
    stop: 'converged',
    iterations: 12,
    warnings: spec.warnings ?? [],
    irfMode: 'measured',
    rangeNs: [timeNs[start], timeNs[end] + dt],
    periodNs: null,
    binWidthNs: dt,
    peakCounts: Math.max(...data),
    totalCounts: data.reduce((a, b) => a + b, 0),
    fixed: {},
    curves: {
      timeNs,
      data,
      model: maskedModel,
      irf,
      weightedResiduals: res,
      autocorrelation,
      fitStartIndex: start,
      fitEndIndex: end,
    },
  };
}

export function fixtureSample(spec: FixtureSampleSpec): SampleResult {
  const base = {
    schemaVersion: SCHEMA_VERSION,
    sample: spec.name,
    metadata: spec.metadata ?? {},
    warnings: spec.warnings ?? [],
    provenance: provenance(spec.seed ?? 1),
  };
  if (spec.failed) return { ...base, status: 'failed', error: spec.failed };
  const fit = syntheticFit(spec);
  const tau = fit.tauAmpAvgNs;
  const sample: SampleResult = { ...base, status: 'ok', fit };
  if (spec.qy !== undefined) {
    const kr = spec.qy / (tau * 1e-9);
    const knr = (1 - spec.qy) / (tau * 1e-9);
    sample.rates = {
      schemaVersion: SCHEMA_VERSION,
      qy: spec.qy,
      qyErr: 0.02,
      tauNs: tau,
      tauErrNs: fit.tauAmpAvgErrNs,
      tauBasis: spec.tausNs.length === 1 ? 'single' : 'amplitudeWeighted',
      krPerS: kr,
      krErrPerS: kr * 0.04,
      knrPerS: knr,
      knrErrPerS: knr * 0.05,
      krKnrCovPerS2: -kr * knr * 1e-3,
      tau0Ns: 1e9 / kr,
      tau0ErrNs: (1e9 / kr) * 0.04,
      notes: [],
      warnings: [],
    };
    sample.sb = {
      schemaVersion: SCHEMA_VERSION,
      krSbPerS: kr * 1.07,
      tau0SbNs: 1e9 / (kr * 1.07),
      emissionMeanWavenumberCm: 18500,
      emissionInvCubeMeanCm3: 18500 ** 3,
      integratedEpsLnNu: 9000,
      integratedEpsNu: 1.9e8,
      oscillatorStrength: 0.82,
      dipoleDebye: 9.1,
      einsteinAVacuumPerS: kr / 1.85,
      einsteinAMediumPerS: kr * 1.07,
      refractiveIndex: 1.3611,
      degeneracyRatio: 1,
      bandCm: [17000, 22000],
      bandChoice: 'lowest band, automatic',
      emissionAssumption: 'photons per nm',
      qySb: spec.qy / 1.07,
      krRatio: 1 / 1.07,
      warnings: [],
    };
  }
  return sample;
}

export interface FixtureReportOptions {
  /** Number of ok samples. Default: 8. */
  samples?: number;
  /** Channels per decay. Default: 1024. */
  channels?: number;
  /** Add two failed samples. Default: true. */
  failed?: boolean;
  /** Extra names to add as samples (e.g. hostile ones). */
  extraNames?: string[];
  /** Add Arrhenius and Stern–Volmer series. Default: true. */
  series?: boolean;
}

/** A whole invented report: a temperature series, a quencher titration and a few failures. */
export function fixtureReport(options: FixtureReportOptions = {}): ReportData {
  const n = options.samples ?? 8;
  const samples: SampleResult[] = [];
  for (let i = 0; i < n; i++) {
    const temperatureK = 278 + 10 * (i % 6);
    const twoComp = i % 3 === 2;
    samples.push(
      fixtureSample({
        name: `dye-${String(i + 1).padStart(3, '0')}`,
        tausNs: twoComp ? [4.1 - 0.1 * (i % 6), 0.9] : [4.1 - 0.1 * (i % 6)],
        fractions: twoComp ? [0.7, 0.3] : [1],
        channels: options.channels,
        metadata: { temperature_k: String(temperatureK), solvent: i % 2 ? 'ethanol' : 'toluene' },
        qy: 0.6 - 0.02 * (i % 6),
        warnings: i % 4 === 3 ? ['residual runs test p = 0.003: structure left in the residuals'] : [],
        seed: 100 + i,
      }),
    );
  }
  if (options.failed ?? true) {
    samples.push(
      fixtureSample({
        name: 'blank-cuvette',
        tausNs: [],
        fractions: [],
        failed: 'decays/blank.csv line 3, column 2: the histogram has fewer than 10 counts in its peak',
      }),
      fixtureSample({
        name: 'overloaded',
        tausNs: [],
        fractions: [],
        failed: 'the fit did not reach finite numbers (stop: nonFinite)',
      }),
    );
  }
  for (const [k, name] of (options.extraNames ?? []).entries()) {
    samples.push(
      fixtureSample({
        name,
        tausNs: [2.5],
        fractions: [1],
        channels: 512,
        seed: 900 + k,
        metadata: { note: name },
      }),
    );
  }
  const series: SeriesResult[] = [];
  if (options.series ?? true) {
    // Shaped like the batch's Arrhenius series: x is the temperature column, y is k_nr in s⁻¹ and the
    // law is k_nr(T) = k₀ + A·exp(−Eₐ/k_B T) (k_B = 8.617333262e-5 eV/K, CODATA 2018).
    const law = (T: number) => 2e7 + 5e11 * Math.exp(-0.25 / (8.617333262e-5 * T));
    const pts = [278, 288, 298, 308, 318, 328].map((T, i) => {
      const fit = law(T);
      const y = fit * (i % 2 ? 1.02 : 0.98);
      return { sample: `dye-00${i + 1}`, x: T, y, yErr: 0.03 * y, fit, residual: (y - fit) / (0.03 * y) };
    });
    series.push({
      schemaVersion: SCHEMA_VERSION,
      model: 'arrhenius',
      xName: 'temperature_k',
      yName: 'knrPerS',
      parameters: { eaEv: 0.25, eaErrEv: 0.01, k0PerS: 2e7, k0ErrPerS: 0.4e7, aPerS: 5e11, aErrPerS: 1e11 },
      points: pts,
      chi2Reduced: 0.44,
      dof: 3,
      notes: ['k_nr(T) = k₀ + A·exp(−Eₐ/k_B T)'],
      warnings: [],
    });
    const q = [0, 0.01, 0.02, 0.04, 0.08];
    series.push({
      schemaVersion: SCHEMA_VERSION,
      model: 'stern-volmer',
      xName: 'quencher_m',
      yName: 'tau0OverTau',
      parameters: {
        kqPerMPerS: 3.0e9,
        kqErrPerMPerS: 0.1e9,
        tau0Ns: 4.03,
        tau0ErrNs: 0.02,
        ksvPerM: 12.1,
        ksvErrPerM: 0.3,
      },
      points: q.map((c, i) => {
        const fit = 1 + 12.1 * c;
        const y = fit * (1 + (i % 2 ? 0.01 : -0.01));
        return { sample: `quench-${i}`, x: c, y, yErr: 0.02, fit, residual: (y - fit) / 0.02 };
      }),
      chi2Reduced: 1.1,
      dof: 3,
      notes: [],
      warnings: [],
    });
  }
  return {
    schemaVersion: SCHEMA_VERSION,
    title: 'Fixture report: invented decays',
    createdUtc: '2026-01-01T00:00:00Z',
    lumirateVersion: '0.1.0',
    samples,
    series,
  };
}
