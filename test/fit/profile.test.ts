import { describe, expect, it } from 'vitest';
import type { FitResult } from '../../shared/schema.js';
import { fitModel } from '../../src/fit/fitModel.js';
import type { FitOptions } from '../../src/fit/options.js';
import { addProfileIntervals, profileCrossing, type CrossingSearch } from '../../src/fit/profile.js';
import type { FitModelFn } from '../../src/fit/selectComponents.js';
import type { Histogram } from '../../src/io/types.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';

/** An asymmetric profile with a known answer: Δ(τ) = (ln(τ/τ̂)/s)², crossing 1 at τ̂·e^(±s). */
function logParabola(bestTauNs: number, s: number): { profile: (t: number) => number; calls: number[] } {
  const calls: number[] = [];
  return {
    calls,
    profile: (t) => {
      calls.push(t);
      return (Math.log(t / bestTauNs) / s) ** 2;
    },
  };
}

function search(over: Partial<CrossingSearch> & Pick<CrossingSearch, 'profile'>): CrossingSearch {
  return {
    bestTauNs: 2,
    firstStepNs: 0.02,
    direction: 1,
    boundNs: 1000,
    target: 1,
    tolerance: 1e-3,
    maxRefits: 12,
    label: 'test',
    ...over,
  };
}

describe('profileCrossing', () => {
  it('finds both ends of an asymmetric profile in a few refits', () => {
    // Exact crossings of Δ = (ln(τ/2)/0.1)² = 1: 2e^(−0.1) = 1.809675 and 2e^(0.1) = 2.210342 (closed form).
    for (const direction of [1, -1] as const) {
      const p = logParabola(2, 0.1);
      const r = profileCrossing(
        search({ profile: p.profile, direction, boundNs: direction > 0 ? 1000 : 0.005 }),
      );
      const exact = 2 * Math.exp(direction * 0.1);
      // Δ within 1e-3 of 1 ⇒ |ln(τ/exact)| ≤ 0.1·5e-4.
      expect(Math.abs(Math.log(r.tauNs / exact))).toBeLessThan(0.1 * 5e-4 + 1e-12);
      expect(r.warning).toBeUndefined();
      expect(r.refits).toBeLessThanOrEqual(8);
    }
  });

  it('works for a much larger first step than the interval', () => {
    const p = logParabola(2, 0.01);
    const r = profileCrossing(search({ profile: p.profile, firstStepNs: 1 }));
    expect(r.tauNs).toBeCloseTo(2 * Math.exp(0.01), 4);
  });

  it('reports an interval open at the bound', () => {
    // Flat profile beyond τ̂: the data do not bound τ from above.
    const r = profileCrossing(search({ profile: () => 0.2, boundNs: 5 }));
    expect(r.tauNs).toBe(5);
    expect(r.warning).toMatch(/open up to the bound 5 ns/);
  });

  it('gives NaN with a warning when a refit fails', () => {
    const r = profileCrossing(search({ profile: () => NaN }));
    expect(r.tauNs).toBeNaN();
    expect(r.warning).toMatch(/failed/);
  });
});

/**
 * Noise-free channel counts of a mono-exponential decay that starts at t = 0 on a channel edge: the
 * exact expected histogram, N·(e^(−iΔ/τ) − e^(−(i+1)Δ/τ))/(1 − e^(−T/τ)). Truth set here.
 */
function expectedDecay(totalCounts: number, tauNs: number, channels: number, windowNs: number): Histogram {
  const dt = windowNs / channels;
  const norm = -Math.expm1(-windowNs / tauNs);
  const counts = Float64Array.from(
    { length: channels },
    (_, i) => (totalCounts * (Math.exp((-i * dt) / tauNs) - Math.exp((-(i + 1) * dt) / tauNs))) / norm,
  );
  return {
    timeNs: Float64Array.from({ length: channels }, (_, i) => i * dt),
    counts,
    binWidthNs: dt,
    metadata: {},
    source: 'expected mono-exponential',
    warnings: [],
  };
}

/** Tail fit from t = 0 with no background: amplitude and τ free, as in the F-value's definition. */
function tailOptions(channels: number): FitOptions & { components: number } {
  return {
    components: 1,
    irfMode: 'none',
    tailStartNs: 0,
    rangeChannels: [0, channels],
    fix: { background: 0 },
  };
}

function counting(fit: FitModelFn): { fit: FitModelFn; calls: () => number } {
  let n = 0;
  return { fit: (d, i, o) => (n++, fit(d, i, o)), calls: () => n };
}

