import type { Statistic, IrfMode } from '../../shared/schema.js';
import { InputError } from '../errors.js';
import type { Histogram } from '../io/types.js';
import { prepareIrf } from '../model/reconvolve.js';
import type { FitOptions } from './options.js';

/** Names accepted by `fix` and `bounds`. */
export const PARAMETER_NAMES = [
  'tau1Ns',
  'tau2Ns',
  'tau3Ns',
  'tau4Ns',
  'shiftNs',
  'background',
  'scatter',
  'irfFwhmNs',
  'irfCenterNs',
] as const;

/** Default lifetime bounds, ns, and shift bound, ns (see FitOptions). */
export const TAU_MIN_NS = 0.005;
export const TAU_MAX_NS = 1000;
export const SHIFT_MAX_NS = 2;

/** Everything a single-model fit needs, checked and with defaults filled in. */
export interface FitSetup {
  nComponents: number;
  statistic: Statistic;
  mode: IrfMode;
  channels: number;
  binWidthNs: number;
  firstEdgeNs: number;
  counts: Float64Array;
  periodNs: number | null;
  /** IRF fractions aligned to the decay's channels (measured mode). */
  irf: Float64Array | null;
  /** IRF width, channels (measured: from the data; otherwise estimated from the decay's rising edge). */
  irfFwhmChannels: number;
  fitStart: number;
  fitEnd: number;
  tailStart: number;
  scatter: boolean;
  allowNegativeAmplitudes: boolean;
  fix: Record<string, number>;
  bounds: Record<string, { min?: number; max?: number }>;
  maxIterations: number;
  seed: number;
  /** Notes for the result's warnings (e.g. an option that had no effect). */
  notes: string[];
}

function fail(reason: string, decay: Histogram): never {
  throw new InputError(reason, { file: decay.source });
}

function checkHistogram(h: Histogram, role: string, where: Histogram): void {
  const n = h.counts.length;
  if (n < 8) fail(`the ${role} has ${n} channels; a fit needs at least 8`, where);
  if (!(h.binWidthNs > 0) || !Number.isFinite(h.binWidthNs))
    fail(`the ${role} has a bin width of ${h.binWidthNs} ns; it must be a positive number`, where);
  for (let i = 0; i < n; i++) {
    const c = h.counts[i];
    if (!(c >= 0) || !Number.isFinite(c))
      fail(`the ${role} has ${c} counts in channel ${i}; counts must be finite and not negative`, where);
  }
}

interface AlignedIrf {
  /** IRF fractions on the decay's channels (unit sum). */
  fractions: Float64Array;
  fwhmChannels: number;
}

/** The last IRF put on a decay's grid, with what it was made from (see `alignedIrf`). */
let lastAligned: {
  counts: Float64Array;
  irfStartNs: number;
  decayStartNs: number;
  channels: number;
  binWidthNs: number;
  result: AlignedIrf;
} | null = null;

/**
 * The IRF prepared (`prepareIrf`) and placed on the decay's channels. A batch fits hundreds of decays
 * against one measured IRF, so the last result is kept and served again when the IRF's counts (compared
 * value by value against a private copy, far cheaper than preparing it) and both axes are unchanged.
 * The fractions served are never written to by the fitter.
 */
function alignedIrf(irf: Histogram, decay: Histogram): AlignedIrf {
  const n = decay.counts.length;
  const dt = decay.binWidthNs;
  const last = lastAligned;
  if (
    last &&
    last.channels === n &&
    last.binWidthNs === dt &&
    last.irfStartNs === irf.timeNs[0] &&
    last.decayStartNs === decay.timeNs[0] &&
    sameValues(last.counts, irf.counts)
  )
    return last.result;
  const prepared = prepareIrf(irf.counts);
  if (!prepared) throw new InputError('the IRF holds no counts above its baseline', { file: irf.source });
  const offset = Math.round((irf.timeNs[0] - decay.timeNs[0]) / dt);
  const fractions = new Float64Array(n);
  let kept = 0;
  for (let k = 0; k < irf.counts.length; k++) {
    const i = k + offset;
    if (i >= 0 && i < n) kept += fractions[i] = prepared.fractions[k];
  }
  if (!(kept > 0))
    throw new InputError(`the IRF ${irf.source} lies outside the decay's time window`, {
      file: irf.source,
    });
  if (kept !== 1) for (let i = 0; i < n; i++) fractions[i] /= kept;
  const result = { fractions, fwhmChannels: prepared.fwhmChannels };
  lastAligned = {
    counts: Float64Array.from(irf.counts),
    irfStartNs: irf.timeNs[0],
    decayStartNs: decay.timeNs[0],
    channels: n,
    binWidthNs: dt,
    result,
  };
  return result;
}

