/**
 * A photon-by-photon Monte Carlo of a TCSPC measurement: every detected photon gets its own arrival
 * time = IRF jitter + colour shift + emission delay, folded modulo the repetition period, and is
 * binned. Nothing is convolved, so the simulator is an independent source of truth for the fitter.
 * It also records the matching IRF measurement (photons with the jitter alone) with its own noise.
 */
import { InputError } from '../errors.js';
import type { Histogram } from '../io/types.js';
import { createRng, type Rng } from './rng.js';
import {
  expectedHistogram,
  type ArrivalBranch,
  type ArrivalModel,
  type JitterDensity,
} from './expectedHistogram.js';

/** Gaussian instrument response, optionally followed by an exponential tail. */
export interface GaussianIrfSpec {
  kind: 'gaussian';
  /** Full width at half maximum of the Gaussian, ns. */
  fwhmNs: number;
  /** Centre of the Gaussian on the time axis, ns. */
  centerNs: number;
  /** Time constant of an exponential tail convolved onto part of the response, ns. Default: none. */
  tailNs?: number;
  /** Share of photons that take the tail (0 … 1). Default: 0, or 0.1 when tailNs is given. */
  tailFraction?: number;
}

/** A measured IRF histogram: each photon's jitter is drawn from its bins, uniform within a bin. */
export interface MeasuredIrfSpec {
  kind: 'measured';
  /** Counts per bin; negative values are read as 0. */
  counts: Float64Array;
  binWidthNs: number;
  /** Time of the left edge of the first bin, ns. Default: 0. */
  startNs?: number;
}

export type IrfSpec = GaussianIrfSpec | MeasuredIrfSpec;

export interface SimulationOptions {
  /** Decay components. `fraction` is read according to `fractionKind`; fractions are normalised to sum 1. */
  components: { tauNs: number; fraction: number }[];
  /**
   * 'intensity': fractions of the emitted photons, aᵢτᵢ/Σaⱼτⱼ; 'amplitude': fractions of the
   * pre-exponential factors, aᵢ/Σaⱼ. Default: 'intensity'.
   */
  fractionKind?: 'intensity' | 'amplitude';
  /**
   * Mean number of decay photons (fluorescence plus scatter, without background) that land in the
   * histogram. With a period equal to the window every emitted photon lands; with a single pulse or a
   * dead time after the window some are lost, and the number emitted is raised to compensate.
   * Give this or `peakCounts`; default when neither: peakCounts 10 000.
   */
  totalCounts?: number;
  /**
   * Mean decay counts in the fullest channel. The expected shape per emitted photon is computed first
   * (`expectedHistogram`), and the number of emitted photons is set to peakCounts / its maximum, so the
   * peak is right on average; a single histogram scatters around it by Poisson noise.
   */
  peakCounts?: number;
  /** Number of channels. Default: 4096. */
  channels?: number;
  /** Channel width, ns. Default: 0.0122. */
  binWidthNs?: number;
  /**
   * Repetition period, ns: arrival = (jitter + shift + delay) mod period, so the incomplete decay from
   * earlier pulses appears by itself. Must be at least the window (channels × binWidthNs, within 0.1 %);
   * arrivals between the window and the period are lost (dead time). null: a single pulse; photons after
   * the window are lost. Default: null.
   */
  periodNs?: number | null;
  /** The instrument response. Default: Gaussian, FWHM 0.15 ns, centred at 2 ns, no tail. */
  irf?: IrfSpec;
  /** Delay of the decay's photons relative to the IRF measurement, ns. Default: 0. */
  colorShiftNs?: number;
  /** Mean background counts per channel in the decay (Poisson, uniform in time). Default: 0. */
  backgroundPerChannel?: number;
  /** Mean number of photons in the IRF measurement (inside its window). Default: 100 000. */
  irfCounts?: number;
  /** Mean background counts per channel in the IRF measurement. Default: 0. */
  irfBackgroundPerChannel?: number;
  /**
   * Share of the decay photons that are scattered excitation light: IRF timing, no emission delay and
   * no colour shift (they are at the excitation wavelength, like the IRF measurement). Default: 0.
   */
  scatterFraction?: number;
  /**
   * When true, exactly round(mean) photons are emitted instead of a Poisson number (a multinomial
   * histogram). Background stays Poisson. Default: false.
   */
  fixedPhotonNumber?: boolean;
  /** Seed, integer 0 … 2^53 − 1. Required: a simulation is always reproducible. */
  seed: number;
}

