import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import {
  absorbedFraction,
  gradientQuantumYield,
  leastSquaresSlope,
  relativeQuantumYield,
} from '../../src/physics/quantumYield.js';
import { qyStandard, refractiveIndexOf } from '../../src/physics/standards.js';
import { Rng } from '../../src/sim/rng.js';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('relativeQuantumYield (single point)', () => {
  // REFERENCE-VALUES §8 (VERIFIED): Φ_R = 0.546, F/F_R = 0.80, A = 0.050, A_R = 0.040, n = 1.3611, n_R = 1.3330
  // → absorbance form 0.364328, absorptance form 0.368473.
  const input = {
    sample: { integratedEmission: 0.8, absorbance: 0.05, refractiveIndex: 1.3611 },
    reference: { qy: 0.546, integratedEmission: 1, absorbance: 0.04, refractiveIndex: 1.333 },
  };
  it('reproduces the worked example with the absorptance 1 − 10^(−A)', () => {
    const r = relativeQuantumYield(input);
    expect(rel(r.qy, 0.368473)).toBeLessThan(1e-6);
    expect(r.form).toBe('absorptance');
    expect(rel(r.refractiveCorrection, (1.3611 / 1.333) ** 2)).toBeLessThan(1e-14);
    expect(r.warnings).toEqual([]);
  });
  it('reproduces the worked example with the linear absorbance approximation', () => {
    expect(rel(relativeQuantumYield({ ...input, form: 'linear' }).qy, 0.364328)).toBeLessThan(1e-6);
  });
  it('propagates the uncertainties of the standard’s yield, the emission and the absorbance', () => {
    // Product of independent factors: relative errors add in quadrature. σ_f/f = ln10·10^(−A)·σ_A/(1 − 10^(−A)).
    const r = relativeQuantumYield({
      ...input,
      reference: { ...input.reference, qyErr: 0.0273, integratedEmissionErr: 0.01 },
      sample: { ...input.sample, absorbanceErr: 0.001 },
    });
    const relF = (Math.LN10 * 10 ** -0.05 * 0.001) / (1 - 10 ** -0.05);
    const expected = r.qy * Math.hypot(0.0273 / 0.546, 0.01, relF);
    expect(rel(r.qyErr, expected)).toBeLessThan(1e-12);
  });
  it('propagates errors as a seeded Monte Carlo of the same inputs does', () => {
    const sigma = { qyR: 0.02, fS: 0.015, fR: 0.015, aS: 0.002, aR: 0.002 };
    const r = relativeQuantumYield({
      sample: { ...input.sample, integratedEmissionErr: sigma.fS * 0.8, absorbanceErr: sigma.aS },
      reference: {
        ...input.reference,
        qyErr: sigma.qyR,
        integratedEmissionErr: sigma.fR,
        absorbanceErr: sigma.aR,
      },
    });
    const rng = new Rng(5);
    const N = 100_000;
    let s = 0;
    let s2 = 0;
    const f = (a: number) => 1 - 10 ** -a;
    for (let i = 0; i < N; i++) {
      const q =
        (0.546 + sigma.qyR * rng.normal()) *
        ((0.8 * (1 + sigma.fS * rng.normal())) / (1 + sigma.fR * rng.normal())) *
        (f(0.04 + sigma.aR * rng.normal()) / f(0.05 + sigma.aS * rng.normal())) *
        (1.3611 / 1.333) ** 2;
      s += q;
      s2 += q * q;
    }
    const sd = Math.sqrt(s2 / N - (s / N) ** 2);
    // First order versus the sampled spread: agree to a few per cent (the ratio of absorptances is mildly non-linear).
    expect(rel(r.qyErr, sd)).toBeLessThan(0.03);
  });
  it('warns above absorbance 0.1 (inner-filter effects; common practice)', () => {
    const r = relativeQuantumYield({ ...input, sample: { ...input.sample, absorbance: 0.15 } });
    expect(r.warnings.join(' ')).toMatch(/sample absorbance 0.15 exceeds 0.1: inner-filter/);
  });
  it('warns when the linear form is used beyond where it holds', () => {
    const r = relativeQuantumYield({
      ...input,
      sample: { ...input.sample, absorbance: 0.08 },
      form: 'linear',
    });
    expect(r.warnings.join(' ')).toMatch(/linear absorbance form/);
  });
  it('refuses a standard yield outside (0, 1], a non-positive absorbance or emission, an implausible index', () => {
    expect(() => relativeQuantumYield({ ...input, reference: { ...input.reference, qy: 1.3 } })).toThrow(
      InputError,
    );
    expect(() => relativeQuantumYield({ ...input, sample: { ...input.sample, absorbance: 0 } })).toThrow(
      /absorbance 0 must be > 0/,
    );
    expect(() =>
      relativeQuantumYield({ ...input, sample: { ...input.sample, integratedEmission: -5 } }),
    ).toThrow(/integrated emission -5 must be > 0/);
    expect(() =>
      relativeQuantumYield({ ...input, sample: { ...input.sample, refractiveIndex: 13.3 } }),
    ).toThrow(/refractive index/);
  });
  it('warns when the result exceeds 1', () => {
    const r = relativeQuantumYield({ ...input, sample: { ...input.sample, integratedEmission: 5 } });
    expect(r.qy).toBeGreaterThan(1);
    expect(r.warnings.join(' ')).toMatch(/exceeds 1/);
  });
});

