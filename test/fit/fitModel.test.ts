import { describe, expect, it } from 'vitest';
import { fitModel } from '../../src/fit/fitModel.js';
import { fitDecay } from '../../src/fit/fitDecay.js';
import { simulateTcspc, type SimulationOptions } from '../../src/sim/simulateTcspc.js';
import { InputError } from '../../src/errors.js';
import type { Histogram } from '../../src/io/types.js';
import type { FitResult } from '../../shared/schema.js';
import { exponentialBasis } from '../../src/model/reconvolve.js';

// Recovery on simulated data: the photon-level simulator (src/sim, independent of the model code) sets
// the truth; every lifetime must come back within 3 reported standard errors (issue acceptance).
function within3Sigma(fit: FitResult, truth: number[]) {
  expect(fit.components.map((c) => c.tauNs).length).toBe(truth.length);
  fit.components.forEach((c, k) => {
    expect(Number.isFinite(c.tauErrNs) && c.tauErrNs > 0).toBe(true);
    expect(Math.abs(c.tauNs - truth[k])).toBeLessThan(3 * c.tauErrNs);
  });
}

function sim(o: Omit<SimulationOptions, 'seed'> & { seed?: number }) {
  return simulateTcspc({ seed: 11, ...o } as SimulationOptions);
}

