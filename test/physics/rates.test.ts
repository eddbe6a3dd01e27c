import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import { computeRates, ratesFromFit } from '../../src/physics/rates.js';
import { Rng } from '../../src/sim/rng.js';
import { fitResultWith } from './fitFixture.js';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('computeRates', () => {
  it('reproduces the worked example Φ = 0.50 ± 0.02, τ = 4.00 ± 0.04 ns', () => {
    // REFERENCE-VALUES §7 (VERIFIED; Monte Carlo with 2e6 draws agrees to 3e-4):
    // k_r = k_nr = 1.2500e8 ± 5.1539e6 s⁻¹, cov = −2.34375e13 s⁻².
    const r = computeRates({ qy: 0.5, qyErr: 0.02, tauNs: 4, tauErrNs: 0.04 });
    expect(rel(r.krPerS, 1.25e8)).toBeLessThan(1e-12);
    expect(rel(r.knrPerS, 1.25e8)).toBeLessThan(1e-12);
    expect(rel(r.krErrPerS, 5.1539e6)).toBeLessThan(1e-4);
    expect(rel(r.knrErrPerS, 5.1539e6)).toBeLessThan(1e-4);
    expect(rel(r.krKnrCovPerS2, -2.34375e13)).toBeLessThan(1e-10);
    expect(r.tau0Ns).toBeCloseTo(8, 12);
    expect(rel(r.tau0ErrNs, 8 * (5.1539e6 / 1.25e8))).toBeLessThan(1e-4);
    expect(r.tauBasis).toBe('single');
  });

  it('turns published standard values into rates (fluorescein in 0.1 M NaOH)', () => {
    // Φ = 0.925 ± 0.015 and τ ≈ 4.1 ns (Magde, Wong & Seybold, Photochem. Photobiol. 75, 327 (2002);
    // FROM MEMORY, REFERENCE-VALUES §8 and §9). The lifetime error 0.05 ns is an assumed lab value.
    // Arithmetic by hand: k_r = 0.925/4.1e-9 = 2.25610e8 s⁻¹, k_nr = 0.075/4.1e-9 = 1.82927e7 s⁻¹,
    // σ(k_nr) = sqrt((0.015/4.1e-9)² + (0.075·0.05e-9/(4.1e-9)²)²) = 3.66533e6 s⁻¹ (REFERENCE-VALUES §13, arithmetic VERIFIED in Python).
    const r = computeRates({ qy: 0.925, qyErr: 0.015, tauNs: 4.1, tauErrNs: 0.05 });
    expect(rel(r.krPerS, 2.2561e8)).toBeLessThan(1e-5);
    expect(rel(r.knrPerS, 1.82927e7)).toBeLessThan(1e-5);
    expect(rel(r.knrErrPerS, 3.66533e6)).toBeLessThan(1e-4);
    // τ₀ = τ/Φ = 4.4324 ns.
    expect(rel(r.tau0Ns, 4.1 / 0.925)).toBeLessThan(1e-12);
  });

  it('turns published standard values into rates (quinine sulfate in 0.5 M H2SO4)', () => {
    // Φ = 0.546 (Melhuish 1961; FROM MEMORY, REFERENCE-VALUES §8), τ ≈ 19 ns (FROM MEMORY, §9, low-moderate
    // confidence): k_r = 0.546/19e-9 = 2.87368e7 s⁻¹, k_nr = 0.454/19e-9 = 2.38947e7 s⁻¹.
    const r = computeRates({ qy: 0.546, tauNs: 19 });
    expect(rel(r.krPerS, 2.87368e7)).toBeLessThan(1e-5);
    expect(rel(r.knrPerS, 2.38947e7)).toBeLessThan(1e-5);
    expect(r.krErrPerS).toBe(0);
    expect(r.notes.join(' ')).toMatch(/No uncertainties/);
  });

  it('satisfies k_r + k_nr = 1/τ for any valid input', () => {
    const rng = new Rng(7);
    for (let i = 0; i < 200; i++) {
      const qy = 1e-3 + (1 - 1e-3) * rng.uniform();
      const tauNs = 0.05 + 50 * rng.uniform();
      const r = computeRates({ qy, tauNs });
      expect(rel(r.krPerS + r.knrPerS, 1e9 / tauNs)).toBeLessThan(1e-13);
    }
  });

  it('agrees with a Monte Carlo of the same inputs', () => {
    // Seeded Monte Carlo: Φ ~ N(0.30, 0.015²), τ ~ N(2.5, 0.05²) ns, independent.
    const qy = 0.3;
    const qyErr = 0.015;
    const tauNs = 2.5;
    const tauErrNs = 0.05;
    const r = computeRates({ qy, qyErr, tauNs, tauErrNs });
    const rng = new Rng(20240611);
    const N = 200_000;
    let sKr = 0;
    let sKnr = 0;
    let sKr2 = 0;
    let sKnr2 = 0;
    let sX = 0;
    for (let i = 0; i < N; i++) {
      const q = qy + qyErr * rng.normal();
      const t = (tauNs + tauErrNs * rng.normal()) * 1e-9;
      const kr = q / t;
      const knr = (1 - q) / t;
      sKr += kr;
      sKnr += knr;
      sKr2 += kr * kr;
      sKnr2 += knr * knr;
      sX += kr * knr;
    }
    const mKr = sKr / N;
    const mKnr = sKnr / N;
    const sdKr = Math.sqrt(sKr2 / N - mKr ** 2);
    const sdKnr = Math.sqrt(sKnr2 / N - mKnr ** 2);
    const cov = sX / N - mKr * mKnr;
    // First-order propagation is exact to O(σ²/τ²) = 4e-4 here; the MC standard error of an SD is 1/sqrt(2N) = 0.16 %.
    expect(rel(r.krErrPerS, sdKr)).toBeLessThan(0.01);
    expect(rel(r.knrErrPerS, sdKnr)).toBeLessThan(0.01);
    expect(rel(r.krKnrCovPerS2, cov)).toBeLessThan(0.03);
    expect(rel(r.krPerS, mKr)).toBeLessThan(2e-3);
  });

  it('refuses Φ outside (0, 1] and τ ≤ 0 with a clear message', () => {
    expect(() => computeRates({ qy: 1.3, tauNs: 4 })).toThrow(InputError);
    expect(() => computeRates({ qy: 1.3, tauNs: 4 })).toThrow(/quantum yield Φ = 1.3 is outside \(0, 1\]/);
    expect(() => computeRates({ qy: 0, tauNs: 4 })).toThrow(/outside \(0, 1\]/);
    expect(() => computeRates({ qy: -0.1, tauNs: 4 })).toThrow(/outside \(0, 1\]/);
    expect(() => computeRates({ qy: 0.5, tauNs: 0 })).toThrow(/lifetime τ = 0 ns must be > 0/);
    expect(() => computeRates({ qy: 0.5, tauNs: -2 })).toThrow(InputError);
    expect(() => computeRates({ qy: 0.5, tauNs: NaN })).toThrow(/finite/);
    expect(() => computeRates({ qy: 0.5, tauNs: 2, tauErrNs: -1 })).toThrow(/≥ 0/);
  });

  it('accepts Φ = 1 and warns that k_nr is then ill-determined', () => {
    const r = computeRates({ qy: 1, tauNs: 4 });
    expect(r.knrPerS).toBe(0);
    expect(r.warnings.join(' ')).toMatch(/close to 1.*k_nr.*ill-determined/);
  });

  it('warns near Φ = 0, where k_r carries the whole relative error of Φ', () => {
    const r = computeRates({ qy: 0.01, qyErr: 0.005, tauNs: 0.3 });
    expect(r.warnings.join(' ')).toMatch(/close to 0/);
    expect(r.warnings.join(' ')).toMatch(/physical limit/);
  });

  it('does not warn for a comfortable mid-range yield', () => {
    expect(computeRates({ qy: 0.5, qyErr: 0.02, tauNs: 4, tauErrNs: 0.04 }).warnings).toEqual([]);
  });
});

