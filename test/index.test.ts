import { describe, expect, it } from 'vitest';
import * as lumirate from '../src/index.js';

describe('the public barrel', () => {
  it('carries a simulated decay through import, fit and rates using only its exports', () => {
    // Truth set by this test: τ = 3 ns, Φ = 0.6 (invented).
    const sim = lumirate.simulateTcspc({
      components: [{ tauNs: 3, fraction: 1 }],
      peakCounts: 5000,
      channels: 1024,
      binWidthNs: 0.025,
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2 },
      seed: 11,
    });
    const text = lumirate.formatHistogramTable(
      { timeNs: sim.decay.timeNs, series: [{ name: 'counts', counts: sim.decay.counts }] },
      { bin_width_ns: '0.025' },
    );
    const decay = lumirate.parseHistogramText(text, { source: 'decay.csv' });
    const fit = lumirate.fitDecay(decay, sim.irf, { components: 1 });
    const tau = fit.components[0];
    expect(Math.abs(tau.tauNs - 3)).toBeLessThan(4 * tau.tauErrNs);

    const rates = lumirate.ratesFromFit(fit, { qy: 0.6, qyErr: 0.02 });
    // k_r + k_nr = 1/τ (algebra; REFERENCE-VALUES §7).
    expect((rates.krPerS + rates.knrPerS) * tau.tauNs * 1e-9).toBeCloseTo(1, 12);
  });

  it('refuses bad text with its own error class', () => {
    expect(() => lumirate.parseHistogramText('', { source: 'empty.csv' })).toThrow(lumirate.InputError);
  });
});
