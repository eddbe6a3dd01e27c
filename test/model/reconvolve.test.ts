import { describe, expect, it } from 'vitest';
import {
  binMeans,
  exponentialBasis,
  exponentialBasisBinMeans,
  prepareIrf,
  shiftIrf,
  tailBasis,
  fwhm,
  type ChannelBins,
} from '../../src/model/reconvolve.js';
import { gaussianIrfFractions } from '../../src/model/gaussianIrf.js';
import { simulateTcspc } from '../../src/sim/simulateTcspc.js';

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

function gaussIrf(n: number, dt: number, center: number, sigma: number): Float64Array {
  const q = new Float64Array(n);
  gaussianIrfFractions(n, 0, dt, center, sigma, q);
  return q;
}

function basis(irf: Float64Array, dt: number, tau: number, period: number | null): Float64Array {
  const out = new Float64Array(irf.length);
  exponentialBasis(irf, dt, tau, period, out, null, null, null);
  return out;
}

describe('exponentialBasis', () => {
  it('preserves area: Σ basis·Δ equals τ when the window holds the whole decay', () => {
    // ∫(IRF ⊗ e^{−t/τ}) = (∫IRF)·τ with a unit-area IRF (convolution theorem; exact).
    for (const tau of [0.003, 0.05, 1, 7]) {
      const dt = tau < 0.01 ? 0.001 : 0.02;
      const n = Math.ceil((60 * tau) / dt) + 400;
      const out = basis(gaussIrf(n, dt, 100 * dt, 3 * dt), dt, tau, null);
      const area = out.reduce((s, v) => s + v, 0) * dt;
      expect(rel(area, tau)).toBeLessThan(1e-10);
    }
  });

  it('follows e^{−t/τ} after a one-channel IRF, so an amplitude is counts per channel at t = 0', () => {
    // Channel integral of e^{−t/τ} over [t, t+Δ] divided by Δ is e^{−t/τ}(1 − e^{−Δ/τ})/(Δ/τ) (calculus);
    // the IRF's mass sits at the middle of channel 100. Agreement to order (Δ/τ)² = 2.5e-5.
    const dt = 0.01;
    const tau = 2;
    const n = 2000;
    const irf = new Float64Array(n);
    irf[100] = 1;
    const out = basis(irf, dt, tau, null);
    const h = dt / tau;
    for (const i of [150, 500, 1500]) {
      // The IRF's centre is the middle of channel 100; channel i starts (i − 100.5)Δ later, on average.
      const expected = (Math.exp(-((i - 100.5) * dt) / tau) * -Math.expm1(-h)) / h;
      expect(rel(out[i], expected)).toBeLessThan(h * h);
    }
  });

  it('adds earlier pulses exactly as an explicit fold of a long single-pulse decay', () => {
    // Independent check of the geometric sum: compute one pulse on a window 12 periods long and fold it.
    const dt = 0.05;
    const n = 250; // window 12.5 ns
    for (const [tau, periodChannels] of [
      [20, 250],
      [4, 250],
      [3, 300],
    ]) {
      const periods = 40;
      const long = new Float64Array(periodChannels * periods);
      long.set(gaussIrf(n, dt, 2, 0.08));
      const single = basis(long, dt, tau, null);
      const folded = new Float64Array(n);
      for (let i = 0; i < n; i++)
        for (let m = 0; m < periods; m++) folded[i] += single[i + m * periodChannels];
      const periodic = basis(gaussIrf(n, dt, 2, 0.08), dt, tau, periodChannels * dt);
      let worst = 0;
      let peak = 0;
      for (let i = 0; i < n; i++) {
        worst = Math.max(worst, Math.abs(periodic[i] - folded[i]));
        peak = Math.max(peak, folded[i]);
      }
      // What the fold leaves out after 40 periods: e^{−40T/τ} of the tail.
      expect(worst / peak).toBeLessThan(1e-10 + Math.exp((-periods * periodChannels * dt) / tau) * 2);
    }
  });

  it('gives derivatives in ln τ and in the shift that match central differences', () => {
    const dt = 0.02;
    const n = 600;
    const q = gaussIrf(n, dt, 2, 0.07);
    for (const period of [null, 12.5]) {
      const tau = 1.3;
      const val = new Float64Array(n);
      const dTau = new Float64Array(n);
      const shifted = new Float64Array(n);
      const dq = new Float64Array(n);
      const dShift = new Float64Array(n);
      const s0 = 0.37; // channels
      shiftIrf(q, s0, shifted, dq);
      exponentialBasis(shifted, dt, tau, period, val, dTau, dq, dShift);
      const e = 1e-6;
      const up = basis(shifted, dt, tau * Math.exp(e), period);
      const dn = basis(shifted, dt, tau * Math.exp(-e), period);
      const su = new Float64Array(n);
      const sd = new Float64Array(n);
      shiftIrf(q, s0 + e, su, null);
      shiftIrf(q, s0 - e, sd, null);
      const bu = basis(su, dt, tau, period);
      const bd = basis(sd, dt, tau, period);
      let scale = 0;
      for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(val[i]));
      for (let i = 0; i < n; i++) {
        expect(Math.abs(dTau[i] - (up[i] - dn[i]) / (2 * e)) / scale).toBeLessThan(1e-7);
        expect(Math.abs(dShift[i] - (bu[i] - bd[i]) / (2 * e)) / scale).toBeLessThan(1e-6);
      }
    }
  });
});