export interface SimulationTruth {
  components: { tauNs: number; amplitudeFraction: number; intensityFraction: number }[];
  /** Mean number of emitted decay photons (fluorescence + scatter) per histogram. */
  meanEmittedPhotons: number;
  /** Mean decay counts (without background) inside the window, and in the fullest channel. */
  meanDecayCountsInWindow: number;
  meanPeakCounts: number;
  /** Mean arrival time of the IRF (jitter alone, before folding), ns. */
  irfMeanNs: number;
  colorShiftNs: number;
  backgroundPerChannel: number;
  scatterFraction: number;
  periodNs: number | null;
  channels: number;
  binWidthNs: number;
  irf: IrfSpec;
  irfCounts: number;
  irfBackgroundPerChannel: number;
  seed: number;
}

export interface SimulatedMeasurement {
  decay: Histogram;
  irf: Histogram;
  truth: SimulationTruth;
  /** Mean decay histogram (counts per channel, background included), from `expectedHistogram`. */
  expected: Float64Array;
  /** Mean IRF histogram (counts per channel, background included). */
  expectedIrf: Float64Array;
  /** Photons actually drawn for the decay (before losses outside the window), and for the IRF. */
  photonsDrawn: number;
  irfPhotonsDrawn: number;
}

const FWHM_PER_SIGMA = 2 * Math.sqrt(2 * Math.LN2);

/** Options checked and filled with their defaults. */
export interface ResolvedSimulationOptions {
  taus: number[];
  amplitudeFractions: number[];
  intensityFractions: number[];
  channels: number;
  binWidthNs: number;
  periodNs: number | null;
  irf: IrfSpec;
  colorShiftNs: number;
  backgroundPerChannel: number;
  irfCounts: number;
  irfBackgroundPerChannel: number;
  scatterFraction: number;
  fixedPhotonNumber: boolean;
  seed: number;
}

function fail(reason: string): never {
  throw new InputError(reason);
}

function checkFinite(
  name: string,
  value: number,
  { min, positive }: { min?: number; positive?: boolean } = {},
) {
  if (typeof value !== 'number' || !Number.isFinite(value))
    fail(`${name} must be a finite number, got ${value}`);
  if (positive && !(value > 0)) fail(`${name} must be greater than 0, got ${value}`);
  if (min !== undefined && value < min) fail(`${name} must be at least ${min}, got ${value}`);
}