describe('ratesFromFit', () => {
  it('uses the single lifetime of a mono-exponential fit', () => {
    const r = ratesFromFit(fitResultWith([{ tauNs: 4, tauErrNs: 0.04, amplitude: 1000 }]), {
      qy: 0.5,
      qyErr: 0.02,
    });
    expect(r.tauBasis).toBe('single');
    expect(rel(r.krErrPerS, 5.1539e6)).toBeLessThan(1e-4); // REFERENCE-VALUES §7
  });

  it('uses the amplitude-weighted average lifetime for a multi-exponential fit and says why', () => {
    // REFERENCE-VALUES §7 (VERIFIED): a = (0.5, 0.5), τ = (1, 4) ns → ⟨τ⟩_a = 2.5 ns, ⟨τ⟩_f = 3.4 ns.
    const fit = fitResultWith(
      [
        { tauNs: 1, tauErrNs: 0.02, amplitude: 500 },
        { tauNs: 4, tauErrNs: 0.05, amplitude: 500 },
      ],
      0.03,
    );
    expect(fit.tauIntAvgNs).toBeCloseTo(3.4, 12);
    const r = ratesFromFit(fit, { qy: 0.4, qyErr: 0.02 });
    expect(r.tauBasis).toBe('amplitudeWeighted');
    expect(r.tauNs).toBeCloseTo(2.5, 12);
    expect(r.tauErrNs).toBe(0.03);
    expect(rel(r.krPerS, 0.4 / 2.5e-9)).toBeLessThan(1e-12);
    expect(r.notes.join(' ')).toMatch(/amplitude-weighted average.*steady-state/);
    expect(r.perComponent).toBeUndefined();
  });

  it('gives per-component k_nr when a common k_r is asserted', () => {
    // a = (0.8, 0.2), τ = (0.5, 3) ns → ⟨τ⟩_a = 1.0 ns (REFERENCE-VALUES §7, VERIFIED). Φ = 0.1 →
    // k_r = 1e8 s⁻¹; k_nr,1 = 2e9 − 1e8 = 1.9e9, k_nr,2 = 3.3333e8 − 1e8 = 2.3333e8 s⁻¹.
    const fit = fitResultWith([
      { tauNs: 0.5, tauErrNs: 0.01, amplitude: 800 },
      { tauNs: 3, tauErrNs: 0.03, amplitude: 200 },
    ]);
    const r = ratesFromFit(fit, { qy: 0.1 }, { commonKr: true });
    expect(r.tauBasis).toBe('perComponent');
    expect(rel(r.krPerS, 1e8)).toBeLessThan(1e-12);
    expect(r.perComponent).toHaveLength(2);
    expect(rel(r.perComponent![0].knrPerS, 1.9e9)).toBeLessThan(1e-12);
    expect(rel(r.perComponent![1].knrPerS, 1e9 / 3 - 1e8)).toBeLessThan(1e-12);
    // σ(k_nr,1) = k_1·σ_τ1/τ_1 = 2e9·0.02 = 4e7 s⁻¹ (k_r carries no error here).
    expect(rel(r.perComponent![0].knrErrPerS, 4e7)).toBeLessThan(1e-12);
  });

  it('warns when a component outlives the common radiative lifetime', () => {
    const fit = fitResultWith([
      { tauNs: 0.5, tauErrNs: 0.01, amplitude: 900 },
      { tauNs: 20, tauErrNs: 0.5, amplitude: 100 },
    ]);
    // ⟨τ⟩_a = 2.45 ns, Φ = 0.9 → τ₀ = 2.72 ns < 20 ns.
    const r = ratesFromFit(fit, { qy: 0.9 }, { commonKr: true });
    expect(r.perComponent![1].knrPerS).toBeLessThan(0);
    expect(r.warnings.join(' ')).toMatch(/Component 2 .* longer than the radiative lifetime/);
  });

  it('refuses a fit without components', () => {
    expect(() => ratesFromFit(fitResultWith([]), { qy: 0.5 })).toThrow(/no decay components/);
  });
});