describe('two standards cross-check each other', () => {
  // Standards (FROM MEMORY, REFERENCE-VALUES §8): fluorescein in 0.1 M NaOH Φ = 0.925 ± 0.015 (Magde et al. 2002),
  // rhodamine 6G in ethanol Φ = 0.950 ± 0.015 (Magde et al. 2002). Refractive indices (FROM MEMORY, §10):
  // water 1.3330 for the dilute base, ethanol 1.3611.
  const fluorescein = qyStandard('fluorescein-naoh');
  const r6g = qyStandard('rhodamine6g-etoh');
  const nWater = refractiveIndexOf(fluorescein.solvent);
  const nEthanol = refractiveIndexOf(r6g.solvent);

  it('measures rhodamine 6G against fluorescein and lands within their stated uncertainties', () => {
    // Worked example, readings invented for the test: fluorescein A = 0.045, F = 1.000e7; rhodamine 6G A = 0.040,
    // F = 8.80e6. Φ = 0.925·0.88·(1 − 10^−0.045)/(1 − 10^−0.040)·(1.3611/1.3330)² = 0.949374 (arithmetic checked
    // in Python; REFERENCE-VALUES §13).
    const r = relativeQuantumYield({
      sample: { integratedEmission: 8.8e6, absorbance: 0.04, refractiveIndex: nEthanol },
      reference: {
        qy: fluorescein.qy,
        qyErr: fluorescein.qyErr,
        integratedEmission: 1e7,
        absorbance: 0.045,
        refractiveIndex: nWater,
      },
    });
    expect(rel(r.qy, 0.949374)).toBeLessThan(1e-6);
    expect(Math.abs(r.qy - r6g.qy)).toBeLessThan(Math.hypot(r.qyErr, r6g.qyErr!));
  });

  it('gives one sample the same yield through either standard (simulation whose truth is set here)', () => {
    // Instrument model (physics, independent of the code under test): detected F = G·Φ·(1 − 10^(−A))/n², the 1/n²
    // from refraction at the cell wall. Sample: Φ = 0.42 in acetonitrile; the standards at their literature yields.
    const G = 3.2e7;
    const detected = (qy: number, a: number, n: number) => (G * qy * (1 - 10 ** -a)) / n ** 2;
    const nMeCN = refractiveIndexOf('MeCN');
    const sample = {
      integratedEmission: detected(0.42, 0.06, nMeCN),
      absorbance: 0.06,
      refractiveIndex: nMeCN,
    };
    const refF = {
      qy: 0.925,
      integratedEmission: detected(0.925, 0.03, nWater),
      absorbance: 0.03,
      refractiveIndex: nWater,
    };
    const refR = {
      qy: 0.95,
      integratedEmission: detected(0.95, 0.09, nEthanol),
      absorbance: 0.09,
      refractiveIndex: nEthanol,
    };
    const viaF = relativeQuantumYield({ sample, reference: refF });
    const viaR = relativeQuantumYield({ sample, reference: refR });
    expect(rel(viaF.qy, 0.42)).toBeLessThan(1e-12);
    expect(rel(viaR.qy, 0.42)).toBeLessThan(1e-12);
    // The linear form, used beyond its range, makes the two standards disagree: the cross-check catches it.
    const linF = relativeQuantumYield({ sample, reference: refF, form: 'linear' });
    const linR = relativeQuantumYield({ sample, reference: refR, form: 'linear' });
    // Leaving out the n² correction would also split them, by (n_water/n_ethanol)² ≈ 4 %.
    const noIndexF = relativeQuantumYield({ sample, reference: { ...refF, refractiveIndex: nMeCN } });
    const noIndexR = relativeQuantumYield({ sample, reference: { ...refR, refractiveIndex: nMeCN } });
    expect(rel(noIndexF.qy, noIndexR.qy)).toBeGreaterThan(0.03);
    expect(rel(linF.qy, linR.qy)).toBeGreaterThan(0.05);
  });
});