/** Checks the options and fills in defaults; every complaint is an InputError naming the option. */
export function resolveSimulationOptions(options: SimulationOptions): ResolvedSimulationOptions {
  const comps = options.components;
  if (!Array.isArray(comps) || comps.length === 0) fail('components: give at least one decay component');
  comps.forEach((c, i) => {
    checkFinite(`components[${i}].tauNs`, c.tauNs, { positive: true });
    checkFinite(`components[${i}].fraction`, c.fraction, { min: 0 });
  });
  const kind = options.fractionKind ?? 'intensity';
  if (kind !== 'intensity' && kind !== 'amplitude')
    fail(`fractionKind must be 'intensity' or 'amplitude', got '${kind}'`);
  const sum = comps.reduce((s, c) => s + c.fraction, 0);
  if (!(sum > 0)) fail('components: the fractions must not all be 0');
  const taus = comps.map((c) => c.tauNs);
  const given = comps.map((c) => c.fraction / sum);
  let amplitudeFractions: number[];
  let intensityFractions: number[];
  if (kind === 'intensity') {
    intensityFractions = given;
    const a = given.map((f, i) => f / taus[i]);
    const aSum = a.reduce((s, x) => s + x, 0);
    amplitudeFractions = a.map((x) => x / aSum);
  } else {
    amplitudeFractions = given;
    const f = given.map((a, i) => a * taus[i]);
    const fSum = f.reduce((s, x) => s + x, 0);
    intensityFractions = f.map((x) => x / fSum);
  }

  const channels = options.channels ?? 4096;
  if (!Number.isInteger(channels) || channels < 2 || channels > 1 << 20) {
    fail(`channels must be an integer from 2 to ${1 << 20}, got ${channels}`);
  }
  const binWidthNs = options.binWidthNs ?? 0.0122;
  checkFinite('binWidthNs', binWidthNs, { positive: true });
  const periodNs = options.periodNs ?? null;
  if (periodNs !== null) {
    checkFinite('periodNs', periodNs, { positive: true });
    const window = channels * binWidthNs;
    if (periodNs < window * 0.999) {
      fail(
        `periodNs (${periodNs}) is shorter than the window of ${channels} channels × ${binWidthNs} ns = ${round(window)} ns; ` +
          'use fewer channels or a narrower bin so that one period fills at most the window',
      );
    }
  }
  const irf: IrfSpec = options.irf ?? { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 };
  if (irf.kind === 'gaussian') {
    checkFinite('irf.fwhmNs', irf.fwhmNs, { positive: true });
    checkFinite('irf.centerNs', irf.centerNs);
    if (irf.tailNs !== undefined) checkFinite('irf.tailNs', irf.tailNs, { positive: true });
    if (irf.tailFraction !== undefined) {
      checkFinite('irf.tailFraction', irf.tailFraction, { min: 0 });
      if (irf.tailFraction > 1) fail(`irf.tailFraction must be at most 1, got ${irf.tailFraction}`);
      if (irf.tailFraction > 0 && irf.tailNs === undefined)
        fail('irf.tailFraction is given without irf.tailNs');
    }
  } else if (irf.kind === 'measured') {
    checkFinite('irf.binWidthNs', irf.binWidthNs, { positive: true });
    if (irf.startNs !== undefined) checkFinite('irf.startNs', irf.startNs);
    if (!(irf.counts instanceof Float64Array) || irf.counts.length === 0)
      fail('irf.counts must be a non-empty Float64Array');
    let total = 0;
    for (let k = 0; k < irf.counts.length; k++) {
      const c = irf.counts[k];
      if (!Number.isFinite(c)) fail(`irf.counts[${k}] is not a finite number`);
      if (c > 0) total += c;
    }
    if (!(total > 0)) fail('the measured IRF has no positive counts');
  } else {
    fail(`irf.kind must be 'gaussian' or 'measured'`);
  }
  const colorShiftNs = options.colorShiftNs ?? 0;
  checkFinite('colorShiftNs', colorShiftNs);
  const backgroundPerChannel = options.backgroundPerChannel ?? 0;
  checkFinite('backgroundPerChannel', backgroundPerChannel, { min: 0 });
  const irfCounts = options.irfCounts ?? 1e5;
  checkFinite('irfCounts', irfCounts, { min: 0 });
  const irfBackgroundPerChannel = options.irfBackgroundPerChannel ?? 0;
  checkFinite('irfBackgroundPerChannel', irfBackgroundPerChannel, { min: 0 });
  const scatterFraction = options.scatterFraction ?? 0;
  checkFinite('scatterFraction', scatterFraction, { min: 0 });
  if (scatterFraction > 1) fail(`scatterFraction must be at most 1, got ${scatterFraction}`);
  if (options.totalCounts !== undefined && options.peakCounts !== undefined) {
    fail('give totalCounts or peakCounts, not both');
  }
  if (options.totalCounts !== undefined) checkFinite('totalCounts', options.totalCounts, { min: 0 });
  if (options.peakCounts !== undefined) checkFinite('peakCounts', options.peakCounts, { min: 0 });
  const seed = options.seed;
  if (!Number.isSafeInteger(seed) || seed < 0)
    fail(`seed must be an integer from 0 to 2^53 − 1, got ${seed}`);
  return {
    taus,
    amplitudeFractions,
    intensityFractions,
    channels,
    binWidthNs,
    periodNs,
    irf,
    colorShiftNs,
    backgroundPerChannel,
    irfCounts,
    irfBackgroundPerChannel,
    scatterFraction,
    fixedPhotonNumber: options.fixedPhotonNumber ?? false,
    seed,
  };
}

function round(x: number): number {
  return Number(x.toPrecision(6));
}