describe('exponentialBasisBinMeans', () => {
  // Reference: the bin means of the whole single-pulse curve, summed channel by channel.
  it('equals the bin means of the whole curve for short and long lifetimes, full and partial bins', () => {
    const n = 1000;
    const dt = 0.0122;
    // A sharp and a wide IRF; the second reaches the last channel, so there is no geometric tail.
    const sharp = gaussIrf(n, dt, 2, 0.15 / 2.3548);
    const wide = Float64Array.from({ length: n }, (_, i) => (i >= 100 ? 1 / (n - 100) : 0));
    const binsList: ChannelBins[] = [
      { from: 0, to: n, width: 1 },
      { from: 120, to: n, width: 7 },
      { from: 150, to: 900, width: 50 },
      { from: 10, to: 171, width: 20 },
    ];
    const work = new Float64Array(n);
    for (const irf of [sharp, wide])
      for (const tau of [0.005, 0.06, 0.8, 3.5, 1000])
        for (const bins of binsList) {
          const M = Math.ceil((bins.to - bins.from) / bins.width);
          const want = new Float64Array(M);
          binMeans(basis(irf, dt, tau, null), bins, want, 0);
          const got = new Float64Array(M + 3).fill(NaN);
          exponentialBasisBinMeans(irf, dt, tau, bins, got, 3, work);
          const peak = Math.max(...want);
          for (let k = 0; k < M; k++) expect(Math.abs(got[k + 3] - want[k])).toBeLessThan(1e-12 * peak);
        }
  });
});

describe('shiftIrf', () => {
  it('moves the IRF by whole channels exactly and keeps its sum for sub-channel shifts', () => {
    const q = gaussIrf(200, 0.01, 1, 0.05);
    const out = new Float64Array(200);
    shiftIrf(q, 3, out, null);
    for (let i = 3; i < 200; i++) expect(out[i]).toBe(q[i - 3]);
    shiftIrf(q, -2.4, out, null);
    expect(
      rel(
        out.reduce((s, v) => s + v, 0),
        q.reduce((s, v) => s + v, 0),
      ),
    ).toBeLessThan(1e-12);
  });

  it('computes only the channels the IRF reaches and zeroes the rest, as the formula over every channel', () => {
    // Reference: q′ₖ = (1 − f)·qₖ₋ₘ + f·qₖ₋ₘ₋₁ + ½f(1 − f)·(dₖ₋ₘ₋₁ − dₖ₋ₘ) with the limited slopes
    // dⱼ = clamp(½(qⱼ₊₁ − qⱼ₋₁), ±2qⱼ), evaluated at every channel (the module comment's definition).
    const n = 300;
    const q = new Float64Array(n);
    for (let i = 100; i < 140; i++) q[i] = Math.exp(-(((i - 115) / 6) ** 2)) + (i % 3) * 0.01;
    const at = (j: number) => (j >= 0 && j < n ? q[j] : 0);
    const slope = (j: number) => {
      if (j < 0 || j >= n) return 0;
      const d = 0.5 * (at(j + 1) - at(j - 1));
      return Math.max(-2 * q[j], Math.min(2 * q[j], d));
    };
    const out = new Float64Array(n);
    const dOut = new Float64Array(n);
    for (const shift of [0, 0.3, -0.7, 5.5, -99.25, 150.9, 170, -140.5, 400]) {
      out.fill(NaN);
      dOut.fill(NaN);
      shiftIrf(q, shift, out, dOut);
      const m = Math.floor(shift);
      const f = shift - m;
      for (let k = 0; k < n; k++) {
        const a = at(k - m);
        const b = at(k - m - 1);
        const sd = slope(k - m - 1) - slope(k - m);
        expect(out[k]).toBeCloseTo((1 - f) * a + f * b + 0.5 * f * (1 - f) * sd, 15);
        expect(dOut[k]).toBeCloseTo(b - a + 0.5 * (1 - 2 * f) * sd, 15);
      }
    }
  });
});