describe('addProfileIntervals', () => {
  it('reproduces the exact likelihood interval of an exponential lifetime, asymmetry included', () => {
    // For N photons from e^(−t/τ)/τ with free amplitude, −2 ln L rises by 2N[ln x + 1/x − 1], x = τ/τ̂
    // (the exponential-sample likelihood; common practice). For N = 1000 it equals 1 at
    // x = 0.96903264 and 1.03230104 (solved by bisection), i.e. τ = 1.9380653 and 2.0646021 ns for τ̂ = 2.
    // Window 20τ and Δ = τ/51.2 make truncation (e^−20) and binning negligible.
    const decay = expectedDecay(1000, 2, 1024, 40);
    const opts = tailOptions(1024);
    const best = fitModel(decay, null, opts);
    expect(best.components[0].tauNs).toBeCloseTo(2, 9);
    const counter = counting(fitModel);
    const r = addProfileIntervals(best, decay, null, opts, counter.fit, { meritTolerance: 1e-4 });
    const [lo, hi] = r.components[0].tauProfileNs!;
    expect(Math.abs(lo - 1.9380653)).toBeLessThan(2e-5);
    expect(Math.abs(hi - 2.0646021)).toBeLessThan(2e-5);
    // Longer on the upper side, as the exponential likelihood is.
    expect(hi - 2).toBeGreaterThan(2 - lo);
    expect(counter.calls()).toBeLessThanOrEqual(16);
  });

  it('has a half-width equal to the Cramér–Rao error τ·F/√N for a 10τ window of 256 channels', () => {
    // F(T/τ = 10, k = 256) = 1.0023: REFERENCE-VALUES §11 (Köllner & Wolfrum 1992; VERIFIED).
    const n = 1e4;
    const decay = expectedDecay(n, 2, 256, 20);
    const opts = tailOptions(256);
    const best = fitModel(decay, null, opts);
    const r = addProfileIntervals(best, decay, null, opts, fitModel, { meritTolerance: 1e-4 });
    const [lo, hi] = r.components[0].tauProfileNs!;
    const f = (hi - lo) / 2 / 2 / (1 / Math.sqrt(n));
    expect(f).toBeGreaterThan(1.0023 * 0.998);
    expect(f).toBeLessThan(1.0023 * 1.002);
  });

  it('returns a new result, leaves the input alone and skips a lifetime held fixed', () => {
    const decay = expectedDecay(1e4, 2, 256, 20);
    const opts: FitOptions & { components: number } = {
      ...tailOptions(256),
      fix: { background: 0, tau1Ns: 2 },
    };
    const best: FitResult = fitModel(decay, null, opts);
    const snapshot = JSON.stringify(best);
    const counter = counting(fitModel);
    const r = addProfileIntervals(best, decay, null, opts, counter.fit);
    expect(r).not.toBe(best);
    expect(JSON.stringify(best)).toBe(snapshot);
    expect(r.components[0].tauProfileNs).toBeUndefined();
    expect(counter.calls()).toBe(0);
  });

  it('agrees with the curvature errors for a well-determined bi-exponential decay', () => {
    // At 2·10⁴ peak counts the likelihood is close to quadratic, so each side of the support-plane
    // interval is close to the Fisher-information error (common practice). Truth set by the simulation.
    // Measured with seed 21: sides/error = 0.98 and 1.01 for τ1, 1.00 and 1.00 for τ2.
    const sim = simulateTcspc({
      components: [
        { tauNs: 0.8, fraction: 0.5 },
        { tauNs: 3.5, fraction: 0.5 },
      ],
      fractionKind: 'amplitude',
      peakCounts: 2e4,
      channels: 1024,
      binWidthNs: 0.025,
      periodNs: null,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
      backgroundPerChannel: 2,
      irfCounts: 1e6,
      seed: 21,
    });
    const opts = { components: 2 };
    const best = fitModel(sim.decay, sim.irf, opts);
    const r = addProfileIntervals(best, sim.decay, sim.irf, opts, fitModel);
    r.components.forEach((c) => {
      const [lo, hi] = c.tauProfileNs!;
      expect((c.tauNs - lo) / c.tauErrNs).toBeGreaterThan(0.85);
      expect((c.tauNs - lo) / c.tauErrNs).toBeLessThan(1.15);
      expect((hi - c.tauNs) / c.tauErrNs).toBeGreaterThan(0.85);
      expect((hi - c.tauNs) / c.tauErrNs).toBeLessThan(1.15);
    });
    expect(r.warnings).toEqual(best.warnings);
  });
});