function tailOf(irf: IrfSpec): { tailNs: number; tailFraction: number } {
  if (irf.kind !== 'gaussian' || irf.tailNs === undefined) return { tailNs: 0, tailFraction: 0 };
  return { tailNs: irf.tailNs, tailFraction: irf.tailFraction ?? 0.1 };
}

function jitterDensity(irf: IrfSpec): JitterDensity {
  if (irf.kind === 'gaussian')
    return { kind: 'gaussian', centerNs: irf.centerNs, sigmaNs: irf.fwhmNs / FWHM_PER_SIGMA };
  return { kind: 'binned', startNs: irf.startNs ?? 0, binWidthNs: irf.binWidthNs, weights: irf.counts };
}

/** Survival terms of (exponential τ) followed, with probability tailFraction, by (exponential tailNs). */
function delayBranches(
  weight: number,
  offsetNs: number,
  tauNs: number | null,
  tail: { tailNs: number; tailFraction: number },
): ArrivalBranch[] {
  const direct: ArrivalBranch = {
    weight: weight * (1 - tail.tailFraction),
    offsetNs,
    terms: tauNs === null ? [] : [{ coef: 1, tauNs, kind: 'exp' }],
  };
  if (tail.tailFraction === 0) return [direct];
  let terms: ArrivalBranch['terms'];
  if (tauNs === null) terms = [{ coef: 1, tauNs: tail.tailNs, kind: 'exp' }];
  else if (Math.abs(tauNs - tail.tailNs) <= 1e-6 * Math.max(tauNs, tail.tailNs)) {
    terms = [{ coef: 1, tauNs, kind: 'erlang2' }];
  } else {
    // Sum of two exponentials (hypoexponential): G(x) = (τ₁e^(−x/τ₁) − τ₂e^(−x/τ₂))/(τ₁ − τ₂).
    const d = tauNs - tail.tailNs;
    terms = [
      { coef: tauNs / d, tauNs, kind: 'exp' },
      { coef: -tail.tailNs / d, tauNs: tail.tailNs, kind: 'exp' },
    ];
  }
  return [direct, { weight: weight * tail.tailFraction, offsetNs, terms }];
}

/** The arrival model of the decay measurement (fluorescence + scatter), per emitted photon. */
export function decayArrivalModel(r: ResolvedSimulationOptions): ArrivalModel {
  const tail = tailOf(r.irf);
  const branches: ArrivalBranch[] = [];
  r.taus.forEach((tau, i) => {
    branches.push(
      ...delayBranches((1 - r.scatterFraction) * r.intensityFractions[i], r.colorShiftNs, tau, tail),
    );
  });
  if (r.scatterFraction > 0) branches.push(...delayBranches(r.scatterFraction, 0, null, tail));
  return {
    channels: r.channels,
    binWidthNs: r.binWidthNs,
    periodNs: r.periodNs,
    jitter: jitterDensity(r.irf),
    branches,
  };
}

/** The arrival model of the IRF measurement: jitter alone. */
export function irfArrivalModel(r: ResolvedSimulationOptions): ArrivalModel {
  return {
    channels: r.channels,
    binWidthNs: r.binWidthNs,
    periodNs: r.periodNs,
    jitter: jitterDensity(r.irf),
    branches: delayBranches(1, 0, null, tailOf(r.irf)),
  };
}

/** Walker's alias table for drawing a bin index with given weights in O(1). */
function aliasTable(weights: Float64Array): { prob: Float64Array; alias: Int32Array } {
  const n = weights.length;
  const prob = new Float64Array(n);
  const alias = new Int32Array(n);
  let total = 0;
  for (let k = 0; k < n; k++) total += weights[k] > 0 ? weights[k] : 0;
  const scaled = new Float64Array(n);
  const small: number[] = [];
  const large: number[] = [];
  for (let k = 0; k < n; k++) {
    scaled[k] = ((weights[k] > 0 ? weights[k] : 0) * n) / total;
    (scaled[k] < 1 ? small : large).push(k);
  }
  while (small.length && large.length) {
    const s = small.pop()!;
    const l = large.pop()!;
    prob[s] = scaled[s];
    alias[s] = l;
    scaled[l] = scaled[l] + scaled[s] - 1;
    (scaled[l] < 1 ? small : large).push(l);
  }
  for (const k of large) prob[k] = 1;
  for (const k of small) prob[k] = 1; // only rounding leftovers
  return { prob, alias };
}