describe('tailBasis', () => {
  it('is e^{−(t−t₀)/τ} integrated over each channel, divided by Δ, from the start channel on', () => {
    // ∫_{kΔ}^{(k+1)Δ} e^{−t/τ} dt / Δ = τ(e^{−kΔ/τ} − e^{−(k+1)Δ/τ})/Δ (calculus).
    const out = new Float64Array(100);
    tailBasis(100, 10, 0.1, 0.7, null, out, null);
    expect(out[9]).toBe(0);
    for (const i of [10, 11, 50]) {
      const k = i - 10;
      const expected = (0.7 * (Math.exp((-k * 0.1) / 0.7) - Math.exp((-(k + 1) * 0.1) / 0.7))) / 0.1;
      expect(rel(out[i], expected)).toBeLessThan(1e-12);
    }
  });
});

describe('prepareIrf', () => {
  it('removes the baseline before the rising edge, clips at zero and normalises to unit sum', () => {
    const n = 300;
    const counts = new Float64Array(n);
    for (let i = 0; i < n; i++) counts[i] = 5 + 1000 * Math.exp(-0.5 * ((i - 150) / 3) ** 2);
    const p = prepareIrf(counts)!;
    expect(p.baseline).toBeCloseTo(5, 6);
    expect(p.peakIndex).toBe(150);
    // FWHM of a Gaussian = 2√(2 ln 2)σ = 7.064 channels for σ = 3 (definition); linear interpolation is close.
    expect(p.fwhmChannels).toBeGreaterThan(6.9);
    expect(p.fwhmChannels).toBeLessThan(7.2);
    expect(
      rel(
        p.fractions.reduce((s, v) => s + v, 0),
        1,
      ),
    ).toBeLessThan(1e-12);
  });

  it('leaves no positive floor under a Poisson baseline: noise-only channels become 0, the mean arrival time stays true', () => {
    // Truth set by the simulator: its mean IRF histogram, background removed exactly.
    const s = simulateTcspc({
      components: [{ tauNs: 1, fraction: 1 }],
      irf: { kind: 'gaussian', fwhmNs: 0.15, centerNs: 2, tailNs: 0.35, tailFraction: 0.08 },
      irfCounts: 150000,
      irfBackgroundPerChannel: 1,
      seed: 5,
    });
    const n = s.irf.counts.length;
    const meanChannel = (q: ArrayLike<number>) => {
      let a = 0;
      let b = 0;
      for (let i = 0; i < n; i++) {
        a += i * q[i];
        b += q[i];
      }
      return a / b;
    };
    const truth = meanChannel(Float64Array.from(s.expectedIrf, (m) => m - 1));
    const p = prepareIrf(s.irf.counts)!;
    expect(p.baseline).toBeGreaterThan(0.8);
    expect(p.baseline).toBeLessThan(1.2);
    // Far from the pulse (beyond 10 ns after it) every channel is exactly 0.
    const peakNs = 2;
    let farMass = 0;
    for (let i = Math.ceil((peakNs + 10) / s.irf.binWidthNs); i < n; i++) farMass += p.fractions[i];
    expect(farMass).toBe(0);
    // Mean arrival within 2 channels (24 ps) of the truth; the IRF's own counting noise moves it by
    // about σ/√N ≈ 0.3 channels, the edge channels clipped inside the support by less.
    expect(Math.abs(meanChannel(p.fractions) - truth)).toBeLessThan(2);
    // The scheme it replaces, subtracting the baseline and clipping every channel at 0, leaves
    // E[max(n − 1, 0)] = 1/e ≈ 0.37 counts (Poisson, mean 1: exact) in each of ~4000 noise-only channels,
    // ~1 % of the IRF spread over the 50 ns window: its mean arrival moves later by ~17 channels (0.2 ns).
    const clippedEverywhere = Float64Array.from(s.irf.counts, (c) => Math.max(c - p.baseline, 0));
    expect(meanChannel(clippedEverywhere) - truth).toBeGreaterThan(10);
  });

  it('returns null for an IRF with no counts', () => {
    expect(prepareIrf(new Float64Array(50))).toBeNull();
  });

  it('measures a width by linear interpolation on both flanks', () => {
    expect(fwhm([0, 0, 2, 4, 2, 0, 0], 3, 0)).toBeCloseTo(2, 12);
  });
});
