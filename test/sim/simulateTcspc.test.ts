import { describe, expect, it } from 'vitest';
import { simulateTcspc, type SimulationOptions } from '../../src/sim/simulateTcspc.js';
import { InputError } from '../../src/errors.js';
import { chi2QuantileWilsonHilferty, pearsonChi2, Z_0999 } from './statistics.js';

function sum(a: ArrayLike<number>): number {
  let s = 0;
  for (let k = 0; k < a.length; k++) s += a[k];
  return s;
}

/** Sum of K simulated decay histograms (seeds base … base + K − 1) and K times the expectation. */
function replicate(options: Omit<SimulationOptions, 'seed'>, K: number, baseSeed: number) {
  let total: Float64Array | null = null;
  let expected: Float64Array | null = null;
  for (let i = 0; i < K; i++) {
    const m = simulateTcspc({ ...options, seed: baseSeed + i });
    if (!total || !expected) {
      total = new Float64Array(m.decay.counts.length);
      expected = new Float64Array(m.expected.length);
    }
    for (let k = 0; k < total.length; k++) {
      total[k] += m.decay.counts[k];
      expected[k] += m.expected[k];
    }
  }
  return { total: total!, expected: expected! };
}

/**
 * The acceptance check of the simulator. The sum of K independent simulated histograms has, channel by
 * channel, a Poisson distribution with mean K·expected, so Pearson's χ² over the channels with
 * expectation ≥ 5 follows χ²_ν with ν = number of those channels (nothing is fitted). Threshold: the
 * 99.9 % quantile of χ²_ν by the Wilson–Hilferty approximation (statistics.ts), so a correct simulator
 * fails this test once in a thousand seeds; the seeds are fixed, so the outcome is too.
 */
describe('simulateTcspc against the dense-quadrature expectation (χ² test)', () => {
  const K = 16;
  const full: Omit<SimulationOptions, 'seed'> = {
    components: [
      { tauNs: 0.6, fraction: 0.35 },
      { tauNs: 3.2, fraction: 0.65 },
    ],
    fractionKind: 'intensity',
    totalCounts: 150_000,
    channels: 512,
    binWidthNs: 0.0244,
    periodNs: 12.5,
    irf: { kind: 'gaussian', fwhmNs: 0.12, centerNs: 1.5, tailNs: 0.4, tailFraction: 0.15 },
    colorShiftNs: 0.05,
    backgroundPerChannel: 2,
    scatterFraction: 0.03,
  };

  it('matches for a bi-exponential with folding, tailed IRF, colour shift, scatter and background', () => {
    const { total, expected } = replicate(full, K, 100);
    const { chi2, cells } = pearsonChi2(total, expected);
    expect(cells).toBeGreaterThan(400);
    expect(chi2).toBeLessThan(chi2QuantileWilsonHilferty(cells, Z_0999));
  });

  it('has the power to see a lifetime wrong by 3 % (the same χ² fails against a perturbed model)', () => {
    const { total } = replicate(full, K, 100);
    const wrong = replicate(
      {
        ...full,
        components: [
          { tauNs: 0.6, fraction: 0.35 },
          { tauNs: 3.2 * 1.03, fraction: 0.65 },
        ],
      },
      1,
      999,
    ).expected.map((x) => x * K);
    const { chi2, cells } = pearsonChi2(total, wrong);
    expect(chi2).toBeGreaterThan(chi2QuantileWilsonHilferty(cells, Z_0999));
  });

  it('sees the folding: the same χ² fails against the single-pulse expectation of the same decay', () => {
    const { total } = replicate(full, K, 100);
    const single = replicate({ ...full, periodNs: null }, 1, 999).expected.map((x) => x * K);
    const { chi2, cells } = pearsonChi2(total, single);
    expect(chi2).toBeGreaterThan(chi2QuantileWilsonHilferty(cells, Z_0999));
  });

  it('matches for a measured IRF read as uniform within its bins, single pulse, amplitude fractions', () => {
    // A made-up measured IRF on a coarser grid than the decay and offset from it, so that bins of the
    // two do not line up: a skewed peak with a small late bump.
    const irfCounts = new Float64Array(64);
    for (let k = 0; k < 64; k++) {
      const t = k * 0.03;
      irfCounts[k] = Math.round(
        1e4 * Math.exp(-(((t - 0.5) / 0.06) ** 2)) + 800 * Math.exp(-(((t - 0.8) / 0.1) ** 2)),
      );
    }
    const options: Omit<SimulationOptions, 'seed'> = {
      components: [
        { tauNs: 1.1, fraction: 0.8 },
        { tauNs: 5, fraction: 0.2 },
      ],
      fractionKind: 'amplitude',
      peakCounts: 8000,
      channels: 600,
      binWidthNs: 0.02,
      periodNs: null,
      irf: { kind: 'measured', counts: irfCounts, binWidthNs: 0.03, startNs: 0.0137 },
      colorShiftNs: -0.031,
    };
    const { total, expected } = replicate(options, K, 500);
    const { chi2, cells } = pearsonChi2(total, expected);
    expect(cells).toBeGreaterThan(500);
    expect(chi2).toBeLessThan(chi2QuantileWilsonHilferty(cells, Z_0999));
  });

  it('simulates the IRF measurement itself to its own expectation', () => {
    let total = new Float64Array(512);
    let expected = new Float64Array(512);
    for (let i = 0; i < K; i++) {
      const m = simulateTcspc({ ...full, irfCounts: 50_000, irfBackgroundPerChannel: 1, seed: 700 + i });
      total = total.map((x, k) => x + m.irf.counts[k]);
      expected = expected.map((x, k) => x + m.expectedIrf[k]);
    }
    const { chi2, cells } = pearsonChi2(total, expected);
    expect(chi2).toBeLessThan(chi2QuantileWilsonHilferty(cells, Z_0999));
  });
});