describe('fitModel recovers simulated decays', () => {
  it('a 2-exponential decay with a +37 ps colour shift and 3 counts of background per channel', () => {
    const s = sim({
      components: [
        { tauNs: 0.8, fraction: 0.4 },
        { tauNs: 3.5, fraction: 0.6 },
      ],
      peakCounts: 2e4,
      channels: 1024,
      binWidthNs: 0.0488,
      irf: { kind: 'gaussian', fwhmNs: 0.2, centerNs: 3 },
      colorShiftNs: 0.037,
      backgroundPerChannel: 3,
    });
    const fit = fitModel(s.decay, s.irf, { components: 2 });
    expect(fit.converged).toBe(true);
    within3Sigma(fit, [0.8, 3.5]);
    expect(Math.abs(fit.shiftNs - 0.037)).toBeLessThan(3 * fit.shiftErrNs);
    expect(Math.abs(fit.background - 3)).toBeLessThan(3 * fit.backgroundErr);
    // Intensity fractions (truth set by the simulation) within 3σ as well.
    expect(Math.abs(fit.components[0].intensityFraction - 0.4)).toBeLessThan(
      3 * fit.components[0].intensityFractionErr,
    );
  });

  it('a 3-exponential decay', () => {
    const s = sim({
      components: [
        { tauNs: 0.3, fraction: 0.2 },
        { tauNs: 1.5, fraction: 0.3 },
        { tauNs: 6, fraction: 0.5 },
      ],
      peakCounts: 5e4,
      channels: 1024,
      binWidthNs: 0.0488,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 3 },
      backgroundPerChannel: 2,
      seed: 3,
    });
    const fit = fitModel(s.decay, s.irf, { components: 3 });
    expect(fit.converged).toBe(true);
    within3Sigma(fit, [0.3, 1.5, 6]);
  });

  it('a 60 ps lifetime under a 150 ps IRF', () => {
    const s = sim({
      components: [{ tauNs: 0.06, fraction: 1 }],
      peakCounts: 1e4,
      channels: 1024,
      binWidthNs: 0.0122,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
      backgroundPerChannel: 1,
      seed: 5,
    });
    const fit = fitModel(s.decay, s.irf, { components: 1 });
    within3Sigma(fit, [0.06]);
  });

  it('a 20 ns lifetime at a 12.5 ns repetition period', () => {
    const s = sim({
      components: [{ tauNs: 20, fraction: 1 }],
      peakCounts: 1e4,
      channels: 1024,
      binWidthNs: 12.5 / 1024,
      periodNs: 12.5,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
      backgroundPerChannel: 2,
      seed: 7,
    });
    const fit = fitModel(s.decay, s.irf, { components: 1, periodNs: 12.5 });
    within3Sigma(fit, [20]);
    // Without the period in the model the pile-up of earlier tails is mistaken for background and
    // the lifetime is biased: the periodic term is doing real work.
    const naive = fitModel(s.decay, s.irf, { components: 1 });
    expect(Math.abs(naive.components[0].tauNs - 20)).toBeGreaterThan(3 * naive.components[0].tauErrNs);
  });

  it('a 6.446 ns lifetime with a measured IRF that carries 1 or 2 counts of its own background per channel', () => {
    // Removing the IRF's background by clipping every channel at 0 left a positive floor (1/e ≈ 0.37
    // counts per channel at a baseline of 1) that gave τ = 6.334 ns (χ²_red ≈ 1.9) on this decay,
    // 35 standard errors short; with the support-limited subtraction the lifetime is as good as from
    // an IRF without background.
    for (const irfBackgroundPerChannel of [1, 2]) {
      const s = sim({
        components: [{ tauNs: 6.446, fraction: 1 }],
        peakCounts: 1e4,
        periodNs: 50,
        irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2, tailNs: 0.35, tailFraction: 0.08 },
        backgroundPerChannel: 2,
        irfCounts: 150000,
        irfBackgroundPerChannel,
        seed: 3,
      });
      const fit = fitModel(s.decay, s.irf, { components: 1, periodNs: 50, curves: false });
      within3Sigma(fit, [6.446]);
      expect(fit.chi2Reduced).toBeLessThan(1.1);
    }
  });

  it('a decay without a measured IRF, with a modelled Gaussian IRF of fitted width', () => {
    const s = sim({
      components: [{ tauNs: 2.5, fraction: 1 }],
      peakCounts: 1e4,
      channels: 1024,
      binWidthNs: 0.0244,
      irf: { kind: 'gaussian', fwhmNs: 0.3, centerNs: 4 },
      backgroundPerChannel: 1,
      seed: 9,
    });
    const fit = fitModel(s.decay, null, { components: 1, irfMode: 'gaussian' });
    within3Sigma(fit, [2.5]);
    expect(Math.abs(fit.irfFwhmNs! - 0.3)).toBeLessThan(3 * fit.irfFwhmErrNs!);
    expect(Math.abs(fit.irfCenterNs! - 4)).toBeLessThan(3 * fit.irfCenterErrNs!);
  });

  it('a tail fit without IRF from a chosen start', () => {
    const s = sim({
      components: [{ tauNs: 4, fraction: 1 }],
      peakCounts: 1e4,
      channels: 512,
      binWidthNs: 0.08,
      irf: { kind: 'gaussian', fwhmNs: 0.3, centerNs: 3 },
      backgroundPerChannel: 2,
      seed: 13,
    });
    const fit = fitModel(s.decay, null, { components: 1, irfMode: 'none', tailStartNs: 5 });
    expect(fit.irfMode).toBe('none');
    expect(fit.rangeNs[0]).toBeCloseTo(5.04, 6); // first channel whose left edge is ≥ 5 ns
    within3Sigma(fit, [4]);
  });
});