describe('leastSquaresSlope', () => {
  // x = 1…5, y = (2.1, 3.9, 6.2, 7.8, 10.1); REFERENCE-VALUES §13 (VERIFIED, numpy 2.4): polyfit(x, y, 1) → slope 1.99 ± 0.0597216, intercept
  // 0.05 ± 0.198074; lstsq through the origin → 2.0036364 ± 0.0222866 (errors from the residual variance).
  const x = [1, 2, 3, 4, 5];
  const y = [2.1, 3.9, 6.2, 7.8, 10.1];
  it('fits through the origin', () => {
    const s = leastSquaresSlope(x, y);
    expect(rel(s.slope, 2.0036364)).toBeLessThan(1e-7);
    expect(rel(s.slopeErr, 0.0222866)).toBeLessThan(1e-5);
    expect(s.intercept).toBe(0);
  });
  it('fits with an intercept', () => {
    const s = leastSquaresSlope(x, y, true);
    expect(rel(s.slope, 1.99)).toBeLessThan(1e-12);
    expect(rel(s.intercept, 0.05)).toBeLessThan(1e-9);
    expect(rel(s.slopeErr, 0.0597216)).toBeLessThan(1e-5);
    expect(rel(s.interceptErr, 0.198074)).toBeLessThan(1e-5);
  });
  it('refuses too few points and constant x', () => {
    expect(() => leastSquaresSlope([1], [2])).toThrow(/at least 2 points/);
    expect(() => leastSquaresSlope([1, 2], [2, 4], true)).toThrow(/at least 3 points/);
    expect(() => leastSquaresSlope([1, 1, 1], [2, 2, 2], true)).toThrow(/do not vary/);
  });
});

describe('gradientQuantumYield', () => {
  const G = 5e6;
  const detected = (qy: number, a: number, n: number) => (G * qy * absorbedFraction(a)) / n ** 2;
  it('recovers the yield set in a noisy dilution series within its error', () => {
    // Simulation truth: sample Φ = 0.30 in ethanol, standard quinine sulfate Φ = 0.546 in dilute acid (water's n),
    // 0.7 % Gaussian noise on each integrated emission (seeded).
    const rng = new Rng(11);
    const series = (qy: number, n: number) =>
      [0.01, 0.02, 0.04, 0.06, 0.08].map((a) => ({
        absorbance: a,
        integratedEmission: detected(qy, a, n) * (1 + 0.007 * rng.normal()),
      }));
    const r = gradientQuantumYield({
      sample: { points: series(0.3, 1.3611), refractiveIndex: 1.3611 },
      reference: { points: series(0.546, 1.333), refractiveIndex: 1.333, qy: 0.546 },
    });
    expect(r.method).toBe('gradient');
    expect(r.qyErr).toBeGreaterThan(0);
    expect(Math.abs(r.qy - 0.3)).toBeLessThan(3 * r.qyErr);
    expect(Math.abs(r.qy - 0.3)).toBeLessThan(0.01);
    expect(r.notes[0]).toMatch(/through the origin/);
  });
  it('is exact on noise-free data, and the linear form is biased there (absorbances up to 0.08)', () => {
    const pts = (qy: number, n: number) =>
      [0.02, 0.04, 0.08].map((a) => ({ absorbance: a, integratedEmission: detected(qy, a, n) }));
    const r = gradientQuantumYield({
      sample: { points: pts(0.3, 1.3611), refractiveIndex: 1.3611 },
      reference: { points: pts(0.546, 1.333), refractiveIndex: 1.333, qy: 0.546 },
    });
    expect(rel(r.qy, 0.3)).toBeLessThan(1e-12);
    expect(r.sampleFit.r2).toBeCloseTo(1, 12);
  });
  it('warns about points above absorbance 0.1 and a non-linear series', () => {
    const pts = [0.02, 0.05, 0.1, 0.2, 0.3].map((a) => ({
      absorbance: a,
      integratedEmission: G * a * (1 - 2 * a),
    }));
    const r = gradientQuantumYield({
      sample: { points: pts, refractiveIndex: 1.3611 },
      reference: { points: pts, refractiveIndex: 1.3611, qy: 0.5 },
      intercept: true,
    });
    expect(r.warnings.join(' ')).toMatch(/have absorbance above 0.1/);
    expect(r.warnings.join(' ')).toMatch(/not linear/);
  });
});
