import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import { fitDecay } from '../../src/fit/fitDecay.js';
import { alignIrfToDecay } from '../../src/io/checkBinWidthsAgree.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';

// Truth set by this test (invented): τ = 2.5 ns, Gaussian IRF of 0.2 ns FWHM. The decay is recorded on
// 0.05 ns channels, its IRF on 0.025 ns channels (another time-to-amplitude range, say).
const irfSpec = { kind: 'gaussian' as const, fwhmNs: 0.2, centerNs: 2 };
const coarse = simulateTcspc({
  components: [{ tauNs: 2.5, fraction: 1 }],
  peakCounts: 10000,
  channels: 512,
  binWidthNs: 0.05,
  irf: irfSpec,
  irfCounts: 200000,
  seed: 21,
});
const fine = simulateTcspc({
  components: [{ tauNs: 2.5, fraction: 1 }],
  peakCounts: 100,
  channels: 1024,
  binWidthNs: 0.025,
  irf: irfSpec,
  irfCounts: 200000,
  seed: 22,
});

describe('an IRF recorded with another channel width', () => {
  it('is refused by default, the message naming both widths', () => {
    expect(() => fitDecay(coarse.decay, fine.irf, { components: 1 })).toThrow(InputError);
    expect(() => fitDecay(coarse.decay, fine.irf, { components: 1 })).toThrow(/0\.05 ns.*0\.025 ns/);
  });

  it('is rebinned onto the decay channels when asked, conserving its counts', () => {
    const aligned = alignIrfToDecay(coarse.decay, fine.irf, true);
    expect(aligned.binWidthNs).toBeCloseTo(0.05, 12);
    expect(aligned.counts.length).toBe(512);
    const sum = (a: Float64Array) => a.reduce((s, v) => s + v, 0);
    expect(sum(aligned.counts)).toBe(sum(fine.irf.counts)); // whole-number ratio: exact
    expect(alignIrfToDecay(coarse.decay, coarse.irf, true)).toBe(coarse.irf); // same width: untouched
  });

  it('then fits the lifetime within 3 reported σ and says the IRF was resampled', () => {
    const fit = fitDecay(coarse.decay, fine.irf, { components: 1, resampleIrf: true });
    const c = fit.components[0];
    expect(Math.abs(c.tauNs - 2.5)).toBeLessThan(3 * c.tauErrNs);
    expect(fit.warnings.some((w) => /resampled/.test(w))).toBe(true);
  });
});