describe('fitModel with optional terms', () => {
  it('separates scattered excitation light from a short decay with the scatter term', () => {
    const s = sim({
      components: [{ tauNs: 0.4, fraction: 1 }],
      peakCounts: 2e4,
      channels: 512,
      binWidthNs: 0.0244,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
      scatterFraction: 0.1,
      backgroundPerChannel: 1,
      seed: 17,
    });
    const fit = fitModel(s.decay, s.irf, { components: 1, scatter: true });
    within3Sigma(fit, [0.4]);
    // The scatter term is a fraction of all counts in the fit range; the simulator's 10 % is of the
    // decay photons (background excluded), so convert with the counts actually in the range.
    const bgCounts = 1 * (fit.curves.fitEndIndex - fit.curves.fitStartIndex + 1);
    const expected = (0.1 * (fit.totalCounts - bgCounts)) / fit.totalCounts;
    expect(Math.abs(fit.scatter - expected)).toBeLessThan(3 * fit.scatterErr + 0.002);
    // Without it the scatter spike drags the lifetime down.
    const without = fitModel(s.decay, s.irf, { components: 1 });
    expect(Math.abs(without.components[0].tauNs - 0.4)).toBeGreaterThan(3 * without.components[0].tauErrNs);
  });

  it('separates scatter from fluorescence under a colour shift: scatter keeps the IRF timing', () => {
    // Simulated truth (set here): scattered excitation light has no colour shift, the emission is
    // 37 ps late. A model that shifted the scatter with the fluorescence, or an optimiser started
    // only at zero shift, settled at scatter ≈ 0 and a negative shift with τ₁ 1 % long.
    const s = sim({
      components: [
        { tauNs: 0.8, fraction: 0.5 },
        { tauNs: 3.5, fraction: 0.5 },
      ],
      peakCounts: 2e4,
      channels: 2048,
      binWidthNs: 0.0122,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 3 },
      colorShiftNs: 0.037,
      scatterFraction: 0.05,
      backgroundPerChannel: 3,
      irfCounts: 1e5,
      seed: 1,
    });
    const fit = fitModel(s.decay, s.irf, { components: 2, scatter: true });
    within3Sigma(fit, [0.8, 3.5]);
    expect(Math.abs(fit.shiftNs - 0.037)).toBeLessThan(3 * fit.shiftErrNs);
    const bgCounts = 3 * (fit.curves.fitEndIndex - fit.curves.fitStartIndex + 1);
    const expected = (0.05 * (fit.totalCounts - bgCounts)) / fit.totalCounts;
    expect(Math.abs(fit.scatter - expected)).toBeLessThan(3 * fit.scatterErr + 0.002);
    // The optimum found is the global one: holding the shift at its truth gives no lower deviance.
    const atTruth = fitModel(s.decay, s.irf, { components: 2, scatter: true, fix: { shiftNs: 0.037 } });
    expect(fit.deviance).toBeLessThanOrEqual(atTruth.deviance + 1e-6);
  });

  it('fits a rise component with a negative amplitude when allowed', () => {
    // Invented truth for a two-state reaction: a·(e^{−t/2} − 0.6·e^{−t/0.3}), built from the model's own
    // basis (noise-free), then Poisson noise. The fit must find the negative amplitude within 3σ.
    const n = 512;
    const dt = 0.025;
    const irfCounts = new Float64Array(n);
    for (let i = 0; i < n; i++) irfCounts[i] = 1e5 * Math.exp(-0.5 * ((i * dt + dt / 2 - 2) / 0.05) ** 2);
    const irf: Histogram = {
      timeNs: Float64Array.from({ length: n }, (_, i) => i * dt),
      counts: irfCounts,
      binWidthNs: dt,
      metadata: {},
      source: 'irf (invented)',
      warnings: [],
    };
    const q = irfCounts.map((v) => v / irfCounts.reduce((a, b) => a + b, 0));
    const basisOf = (tau: number) => {
      const out = new Float64Array(n);
      exponentialBasis(q, dt, tau, null, out, null, null, null);
      return out;
    };
    const b1 = basisOf(2);
    const b2 = basisOf(0.3);
    let seed = 12345;
    const rand = () => (seed = (seed * 16807) % 2147483647) / 2147483647;
    const poisson = (mean: number) => {
      // Knuth's multiplication method (fine below ~1e3) or a normal approximation above.
      if (mean > 500)
        return Math.max(
          0,
          Math.round(
            mean + Math.sqrt(mean) * Math.sqrt(-2 * Math.log(rand())) * Math.cos(2 * Math.PI * rand()),
          ),
        );
      const l = Math.exp(-mean);
      let k = 0;
      let p = 1;
      do {
        k++;
        p *= rand();
      } while (p > l);
      return k - 1;
    };
    const counts = Float64Array.from({ length: n }, (_, i) => poisson(1e4 * (b1[i] - 0.6 * b2[i]) + 2));
    const decay: Histogram = { ...irf, counts, source: 'rise (invented)' };
    const fit = fitModel(decay, irf, { components: 2, allowNegativeAmplitudes: true });
    within3Sigma(fit, [0.3, 2]);
    expect(fit.components[0].amplitude).toBeLessThan(0);
    expect(Math.abs(fit.components[0].amplitude / fit.components[1].amplitude + 0.6)).toBeLessThan(0.05);
  });
});