describe('simulateTcspc moments and conservation', () => {
  it('gives mean arrival − IRF mean = τ in a wide single-pulse window, within 4 standard errors', () => {
    // First moment of an exponential delay is τ, and means add under convolution (textbook;
    // REFERENCE-VALUES §2 "mean = t0 + τ", VERIFIED). Window 60 ns = 24τ: the truncated share e^(−23) is
    // negligible; binning at 0.01 ns shifts a mean by < bw²/(12τ) = 3e-6 ns.
    const tauNs = 2.5;
    const m = simulateTcspc({
      components: [{ tauNs, fraction: 1 }],
      totalCounts: 400_000,
      channels: 6000,
      binWidthNs: 0.01,
      periodNs: null,
      irf: { kind: 'gaussian', fwhmNs: 0.2, centerNs: 2, tailNs: 0.5, tailFraction: 0.2 },
      irfCounts: 400_000,
      seed: 21,
    });
    const meanOf = (h: { counts: Float64Array; timeNs: Float64Array }) => {
      let s = 0;
      let s2 = 0;
      let n = 0;
      for (let k = 0; k < h.counts.length; k++) {
        const t = h.timeNs[k] + 0.005;
        s += h.counts[k] * t;
        s2 += h.counts[k] * t * t;
        n += h.counts[k];
      }
      const mean = s / n;
      return { mean, se: Math.sqrt((s2 / n - mean * mean) / n) };
    };
    const d = meanOf(m.decay);
    const i = meanOf(m.irf);
    // The IRF histogram's mean agrees with the specified one (centre + tail share × tail).
    expect(Math.abs(i.mean - (2 + 0.2 * 0.5))).toBeLessThan(4 * i.se);
    expect(m.truth.irfMeanNs).toBeCloseTo(2.1, 12);
    const se = Math.hypot(d.se, i.se);
    expect(Math.abs(d.mean - i.mean - tauNs)).toBeLessThan(4 * se);
    expect(se).toBeLessThan(0.01); // the check is sharp: 4 SE is below 2 % of τ
  });

  it('conserves every photon when folding at a period equal to the window, even for τ ≫ period', () => {
    for (const tauNs of [0.8, 30]) {
      const m = simulateTcspc({
        components: [{ tauNs, fraction: 1 }],
        totalCounts: 123_457,
        fixedPhotonNumber: true,
        channels: 1024,
        binWidthNs: 12.5 / 1024,
        periodNs: 12.5,
        irf: { kind: 'gaussian', fwhmNs: 0.3, centerNs: 12.4 }, // part of the IRF itself wraps around
        seed: 5,
      });
      expect(m.photonsDrawn).toBe(123_457);
      expect(sum(m.decay.counts)).toBe(123_457);
    }
  });

  it('loses photons past the window without a period (so the conservation check can fail)', () => {
    const m = simulateTcspc({
      components: [{ tauNs: 30, fraction: 1 }],
      totalCounts: 100_000,
      fixedPhotonNumber: true,
      channels: 1024,
      binWidthNs: 12.5 / 1024,
      periodNs: null,
      seed: 5,
    });
    // totalCounts is what lands in the window on average, so more photons are drawn than land.
    expect(m.photonsDrawn).toBeGreaterThan(200_000);
    expect(sum(m.decay.counts)).toBeLessThan(m.photonsDrawn);
  });

  it('hits the requested peak counts on average', () => {
    let peakSum = 0;
    const R = 8;
    for (let s = 0; s < R; s++) {
      const m = simulateTcspc({
        components: [{ tauNs: 1, fraction: 1 }],
        peakCounts: 10_000,
        channels: 256,
        binWidthNs: 0.05,
        seed: 40 + s,
      });
      peakSum += m.decay.counts[m.expected.indexOf(Math.max(...m.expected))];
      expect(m.truth.meanPeakCounts).toBeCloseTo(10_000, 6);
    }
    // Mean of R Poisson(1e4) draws: SE = 100/sqrt(R).
    expect(Math.abs(peakSum / R - 10_000)).toBeLessThan((4 * 100) / Math.sqrt(R));
  });
});