/** Draws one jitter value (ns) from the IRF, tail included. */
function jitterSampler(irf: IrfSpec, rng: Rng): () => number {
  if (irf.kind === 'gaussian') {
    const sigma = irf.fwhmNs / FWHM_PER_SIGMA;
    const { tailNs, tailFraction } = tailOf(irf);
    const c = irf.centerNs;
    if (tailFraction === 0) return () => c + sigma * rng.normal();
    return () => {
      let j = c + sigma * rng.normal();
      if (rng.uniform() < tailFraction) j += tailNs * rng.exponential();
      return j;
    };
  }
  const { prob, alias } = aliasTable(irf.counts);
  const n = prob.length;
  const start = irf.startNs ?? 0;
  const bw = irf.binWidthNs;
  return () => {
    const u = rng.uniform() * n;
    let k = Math.floor(u);
    if (u - k >= prob[k]) k = alias[k];
    return start + (k + rng.uniform()) * bw;
  };
}

/** Mean of the IRF jitter, ns. */
function irfMean(irf: IrfSpec): number {
  if (irf.kind === 'gaussian') {
    const { tailNs, tailFraction } = tailOf(irf);
    return irf.centerNs + tailFraction * tailNs;
  }
  let s = 0;
  let w = 0;
  const start = irf.startNs ?? 0;
  for (let k = 0; k < irf.counts.length; k++) {
    const c = irf.counts[k] > 0 ? irf.counts[k] : 0;
    s += c * (start + (k + 0.5) * irf.binWidthNs);
    w += c;
  }
  return s / w;
}

function drawCount(rng: Rng, mean: number, fixed: boolean): number {
  return fixed ? Math.round(mean) : rng.poisson(mean);
}

/**
 * Bins `nPhotons` arrivals drawn by `arrival()` into `counts` (added), folding modulo the period.
 * Arrivals outside [0, window) after folding are lost.
 */
function binPhotons(
  counts: Float64Array,
  nPhotons: number,
  arrival: () => number,
  binWidthNs: number,
  periodNs: number | null,
): void {
  const n = counts.length;
  const invBw = 1 / binWidthNs;
  for (let p = 0; p < nPhotons; p++) {
    let t = arrival();
    if (periodNs !== null) {
      t %= periodNs;
      if (t < 0) t += periodNs;
    }
    const k = Math.floor(t * invBw);
    if (k >= 0 && k < n) counts[k] += 1;
  }
}

function addBackground(counts: Float64Array, mean: number, rng: Rng): void {
  if (mean === 0) return;
  for (let k = 0; k < counts.length; k++) counts[k] += rng.poisson(mean);
}

function timeAxis(channels: number, binWidthNs: number): Float64Array {
  const t = new Float64Array(channels);
  for (let k = 0; k < channels; k++) t[k] = k * binWidthNs;
  return t;
}

function maxOf(a: Float64Array): number {
  let m = -Infinity;
  for (let k = 0; k < a.length; k++) if (a[k] > m) m = a[k];
  return m;
}

function sumOf(a: Float64Array): number {
  let s = 0;
  for (let k = 0; k < a.length; k++) s += a[k];
  return s;
}