function sameValues(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Rising edge of a curve: first channel reaching `level` of its maximum. */
function risingEdge(y: ArrayLike<number>, peak: number, level: number): number {
  const target = y[peak] * level;
  let i = peak;
  while (i > 0 && y[i - 1] >= target) i--;
  return i;
}

/**
 * Checks the inputs and options of a single-model fit and resolves every default. Throws InputError
 * for anything that cannot be fitted, naming the option or the file.
 *
 * Default fit range: from the channel where the decay's rising edge first reaches 5 % of its
 * maximum, less 3 IRF widths (at least 10 channels, so the background before the pulse is seen), to
 * the last channel. A tail fit starts at `tailStartNs`, by default 2 IRF widths after the peak (the
 * width estimated from the decay's 10–90 % rise when no IRF was measured).
 */
export function resolveFitSetup(
  decay: Histogram,
  irf: Histogram | null,
  options: FitOptions & { components: number },
): FitSetup {
  checkHistogram(decay, 'decay', decay);
  const n = decay.counts.length;
  const dt = decay.binWidthNs;
  const nComponents = options.components;
  if (!Number.isInteger(nComponents) || nComponents < 1 || nComponents > 4)
    fail(`the number of components must be 1, 2, 3 or 4, got ${nComponents}`, decay);
  const statistic = options.statistic ?? 'poisson';
  if (statistic !== 'poisson' && statistic !== 'neyman' && statistic !== 'pearson')
    fail(`the statistic must be poisson, neyman or pearson, got '${statistic}'`, decay);
  const mode: IrfMode = options.irfMode ?? (irf ? 'measured' : 'gaussian');
  if (mode !== 'measured' && mode !== 'gaussian' && mode !== 'none')
    fail(`the IRF mode must be measured, gaussian or none, got '${mode}'`, decay);
  if (mode === 'measured' && !irf)
    fail('a measured-IRF fit needs an IRF histogram; give one or model the IRF', decay);
  const notes: string[] = [];

  const periodNs = options.periodNs ?? null;
  if (periodNs !== null) {
    if (!(periodNs > 0) || !Number.isFinite(periodNs))
      fail(`the repetition period must be a positive number of ns, got ${periodNs}`, decay);
    if (periodNs < n * dt * (1 - 1e-3))
      fail(
        `the repetition period ${periodNs} ns is shorter than the ${(n * dt).toPrecision(6)} ns window; crop the decay to one period`,
        decay,
      );
  }

  const counts = decay.counts;
  const peak = peakIndex(counts, 0, n);
  if (!(counts[peak] > 0)) fail('the decay holds no counts', decay);

  let irfFractions: Float64Array | null = null;
  let irfFwhmChannels: number;
  if (mode === 'measured' && irf) {
    checkHistogram(irf, 'IRF', irf);
    if (Math.abs(irf.binWidthNs - dt) > 1e-3 * dt)
      throw new InputError(
        `the decay ${decay.source} has ${dt} ns channels but the IRF ${irf.source} has ${irf.binWidthNs} ns; both must share one channel grid`,
        { file: irf.source },
      );
    // Background removed on the IRF's own axis (padding first would put zeros among the baseline
    // channels), then put on the decay's channel grid: whole-channel offset of the time origins,
    // 0 outside, renormalised if a part falls off either end.
    const aligned = alignedIrf(irf, decay);
    irfFractions = aligned.fractions;
    irfFwhmChannels = Math.max(aligned.fwhmChannels, 1);
  } else {
    // Rising edge 10 → 90 % spans ≈ 2.56σ of a Gaussian; a rough IRF width for defaults and starts.
    const e10 = risingEdge(counts, peak, 0.1);
    const e90 = risingEdge(counts, peak, 0.9);
    irfFwhmChannels = Math.max(((e90 - e10) / 2.563) * 2.3548, 1);
  }

  // Fit range.
  let fitStart: number;
  let fitEnd: number;
  let tailStart = 0;
  if (options.rangeChannels) {
    [fitStart, fitEnd] = options.rangeChannels;
    if (
      !Number.isInteger(fitStart) ||
      !Number.isInteger(fitEnd) ||
      fitStart < 0 ||
      fitEnd > n ||
      fitEnd <= fitStart
    )
      fail(
        `the fit range ${fitStart}:${fitEnd} channels must be whole channels within 0:${n}, start before end`,
        decay,
      );
  } else if (options.rangeNs) {
    const [a, b] = options.rangeNs;
    if (!Number.isFinite(a) || !Number.isFinite(b) || b <= a)
      fail(`the fit range ${a}:${b} ns is empty or not a number`, decay);
    fitStart = Math.max(0, Math.ceil((a - decay.timeNs[0]) / dt - 1e-9));
    fitEnd = Math.min(n, Math.ceil((b - decay.timeNs[0]) / dt - 1e-9));
    if (fitEnd <= fitStart)
      fail(
        `the fit range ${a}:${b} ns holds no channel of the decay (${decay.timeNs[0]} to ${decay.timeNs[0] + n * dt} ns)`,
        decay,
      );
  } else {
    const edge = risingEdge(counts, peak, 0.05);
    fitStart = Math.max(0, edge - Math.max(10, Math.ceil(3 * irfFwhmChannels)));
    fitEnd = n;
  }
  if (mode === 'none') {
    if (options.tailStartNs !== undefined) {
      if (!Number.isFinite(options.tailStartNs))
        fail(`the tail start ${options.tailStartNs} ns is not a number`, decay);
      tailStart = Math.ceil((options.tailStartNs - decay.timeNs[0]) / dt - 1e-9);
    } else tailStart = peak + Math.ceil(2 * irfFwhmChannels);
    tailStart = Math.max(0, Math.min(n - 1, tailStart));
    if (!options.rangeChannels && !options.rangeNs) fitStart = tailStart;
    fitStart = Math.max(fitStart, tailStart);
    if (options.scatter) notes.push('scatter was ignored: a tail fit has no IRF to scale');
  }

  const fix = { ...(options.fix ?? {}) };
  const bounds = { ...(options.bounds ?? {}) };
  for (const [name, value] of Object.entries(fix)) {
    if (!(PARAMETER_NAMES as readonly string[]).includes(name))
      fail(`cannot fix '${name}': known parameters are ${PARAMETER_NAMES.join(', ')}`, decay);
    if (!Number.isFinite(value)) fail(`the fixed value of ${name} must be a number, got ${value}`, decay);
    const m = /^tau(\d)Ns$/.exec(name);
    if (m && Number(m[1]) > nComponents)
      fail(`cannot fix ${name}: the model has ${nComponents} component${nComponents > 1 ? 's' : ''}`, decay);
    if (m && !(value > 0)) fail(`a fixed lifetime must be positive, got ${name} = ${value}`, decay);
    if (name === 'irfFwhmNs' && !(value > 0)) fail(`a fixed IRF width must be positive, got ${value}`, decay);
  }
  for (const [name, b] of Object.entries(bounds)) {
    if (!(PARAMETER_NAMES as readonly string[]).includes(name))
      fail(`cannot bound '${name}': known parameters are ${PARAMETER_NAMES.join(', ')}`, decay);
    if (b.min !== undefined && b.max !== undefined && !(b.min < b.max))
      fail(`the bounds of ${name} are empty: min ${b.min} is not below max ${b.max}`, decay);
    if (/^tau\dNs$/.test(name) && b.min !== undefined && !(b.min > 0))
      fail(`the lower bound of ${name} must be positive, got ${b.min}`, decay);
  }
  const nFit = fitEnd - fitStart;
  if (nFit < 2 * nComponents + 4)
    fail(
      `the fit range holds ${nFit} channels, too few for ${nComponents} component${nComponents > 1 ? 's' : ''}`,
      decay,
    );
  const maxIterations = options.maxIterations ?? 200;
  if (!Number.isInteger(maxIterations) || maxIterations < 1)
    fail(`the iteration limit must be a positive whole number, got ${maxIterations}`, decay);

  return {
    nComponents,
    statistic,
    mode,
    channels: n,
    binWidthNs: dt,
    firstEdgeNs: decay.timeNs[0],
    counts,
    periodNs,
    irf: irfFractions,
    irfFwhmChannels,
    fitStart,
    fitEnd,
    tailStart,
    scatter: !!options.scatter && mode !== 'none',
    allowNegativeAmplitudes: !!options.allowNegativeAmplitudes,
    fix,
    bounds,
    maxIterations,
    seed: options.seed ?? 1,
    notes,
  };
}

/**
 * The first channel of the highest count in [i0, i1). A function of its own so that the functions
 * that run once per fit and mostly call others (`resolveFitSetup`, `runFit`) have no loop over the
 * channels: the engine then optimises them late or not at all, and spends its compiler's time on the
 * loops that matter.
 */
export function peakIndex(counts: Float64Array, i0: number, i1: number): number {
  let peak = i0;
  for (let i = i0 + 1; i < i1; i++) if (counts[i] > counts[peak]) peak = i;
  return peak;
}