describe('simulateTcspc reproducibility and bookkeeping', () => {
  const options: SimulationOptions = {
    components: [{ tauNs: 2, fraction: 1 }],
    peakCounts: 2000,
    channels: 1024,
    periodNs: 12.5,
    backgroundPerChannel: 1,
    seed: 77,
  };

  it('gives identical histograms for the same seed and different ones for another seed', () => {
    const a = simulateTcspc(options);
    const b = simulateTcspc(options);
    const c = simulateTcspc({ ...options, seed: 78 });
    expect(Array.from(a.decay.counts)).toEqual(Array.from(b.decay.counts));
    expect(Array.from(a.irf.counts)).toEqual(Array.from(b.irf.counts));
    expect(Array.from(a.decay.counts)).not.toEqual(Array.from(c.decay.counts));
  });

  it('keeps each measurement’s noise when only the other one’s settings change (separate streams)', () => {
    const a = simulateTcspc(options);
    const b = simulateTcspc({ ...options, irfCounts: 5000 });
    expect(Array.from(a.decay.counts)).toEqual(Array.from(b.decay.counts));
    const c = simulateTcspc({ ...options, irfBackgroundPerChannel: 2 });
    const d = simulateTcspc({ ...options, irfBackgroundPerChannel: 2, backgroundPerChannel: 5 });
    expect(Array.from(c.irf.counts)).toEqual(Array.from(d.irf.counts));
  });

  it('reports both amplitude and intensity fractions of the truth', () => {
    // REFERENCE-VALUES §7: a = (0.8, 0.2), τ = (0.5, 3) ns → intensity fractions (0.4, 0.6). VERIFIED.
    const m = simulateTcspc({
      components: [
        { tauNs: 0.5, fraction: 0.8 },
        { tauNs: 3, fraction: 0.2 },
      ],
      fractionKind: 'amplitude',
      channels: 256,
      seed: 1,
    });
    expect(m.truth.components[0].intensityFraction).toBeCloseTo(0.4, 14);
    expect(m.truth.components[1].intensityFraction).toBeCloseTo(0.6, 14);
    const back = simulateTcspc({
      components: [
        { tauNs: 0.5, fraction: 0.4 },
        { tauNs: 3, fraction: 0.6 },
      ],
      channels: 256,
      seed: 1,
    });
    expect(back.truth.components[0].amplitudeFraction).toBeCloseTo(0.8, 14);
  });

  it('returns histograms on a uniform axis with the bin width and period in their metadata', () => {
    const m = simulateTcspc(options);
    expect(m.decay.timeNs.length).toBe(1024);
    expect(m.decay.timeNs[1023]).toBeCloseTo(1023 * 0.0122, 12);
    expect(m.decay.binWidthNs).toBe(0.0122);
    expect(m.decay.metadata).toMatchObject({ bin_width_ns: '0.0122', period_ns: '12.5' });
    expect(m.decay.source).toBe('simulated');
  });
});

describe('simulateTcspc input checks', () => {
  const base: SimulationOptions = { components: [{ tauNs: 2, fraction: 1 }], channels: 256, seed: 1 };
  const cases: [string, Partial<SimulationOptions>, RegExp][] = [
    ['no components', { components: [] }, /at least one decay component/],
    [
      'a negative lifetime',
      { components: [{ tauNs: -1, fraction: 1 }] },
      /components\[0\]\.tauNs must be greater than 0/,
    ],
    ['both counts', { totalCounts: 10, peakCounts: 10 }, /not both/],
    ['a period shorter than the window', { channels: 4096, periodNs: 12.5 }, /shorter than the window/],
    ['a fractional channel count', { channels: 10.5 }, /channels must be an integer/],
    ['a scatter share above 1', { scatterFraction: 1.5 }, /scatterFraction must be at most 1/],
    [
      'a tail share without a tail',
      { irf: { kind: 'gaussian', fwhmNs: 0.1, centerNs: 1, tailFraction: 0.2 } },
      /without irf.tailNs/,
    ],
    [
      'an empty measured IRF',
      { irf: { kind: 'measured', counts: new Float64Array(8), binWidthNs: 0.01 } },
      /no positive counts/,
    ],
    ['a negative seed', { seed: -3 }, /seed must be an integer/],
  ];
  for (const [what, patch, message] of cases) {
    it(`rejects ${what} with an InputError that says what is wrong`, () => {
      expect(() => simulateTcspc({ ...base, ...patch })).toThrow(InputError);
      expect(() => simulateTcspc({ ...base, ...patch })).toThrow(message);
    });
  }

  it('rejects an IRF that puts nothing inside the window', () => {
    expect(() => simulateTcspc({ ...base, irf: { kind: 'gaussian', fwhmNs: 0.1, centerNs: 500 } })).toThrow(
      /no decay photon can land inside the window/,
    );
  });
});