/** Simulates one decay histogram and its IRF measurement. Deterministic for a given seed. */
export function simulateTcspc(options: SimulationOptions): SimulatedMeasurement {
  const r = resolveSimulationOptions(options);
  const perPhoton = expectedHistogram(decayArrivalModel(r));
  const inWindow = sumOf(perPhoton);
  const peakShare = maxOf(perPhoton);
  if (!(inWindow > 0) || !(peakShare > 0)) {
    fail(
      'no decay photon can land inside the window: check the IRF position, the shift and the number of channels',
    );
  }
  let meanEmitted: number;
  if (options.totalCounts !== undefined) meanEmitted = options.totalCounts / inWindow;
  else meanEmitted = (options.peakCounts ?? 1e4) / peakShare;

  // The IRF measurement's shape is only needed when it has photons.
  const irfPerPhoton = r.irfCounts > 0 ? expectedHistogram(irfArrivalModel(r)) : new Float64Array(r.channels);
  const irfInWindow = sumOf(irfPerPhoton);
  if (r.irfCounts > 0 && !(irfInWindow > 0))
    fail('no IRF photon can land inside the window: check the IRF position');
  const meanIrfEmitted = r.irfCounts > 0 ? r.irfCounts / irfInWindow : 0;

  // Separate streams, so that changing one part (say the IRF counts) leaves the other's noise as it was.
  const root = createRng(r.seed);
  const rngDecay = root.fork(1);
  const rngIrf = root.fork(2);
  const rngBackground = root.fork(3);
  const rngIrfBackground = root.fork(4);

  // Decay: choose the component (or scatter) by its share, then add jitter, shift and delay.
  const nComp = r.taus.length;
  const cumulative = new Float64Array(nComp + 1);
  let acc = 0;
  for (let i = 0; i < nComp; i++) {
    acc += (1 - r.scatterFraction) * r.intensityFractions[i];
    cumulative[i] = acc;
  }
  cumulative[nComp] = Infinity; // scatter takes the rest
  // Without scatter, rounding in the running sum must not send the odd photon to it.
  if (r.scatterFraction === 0) cumulative[nComp - 1] = Infinity;
  const jitter = jitterSampler(r.irf, rngDecay);
  const taus = r.taus;
  const shift = r.colorShiftNs;
  const decayArrival = () => {
    const u = rngDecay.uniform();
    let i = 0;
    while (u >= cumulative[i]) i++;
    const j = jitter();
    return i === nComp ? j : j + shift + taus[i] * rngDecay.exponential();
  };
  const photonsDrawn = drawCount(rngDecay, meanEmitted, r.fixedPhotonNumber);
  const decayCounts = new Float64Array(r.channels);
  binPhotons(decayCounts, photonsDrawn, decayArrival, r.binWidthNs, r.periodNs);
  addBackground(decayCounts, r.backgroundPerChannel, rngBackground);

  const irfJitter = jitterSampler(r.irf, rngIrf);
  const irfPhotonsDrawn = drawCount(rngIrf, meanIrfEmitted, r.fixedPhotonNumber);
  const irfCounts = new Float64Array(r.channels);
  binPhotons(irfCounts, irfPhotonsDrawn, irfJitter, r.binWidthNs, r.periodNs);
  addBackground(irfCounts, r.irfBackgroundPerChannel, rngIrfBackground);

  const expected = new Float64Array(r.channels);
  const expectedIrf = new Float64Array(r.channels);
  for (let k = 0; k < r.channels; k++) {
    expected[k] = meanEmitted * perPhoton[k] + r.backgroundPerChannel;
    expectedIrf[k] = meanIrfEmitted * irfPerPhoton[k] + r.irfBackgroundPerChannel;
  }

  const metadata: Record<string, string> = {
    bin_width_ns: String(r.binWidthNs),
    ...(r.periodNs !== null ? { period_ns: String(r.periodNs) } : {}),
  };
  const timeNs = timeAxis(r.channels, r.binWidthNs);
  const histogram = (counts: Float64Array): Histogram => ({
    timeNs: timeNs.slice(),
    counts,
    binWidthNs: r.binWidthNs,
    metadata: { ...metadata },
    source: 'simulated',
    warnings: [],
  });

  return {
    decay: histogram(decayCounts),
    irf: histogram(irfCounts),
    truth: {
      components: taus.map((tauNs, i) => ({
        tauNs,
        amplitudeFraction: r.amplitudeFractions[i],
        intensityFraction: r.intensityFractions[i],
      })),
      meanEmittedPhotons: meanEmitted,
      meanDecayCountsInWindow: meanEmitted * inWindow,
      meanPeakCounts: meanEmitted * peakShare,
      irfMeanNs: irfMean(r.irf),
      colorShiftNs: r.colorShiftNs,
      backgroundPerChannel: r.backgroundPerChannel,
      scatterFraction: r.scatterFraction,
      periodNs: r.periodNs,
      channels: r.channels,
      binWidthNs: r.binWidthNs,
      irf: r.irf,
      irfCounts: r.irfCounts,
      irfBackgroundPerChannel: r.irfBackgroundPerChannel,
      seed: r.seed,
    },
    expected,
    expectedIrf,
    photonsDrawn,
    irfPhotonsDrawn,
  };
}