describe('fitModel statistics and bookkeeping', () => {
  const s = sim({
    components: [{ tauNs: 3, fraction: 1 }],
    peakCounts: 3000,
    channels: 512,
    binWidthNs: 0.05,
    irf: { kind: 'gaussian', fwhmNs: 0.2, centerNs: 2 },
    backgroundPerChannel: 1,
    seed: 21,
  });

  it('reports a χ² and deviance that an independent recomputation from its curves reproduces', () => {
    for (const statistic of ['poisson', 'neyman', 'pearson'] as const) {
      const fit = fitModel(s.decay, s.irf, { components: 1, statistic });
      const { data, model, fitStartIndex: a, fitEndIndex: b } = fit.curves;
      let chi2 = 0;
      let dev = 0;
      for (let i = a; i <= b; i++) {
        const m = model[i] as number;
        const n = data[i];
        chi2 += (n - m) ** 2 / m; // Pearson χ², definition
        dev += n > 0 ? 2 * (m - n + n * Math.log(n / m)) : 2 * m; // Baker & Cousins (1984), REFERENCE-VALUES §11
      }
      expect(fit.chi2).toBeCloseTo(chi2, 6);
      expect(fit.deviance).toBeCloseTo(dev, 6);
      expect(fit.dof).toBe(b - a + 1 - 4); // amplitude, τ, background, shift
      expect(fit.chi2Reduced).toBeCloseTo(chi2 / fit.dof, 10);
      expect(model[a - 1]).toBeNull();
    }
  });

  it('holds a fixed lifetime and reports it as fixed with zero error', () => {
    const fit = fitModel(s.decay, s.irf, { components: 1, fix: { tau1Ns: 2.9, shiftNs: 0 } });
    expect(fit.components[0].tauNs).toBe(2.9);
    expect(fit.components[0].tauErrNs).toBe(0);
    expect(fit.components[0].fixed).toBe(true);
    expect(fit.shiftNs).toBe(0);
    expect(fit.fixed).toEqual({ tau1Ns: 2.9, shiftNs: 0 });
    expect(fit.dof).toBe(fit.curves.fitEndIndex - fit.curves.fitStartIndex + 1 - 2);
  });

  it('warns when a lifetime sits on a bound', () => {
    const fit = fitModel(s.decay, s.irf, { components: 1, bounds: { tau1Ns: { min: 3.5, max: 10 } } });
    expect(fit.components[0].tauNs).toBeCloseTo(3.5, 10);
    expect(fit.warnings).toContain('tau1Ns at lower bound 3.5 ns');
  });

  it('fits only the requested range, given in channels or ns', () => {
    const byCh = fitModel(s.decay, s.irf, { components: 1, rangeChannels: [20, 400] });
    expect([byCh.curves.fitStartIndex, byCh.curves.fitEndIndex]).toEqual([20, 399]);
    const byNs = fitModel(s.decay, s.irf, { components: 1, rangeNs: [1, 20] });
    expect([byNs.curves.fitStartIndex, byNs.curves.fitEndIndex]).toEqual([20, 399]);
    expect(byNs.rangeNs).toEqual([1, 20]);
  });

  it('propagates errors to the average lifetimes: one component gives ⟨τ⟩ = τ with the same error', () => {
    const fit = fitModel(s.decay, s.irf, { components: 1 });
    expect(fit.tauAmpAvgNs).toBeCloseTo(fit.components[0].tauNs, 12);
    expect(fit.tauIntAvgNs).toBeCloseTo(fit.components[0].tauNs, 12);
    expect(fit.tauAmpAvgErrNs).toBeCloseTo(fit.components[0].tauErrNs, 12);
    expect(fit.tauIntAvgErrNs).toBeCloseTo(fit.components[0].tauErrNs, 12);
  });

  it('recovers the known average lifetimes of a two-component decay', () => {
    // REFERENCE-VALUES §7: a = (0.8, 0.2), τ = (0.5, 3) ns → ⟨τ⟩_a = 1.0, ⟨τ⟩_f = 2.0 ns, f = (0.4, 0.6).
    const d = sim({
      components: [
        { tauNs: 0.5, fraction: 0.8 },
        { tauNs: 3, fraction: 0.2 },
      ],
      fractionKind: 'amplitude',
      peakCounts: 5e4,
      channels: 1024,
      binWidthNs: 0.0244,
      irf: { kind: 'gaussian', fwhmNs: 0.12, centerNs: 2 },
      backgroundPerChannel: 1,
      seed: 4,
    });
    const fit = fitModel(d.decay, d.irf, { components: 2 });
    expect(Math.abs(fit.tauAmpAvgNs - 1)).toBeLessThan(3 * fit.tauAmpAvgErrNs);
    expect(Math.abs(fit.tauIntAvgNs - 2)).toBeLessThan(3 * fit.tauIntAvgErrNs);
    expect(Math.abs(fit.components[1].intensityFraction - 0.6)).toBeLessThan(
      3 * fit.components[1].intensityFractionErr,
    );
  });

  it('flags a one-component model of a two-component decay as a poor fit', () => {
    const d = sim({
      components: [
        { tauNs: 0.5, fraction: 0.5 },
        { tauNs: 4, fraction: 0.5 },
      ],
      peakCounts: 2e4,
      channels: 512,
      binWidthNs: 0.05,
      irf: { kind: 'gaussian', fwhmNs: 0.2, centerNs: 2 },
      seed: 8,
    });
    const fit = fitModel(d.decay, d.irf, { components: 1 });
    expect(fit.warnings.some((w) => w.startsWith('chi2Reduced'))).toBe(true);
    expect(fit.durbinWatson).toBeLessThan(1.5);
  });
});

