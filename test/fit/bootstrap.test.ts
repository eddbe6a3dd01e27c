import { describe, expect, it } from 'vitest';
import { addBootstrap, percentile } from '../../src/fit/bootstrap.js';
import { fitModel } from '../../src/fit/fitModel.js';
import type { FitOptions } from '../../src/fit/options.js';
import type { FitModelFn } from '../../src/fit/selectComponents.js';
import type { Histogram } from '../../src/io/types.js';

/** Exact expected counts of a mono-exponential starting at t = 0 on a channel edge (truth set here). */
function expectedDecay(totalCounts: number, tauNs: number, channels: number, windowNs: number): Histogram {
  const dt = windowNs / channels;
  const norm = -Math.expm1(-windowNs / tauNs);
  return {
    timeNs: Float64Array.from({ length: channels }, (_, i) => i * dt),
    counts: Float64Array.from(
      { length: channels },
      (_, i) => (totalCounts * (Math.exp((-i * dt) / tauNs) - Math.exp((-(i + 1) * dt) / tauNs))) / norm,
    ),
    binWidthNs: dt,
    metadata: {},
    source: 'expected mono-exponential',
    warnings: [],
  };
}

const OPTS: FitOptions & { components: number } = {
  components: 1,
  irfMode: 'none',
  tailStartNs: 0,
  rangeChannels: [0, 256],
  fix: { background: 0 },
};

describe('percentile', () => {
  it('interpolates linearly between order statistics', () => {
    // Type-7 definition (common practice): h = (n−1)q; [1, 2, 3, 4] at q = 0.25 → 1.75, at 0.5 → 2.5.
    const xs = Float64Array.of(1, 2, 3, 4);
    expect(percentile(xs, 0.25)).toBeCloseTo(1.75, 15);
    expect(percentile(xs, 0.5)).toBeCloseTo(2.5, 15);
    expect(percentile(xs, 0)).toBe(1);
    expect(percentile(xs, 1)).toBe(4);
    expect(percentile([], 0.5)).toBeNaN();
  });
});

describe('addBootstrap', () => {
  const decay = expectedDecay(1e4, 2, 256, 20);
  const best = fitModel(decay, null, OPTS);

  it('spreads the lifetime by the Cramér–Rao error of a Poisson decay', () => {
    // σ_τ = τ·F/√N with F(T/τ = 10, k = 256) = 1.0023: REFERENCE-VALUES §11 (Köllner & Wolfrum 1992;
    // VERIFIED). 200 replicates estimate an SD to ±5 % (1σ, 1/√(2R)), so allow ±15 %. Measured with
    // seed 7: SD/σ = 0.987, 95 % width/(2·1.96σ) = 0.943.
    const sigma = (2 * 1.0023) / Math.sqrt(1e4);
    const r = addBootstrap(best, decay, null, OPTS, fitModel, { replicates: 200, seed: 7 });
    const c = r.components[0];
    expect(c.tauBootstrapErrNs! / sigma).toBeGreaterThan(0.85);
    expect(c.tauBootstrapErrNs! / sigma).toBeLessThan(1.15);
    const [lo, hi] = c.tauBootstrapCi95Ns!;
    // The central 95 % of a near-normal spread: ±1.96σ about τ (normal quantile, FROM MEMORY).
    expect((hi - lo) / (2 * 1.96 * sigma)).toBeGreaterThan(0.8);
    expect((hi - lo) / (2 * 1.96 * sigma)).toBeLessThan(1.2);
    expect(lo).toBeLessThan(2);
    expect(hi).toBeGreaterThan(2);
    expect(r.warnings.filter((w) => w.startsWith('bootstrap'))).toEqual([]);
  });

  it('is reproducible for a seed and changes with it', () => {
    const a = addBootstrap(best, decay, null, OPTS, fitModel, { replicates: 20, seed: 3 });
    const b = addBootstrap(best, decay, null, OPTS, fitModel, { replicates: 20, seed: 3 });
    const c = addBootstrap(best, decay, null, OPTS, fitModel, { replicates: 20, seed: 4 });
    expect(b.components[0].tauBootstrapErrNs).toBe(a.components[0].tauBootstrapErrNs);
    expect(c.components[0].tauBootstrapErrNs).not.toBe(a.components[0].tauBootstrapErrNs);
  });

  it('gets the same spread refitting from the best fit as refitting from scratch', () => {
    // Same seed ⇒ same replicates; both refits must reach the same optimum of each (one minimum for a
    // mono-exponential), the quick one without the starting-value search.
    let fullFits = 0;
    const counted: FitModelFn = (d, i, o) => (fullFits++, fitModel(d, i, o));
    const quick = addBootstrap(best, decay, null, OPTS, counted, { replicates: 30, seed: 9 });
    expect(fullFits).toBe(0);
    const full = addBootstrap(best, decay, null, OPTS, fitModel, {
      replicates: 30,
      seed: 9,
      refit: 'fullFit',
    });
    const [q, f] = [quick.components[0], full.components[0]];
    expect(Math.abs(q.tauBootstrapErrNs! / f.tauBootstrapErrNs! - 1)).toBeLessThan(1e-4);
    expect(q.tauBootstrapCi95Ns![0]).toBeCloseTo(f.tauBootstrapCi95Ns![0], 5);
    expect(q.tauBootstrapCi95Ns![1]).toBeCloseTo(f.tauBootstrapCi95Ns![1], 5);
  });

  it('refits on the same channels from Poisson draws of the model and leaves the inputs alone', () => {
    const seen: Histogram[] = [];
    const spy: FitModelFn = (d, i, o) => {
      seen.push(d);
      expect(o.rangeChannels).toEqual([0, 256]);
      expect(o.components).toBe(1);
      return fitModel(d, i, o);
    };
    const snapshot = JSON.stringify(best);
    const before = Float64Array.from(decay.counts);
    const r = addBootstrap(best, decay, null, OPTS, spy, {
      replicates: 3,
      seed: 1,
      minSuccessful: 2,
      refit: 'fullFit',
    });
    expect(seen.length).toBe(3);
    for (const h of seen) {
      expect(h).not.toBe(decay);
      expect(h.counts.every((n) => Number.isInteger(n) && n >= 0)).toBe(true);
    }
    expect(Array.from(decay.counts)).toEqual(Array.from(before));
    expect(JSON.stringify(best)).toBe(snapshot);
    expect(r).not.toBe(best);
  });

  it('counts failed replicates and reports no errors when too few succeed', () => {
    let call = 0;
    const flaky: FitModelFn = (d, i, o) => {
      call++;
      if (call % 4 === 0) throw new Error('no convergence');
      return fitModel(d, i, o);
    };
    const r = addBootstrap(best, decay, null, OPTS, flaky, { replicates: 20, seed: 2, refit: 'fullFit' });
    expect(r.warnings).toContain('bootstrap: 5 of 20 replicates failed to fit and were left out');
    expect(r.components[0].tauBootstrapErrNs).toBeGreaterThan(0);
    const none = addBootstrap(
      best,
      decay,
      null,
      OPTS,
      () => {
        throw new Error('always');
      },
      { replicates: 5, seed: 2, refit: 'fullFit' },
    );
    expect(none.components[0].tauBootstrapErrNs).toBeNaN();
    expect(none.warnings).toContain(
      'bootstrap: only 0 replicates succeeded (need 10); no bootstrap errors reported',
    );
  });
});