describe('bad input', () => {
  const h = (n: number, dt: number, source = 'decay.csv'): Histogram => ({
    timeNs: Float64Array.from({ length: n }, (_, i) => i * dt),
    counts: Float64Array.from({ length: n }, (_, i) => 100 * Math.exp(-i / 30) + 1),
    binWidthNs: dt,
    metadata: {},
    source,
    warnings: [],
  });

  it('names the file and the problem for an impossible number of components', () => {
    expect(() => fitDecay(h(100, 0.1), null, { components: 5 })).toThrow(InputError);
    expect(() => fitDecay(h(100, 0.1), null, { components: 5 })).toThrow(
      'decay.csv: the number of components must be 1, 2, 3, 4 or auto, got 5',
    );
  });

  it('refuses an IRF with another bin width', () => {
    expect(() => fitDecay(h(100, 0.1), h(100, 0.2, 'irf.csv'), { components: 1 })).toThrow(/irf\.csv/);
  });

  it('refuses a repetition period shorter than the window', () => {
    expect(() => fitDecay(h(100, 0.1), null, { components: 1, periodNs: 5 })).toThrow(
      /repetition period 5 ns is shorter than the 10(\.0+)? ns window/,
    );
  });

  it('refuses to fix an unknown parameter or a lifetime the model does not have', () => {
    expect(() => fitDecay(h(100, 0.1), null, { components: 1, fix: { tau7Ns: 1 } })).toThrow(
      /cannot fix 'tau7Ns'/,
    );
    expect(() => fitDecay(h(100, 0.1), null, { components: 1, fix: { tau2Ns: 1 } })).toThrow(
      /cannot fix tau2Ns: the model has 1 component/,
    );
  });

  it('refuses negative counts, naming the channel', () => {
    const bad = h(100, 0.1);
    bad.counts[17] = -3;
    expect(() => fitDecay(bad, null, { components: 1 })).toThrow(/decay has -3 counts in channel 17/);
  });
});
