import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.js';
import type { Spectrum } from '../../src/io/types.js';
import { comparisonNote, stricklerBerg } from '../../src/physics/stricklerBerg.js';
import { Rng } from '../../src/sim/rng.js';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

// REFERENCE-VALUES §6, worked example (a) (VERIFIED with scipy quad, epsrel 1e-13): Gaussian bands in ν̃,
// ε(ν̃) = 5e4·exp(−(ν̃−20000)²/(2·1000²)), F(ν̃) = exp(−(ν̃−18500)²/(2·900²)), n = 1.3611, g_l/g_u = 1.
const eps = (nu: number) => 5e4 * Math.exp(-((nu - 20000) ** 2) / (2 * 1000 ** 2));
const photonsPerCm = (nu: number) => Math.exp(-((nu - 18500) ** 2) / (2 * 900 ** 2));
const INT_EPS_LN_NU = 6282.3561065; // L mol⁻¹ cm⁻¹
const INV_CUBE_MEAN = 6.2413875063e12; // cm⁻³
const KR_SB = 2.09271e8; // s⁻¹ (τ_rad = 4.778492 ns)
const KR_SB_VACUUM = 1.129611e8; // s⁻¹, n = 1
// REFERENCE-VALUES §5 (VERIFIED): the same ε band gives ∫ε dν̃ = 1.253314137e8 and f = 0.541306.
const INT_EPS_NU = 1.253314137e8;
const F_OSC = 0.541306;

function grid(a: number, b: number, step: number): Float64Array {
  const n = Math.round((b - a) / step) + 1;
  return Float64Array.from({ length: n }, (_, i) => a + i * step);
}

function spectrum(
  kind: Spectrum['kind'],
  axis: Spectrum['axis'],
  x: Float64Array,
  y: Float64Array,
  extra: Partial<Spectrum> = {},
): Spectrum {
  return { kind, axis, x, y, metadata: {}, source: `${kind}.csv`, warnings: [], ...extra };
}

/** Example (a) on a wavenumber grid. */
function wavenumberPair(step = 10) {
  const nu = grid(10000, 30000, step);
  return {
    absorption: spectrum('absorption', 'cm-1', nu, nu.map(eps)),
    emission: spectrum('emission', 'cm-1', nu, nu.map(photonsPerCm)),
  };
}

/** Example (b): the same bands on a wavelength grid, emission as photons per nm, F_λ = F(10⁷/λ)·10⁷/λ². */
function wavelengthPair(step = 1) {
  const lam = grid(300, 1200, step);
  return {
    absorption: spectrum(
      'absorption',
      'nm',
      lam,
      lam.map((l) => eps(1e7 / l)),
    ),
    emission: spectrum(
      'emission',
      'nm',
      lam,
      lam.map((l) => (photonsPerCm(1e7 / l) * 1e7) / l ** 2),
    ),
  };
}

describe('stricklerBerg on analytic Gaussian bands', () => {
  it('matches worked example (a) on a wavenumber grid to 0.1 %', () => {
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611 });
    expect(rel(r.krSbPerS, KR_SB)).toBeLessThan(1e-3);
    expect(rel(r.tau0SbNs, 4.778492)).toBeLessThan(1e-3);
    expect(rel(r.integratedEpsLnNu, INT_EPS_LN_NU)).toBeLessThan(1e-5);
    expect(rel(r.emissionInvCubeMeanCm3, INV_CUBE_MEAN)).toBeLessThan(1e-5);
    expect(rel(r.emissionMeanWavenumberCm, 18411.6926)).toBeLessThan(1e-5);
    expect(rel(r.integratedEpsNu, INT_EPS_NU)).toBeLessThan(1e-5);
    expect(rel(r.oscillatorStrength, F_OSC)).toBeLessThan(1e-5);
    expect(r.emissionAssumption).toMatch(/photon counts per cm⁻¹/);
    expect(r.warnings).toEqual([]);
  });

  it('matches the vacuum value (n = 1) and scales as n²', () => {
    const r1 = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1 });
    expect(rel(r1.krSbPerS, KR_SB_VACUUM)).toBeLessThan(1e-3);
    const r2 = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611 });
    expect(rel(r2.krSbPerS / r1.krSbPerS, 1.3611 ** 2)).toBeLessThan(1e-12);
    // Einstein A in the medium is n² × vacuum and equals k_r^SB (see the module's note).
    expect(rel(r2.einsteinAMediumPerS, r2.krSbPerS)).toBeLessThan(1e-12);
    expect(rel(r2.einsteinAVacuumPerS, r1.krSbPerS)).toBeLessThan(1e-12);
  });

  it('matches worked example (b) on a 1 nm wavelength grid, so the λ² Jacobian is applied', () => {
    // Leaving the Jacobian out would give +1.444 % (REFERENCE-VALUES §6, VERIFIED): a 1e-3 tolerance catches it.
    const r = stricklerBerg({ ...wavelengthPair(), refractiveIndex: 1.3611 });
    expect(rel(r.krSbPerS, KR_SB)).toBeLessThan(1e-3);
    expect(rel(r.emissionInvCubeMeanCm3, INV_CUBE_MEAN)).toBeLessThan(1e-4);
    expect(rel(r.integratedEpsLnNu, INT_EPS_LN_NU)).toBeLessThan(1e-4);
    expect(r.emissionAssumption).toMatch(/photon counts per nm.*λ² Jacobian/);
  });

  it('treats an energy spectrum per nm with the extra factor λ', () => {
    // Energy per nm ∝ photons per nm / λ. Read as photon counts it would be off by +0.722 % (REFERENCE-VALUES §6).
    const { absorption, emission } = wavelengthPair();
    const energy = spectrum(
      'emission',
      'nm',
      emission.x,
      emission.y.map((v, i) => v / emission.x[i]),
      {
        emissionOrdinate: 'energyPerAxisUnit',
      },
    );
    const r = stricklerBerg({ absorption, emission: energy, refractiveIndex: 1.3611 });
    expect(rel(r.krSbPerS, KR_SB)).toBeLessThan(1e-3);
    expect(r.emissionAssumption).toMatch(/energy per nm/);
    const wrong = stricklerBerg({
      absorption,
      emission: { ...energy, emissionOrdinate: 'photonsPerAxisUnit' },
      refractiveIndex: 1.3611,
    });
    expect(rel(wrong.krSbPerS, KR_SB * 1.00722)).toBeLessThan(5e-4);
  });

  it('treats an energy spectrum per cm⁻¹ by dividing by ν̃', () => {
    const { absorption, emission } = wavenumberPair();
    const energy = spectrum(
      'emission',
      'cm-1',
      emission.x,
      emission.y.map((v, i) => v * emission.x[i]),
      {
        emissionOrdinate: 'energyPerAxisUnit',
      },
    );
    expect(
      rel(stricklerBerg({ absorption, emission: energy, refractiveIndex: 1.3611 }).krSbPerS, KR_SB),
    ).toBeLessThan(1e-3);
  });

  it('does not depend on the emission spectrum’s scale', () => {
    const { absorption, emission } = wavelengthPair();
    const a = stricklerBerg({ absorption, emission, refractiveIndex: 1.3611 });
    const b = stricklerBerg({
      absorption,
      emission: { ...emission, y: emission.y.map((v) => v * 3.7e5) },
      refractiveIndex: 1.3611,
    });
    expect(rel(b.krSbPerS, a.krSbPerS)).toBeLessThan(1e-12);
  });

  it('changes by less than 0.5 % when the grid step is halved', () => {
    const coarse = stricklerBerg({ ...wavelengthPair(2), refractiveIndex: 1.3611 });
    const fine = stricklerBerg({ ...wavelengthPair(1), refractiveIndex: 1.3611 });
    expect(rel(coarse.krSbPerS, fine.krSbPerS)).toBeLessThan(5e-3);
    const coarseNu = stricklerBerg({ ...wavenumberPair(100), refractiveIndex: 1.3611 });
    const fineNu = stricklerBerg({ ...wavenumberPair(50), refractiveIndex: 1.3611 });
    expect(rel(coarseNu.krSbPerS, fineNu.krSbPerS)).toBeLessThan(5e-3);
  });

  it('scales with the degeneracy ratio g_l/g_u', () => {
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611, degeneracyRatio: 0.5 });
    expect(rel(r.krSbPerS, KR_SB / 2)).toBeLessThan(1e-3);
    expect(r.degeneracyRatio).toBe(0.5);
  });

  it('reports the dipole from μ² = 9.186e-3·∫ε d ln ν̃', () => {
    // μ = sqrt(9.18593077e-3 · 6282.3561065) = 7.59667 D (REFERENCE-VALUES §4 factor; arithmetic checked in Python).
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611 });
    expect(rel(r.dipoleDebye, Math.sqrt(9.18593077e-3 * INT_EPS_LN_NU))).toBeLessThan(1e-5);
  });
});

/** S1 at 20000 cm⁻¹ and a stronger S2 at 28000 cm⁻¹: the band must stop at the minimum between them. */
function twoBandAbsorption(noise = 0, seed = 1): Spectrum {
  const s2 = (nu: number) => 8e4 * Math.exp(-((nu - 28000) ** 2) / (2 * 1500 ** 2));
  const lam = grid(250, 800, 1);
  const rng = new Rng(seed);
  return spectrum(
    'absorption',
    'nm',
    lam,
    lam.map((l) => eps(1e7 / l) + s2(1e7 / l) + noise * rng.normal()),
  );
}

function trueValleyCm(): number {
  let best = 0;
  let bestV = Infinity;
  for (let nu = 20000; nu <= 28000; nu += 1) {
    const v = eps(nu) + 8e4 * Math.exp(-((nu - 28000) ** 2) / (2 * 1500 ** 2));
    if (v < bestV) {
      bestV = v;
      best = nu;
    }
  }
  return best;
}

describe('automatic band choice', () => {
  const emission = wavelengthPair().emission;

  it('stops at the minimum between the lowest band and the next one, and reports it', () => {
    const r = stricklerBerg({ absorption: twoBandAbsorption(), emission, refractiveIndex: 1.3611 });
    const valley = trueValleyCm(); // found by a dense scan of the analytic sum (simulation truth)
    expect(Math.abs(r.bandCm[1] - valley)).toBeLessThan(100);
    expect(r.bandChoice).toMatch(/first clear minimum/);
    // The S1 integral alone is 6282.36; the overlap of the two bands adds and removes a few per cent.
    expect(rel(r.integratedEpsLnNu, INT_EPS_LN_NU)).toBeLessThan(0.03);
  });

  it('finds the same minimum in noisy data (1 % of the peak, seeded)', () => {
    const valley = trueValleyCm();
    for (const seed of [1, 2, 3]) {
      const r = stricklerBerg({
        absorption: twoBandAbsorption(500, seed),
        emission,
        refractiveIndex: 1.3611,
      });
      expect(Math.abs(r.bandCm[1] - valley)).toBeLessThan(300);
    }
  });

  it('keeps a vibronic progression inside the band and stops at the deep minimum before the next transition', () => {
    // Simulation truth: S1 = 0–0 (20000 cm⁻¹) + 0–1 (21400 cm⁻¹) Gaussians, σ = 500 cm⁻¹, with a dip to ≈ 60 % between
    // them; S2 at 30000 cm⁻¹. The band must reach past the vibronic dip, to the minimum near 26000 cm⁻¹.
    const g = (nu: number, c: number, s: number, h: number) => h * Math.exp(-((nu - c) ** 2) / (2 * s * s));
    const f = (nu: number) => g(nu, 20000, 500, 3e4) + g(nu, 21400, 500, 2e4) + g(nu, 30000, 1500, 6e4);
    const nu = grid(12000, 36000, 20);
    const r = stricklerBerg({
      absorption: spectrum('absorption', 'cm-1', nu, nu.map(f)),
      emission,
      refractiveIndex: 1.3611,
    });
    expect(r.bandCm[1]).toBeGreaterThan(23000);
    expect(r.bandCm[1]).toBeLessThan(27000);
    expect(r.bandChoice).toMatch(/first clear minimum/);
  });

  it('warns when the band runs through a shallow dip into a stronger band', () => {
    // Simulation truth: two strongly overlapping bands; the dip between them (≈ 21500 cm⁻¹) stays at ≈ 60 % of the
    // first maximum, so it is not a clear minimum; the second band is stronger.
    const g = (nu: number, c: number, s: number, h: number) => h * Math.exp(-((nu - c) ** 2) / (2 * s * s));
    const f = (nu: number) => g(nu, 20000, 1000, 5e4) + g(nu, 23500, 1200, 6e4);
    const nu = grid(12000, 30000, 20);
    const r = stricklerBerg({
      absorption: spectrum('absorption', 'cm-1', nu, nu.map(f)),
      emission,
      refractiveIndex: 1.3611,
    });
    expect(r.warnings.join(' ')).toMatch(/shallow minimum at 21[4-7]\d\d cm⁻¹/);
    // When the data stop before the second band falls off, the shallow minimum is the only candidate.
    const cut = grid(12000, 23500, 20);
    const r2 = stricklerBerg({
      absorption: spectrum('absorption', 'cm-1', cut, cut.map(f)),
      emission,
      refractiveIndex: 1.3611,
    });
    expect(r2.bandCm[1]).toBeGreaterThan(20500);
    expect(r2.bandCm[1]).toBeLessThan(22500);
    expect(r2.warnings.join(' ')).toMatch(/No clear minimum.*shallow minimum/);
  });

  it('uses limits given by the caller and says so', () => {
    const r = stricklerBerg({ ...wavelengthPair(), refractiveIndex: 1.3611, bandCm: [10000, 24500] });
    expect(r.bandCm).toEqual([10000, 24500]);
    expect(r.bandChoice).toMatch(/^given/);
    // 4.5σ above the centre the Gaussian's remaining share of ∫ε d ln ν̃ is < 1e-5.
    expect(rel(r.krSbPerS, KR_SB)).toBeLessThan(1e-3);
  });

  it('warns when the given limits reach beyond the data and integrates what exists', () => {
    const r = stricklerBerg({ ...wavelengthPair(), refractiveIndex: 1.3611, bandCm: [5000, 24500] });
    expect(r.bandCm[0]).toBeCloseTo(1e7 / 1200, 6);
    expect(r.warnings.join(' ')).toMatch(/beyond the absorption data/);
  });
});

describe('comparison with a measured yield and lifetime', () => {
  it('predicts Φ^SB = k_r^SB·τ and the ratio of measured to predicted k_r', () => {
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611, qy: 0.9, tauNs: 4.5 });
    expect(rel(r.qySb!, KR_SB * 4.5e-9)).toBeLessThan(1e-3);
    expect(rel(r.krRatio!, 0.9 / 4.5e-9 / KR_SB)).toBeLessThan(1e-3);
    expect(r.note).toMatch(/agree within 30 %/);
  });

  it('carries the uncertainties of the measured Φ and τ into the ratio and the predicted yield', () => {
    const r = stricklerBerg({
      ...wavenumberPair(),
      refractiveIndex: 1.3611,
      qy: 0.9,
      qyErr: 0.02,
      tauNs: 4.5,
      tauErrNs: 0.05,
    });
    // Ratio ∝ Φ/τ: relative errors in quadrature; Φ^SB ∝ τ.
    expect(rel(r.krRatioErr!, r.krRatio! * Math.hypot(0.02 / 0.9, 0.05 / 4.5))).toBeLessThan(1e-12);
    expect(rel(r.qySbErr!, r.qySb! * (0.05 / 4.5))).toBeLessThan(1e-12);
    expect(r.notes!.join(' ')).toMatch(/uncertainty of k_r\^SB itself .* is not estimated/);
    expect(() =>
      stricklerBerg({ ...wavenumberPair(50), refractiveIndex: 1.36, qy: 0.9, qyErr: -1, tauNs: 4 }),
    ).toThrow(/≥ 0/);
  });

  it('explains a large mismatch with hedged, plain language', () => {
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611, qy: 0.05, tauNs: 4.5 });
    expect(r.krRatio!).toBeLessThan(0.1);
    expect(r.note).toMatch(/smaller than predicted/);
    expect(r.note).toMatch(/another, less allowed state/);
    expect(r.note).toMatch(/cannot tell which/);
    expect(comparisonNote(3)).toMatch(/larger than predicted.*weakly allowed/);
  });

  it('gives an efficiency estimate with its assumptions when only τ is known', () => {
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611, tauNs: 3 });
    expect(r.krRatio).toBeUndefined();
    expect(rel(r.qySb!, KR_SB * 3e-9)).toBeLessThan(1e-3);
    expect(r.note).toMatch(/estimates the quantum efficiency, assuming/);
  });

  it('warns when the predicted yield exceeds 1', () => {
    const r = stricklerBerg({ ...wavenumberPair(), refractiveIndex: 1.3611, tauNs: 10 });
    expect(r.warnings.join(' ')).toMatch(/exceeds 1/);
  });
});

describe('bad input', () => {
  it('refuses an absorption spectrum with negative ε over the band, naming where', () => {
    const { absorption, emission } = wavelengthPair();
    const y = absorption.y.slice();
    for (let i = 0; i < y.length; i++) if (absorption.x[i] >= 470 && absorption.x[i] <= 480) y[i] = -8000;
    const bad = { ...absorption, y };
    expect(() =>
      stricklerBerg({ absorption: bad, emission, refractiveIndex: 1.3611, bandCm: [15000, 25000] }),
    ).toThrow(InputError);
    expect(() =>
      stricklerBerg({ absorption: bad, emission, refractiveIndex: 1.3611, bandCm: [15000, 25000] }),
    ).toThrow(
      /absorption\.csv: ε = -8000 L mol⁻¹ cm⁻¹ at 4[78]\d\.0 nm inside the integration band is negative/,
    );
  });

  it('refuses an emission spectrum outside the absorption range', () => {
    const { absorption } = wavelengthPair();
    const farIr = grid(1500, 2000, 1);
    const emission = spectrum(
      'emission',
      'nm',
      farIr,
      farIr.map((l) => Math.exp(-(((l - 1700) / 50) ** 2))),
    );
    expect(() => stricklerBerg({ absorption, emission, refractiveIndex: 1.3611 })).toThrow(
      /emission\.csv: the emission spectrum .* lies entirely outside the absorption spectrum's range/,
    );
  });

  it('refuses emission bluer than the whole absorption band (swapped files)', () => {
    const { absorption, emission } = wavenumberPair();
    const swapped = spectrum(
      'emission',
      'cm-1',
      emission.x,
      emission.x.map((nu) => photonsPerCm(nu - 10000)),
    );
    expect(() =>
      stricklerBerg({ absorption, emission: swapped, refractiveIndex: 1.3611, bandCm: [10000, 24000] }),
    ).toThrow(/higher energy than the whole absorption band.*swapped/);
  });

  it('refuses an impossible yield, refractive index or degeneracy ratio', () => {
    const pair = wavenumberPair(50);
    expect(() => stricklerBerg({ ...pair, refractiveIndex: 1.3611, qy: 1.3, tauNs: 4 })).toThrow(
      /Φ = 1.3 is outside/,
    );
    expect(() => stricklerBerg({ ...pair, refractiveIndex: 0.5 })).toThrow(/refractive index 0.5/);
    expect(() => stricklerBerg({ ...pair, refractiveIndex: 1.33, degeneracyRatio: 0 })).toThrow(
      /degeneracy ratio/,
    );
  });

  it('refuses a spectrum whose axis is not ascending', () => {
    const { absorption, emission } = wavenumberPair(50);
    const x = absorption.x.slice();
    x[5] = x[4];
    expect(() =>
      stricklerBerg({ absorption: { ...absorption, x }, emission, refractiveIndex: 1.33 }),
    ).toThrow(/not strictly ascending at point 6/);
  });

  it('warns when the emission spectrum is cut off', () => {
    const { absorption } = wavenumberPair(50);
    const nu = grid(17500, 21000, 10);
    const emission = spectrum('emission', 'cm-1', nu, nu.map(photonsPerCm));
    expect(stricklerBerg({ absorption, emission, refractiveIndex: 1.33 }).warnings.join(' ')).toMatch(
      /cut off/,
    );
  });

  it('warns that the relation fails for a weakly allowed band', () => {
    const nu = grid(10000, 30000, 10);
    const absorption = spectrum(
      'absorption',
      'cm-1',
      nu,
      nu.map((v) => eps(v) / 500),
    );
    const emission = spectrum('emission', 'cm-1', nu, nu.map(photonsPerCm));
    expect(stricklerBerg({ absorption, emission, refractiveIndex: 1.33 }).warnings.join(' ')).toMatch(
      /weakly allowed/,
    );
  });
});

describe('invariants over random Gaussian band pairs (fast-check)', () => {
  it('gives the same k_r from wavenumber and wavelength grids, and scales linearly with ε', async () => {
    const fc = await import('fast-check');
    fc.assert(
      fc.property(
        fc.double({ min: 16000, max: 26000, noNaN: true }),
        fc.double({ min: 600, max: 1500, noNaN: true }),
        fc.double({ min: 500, max: 4000, noNaN: true }),
        fc.double({ min: 0.5, max: 1.2, noNaN: true }),
        (centreCm, widthCm, stokesCm, widthRatio) => {
          const e = (nu: number) => 2e4 * Math.exp(-((nu - centreCm) ** 2) / (2 * widthCm ** 2));
          const fw = widthCm * widthRatio;
          const F = (nu: number) => Math.exp(-((nu - centreCm + stokesCm) ** 2) / (2 * fw ** 2));
          const nu = grid(5000, 40000, 10);
          const lam = grid(250, 2000, 0.5);
          const onNu = stricklerBerg({
            absorption: spectrum('absorption', 'cm-1', nu, nu.map(e)),
            emission: spectrum('emission', 'cm-1', nu, nu.map(F)),
            refractiveIndex: 1.4,
            bandCm: [5000, 40000],
          });
          const onLam = stricklerBerg({
            absorption: spectrum(
              'absorption',
              'nm',
              lam,
              lam.map((l) => e(1e7 / l)),
            ),
            emission: spectrum(
              'emission',
              'nm',
              lam,
              lam.map((l) => (F(1e7 / l) * 1e7) / l ** 2),
            ),
            refractiveIndex: 1.4,
            bandCm: [5000, 40000],
          });
          expect(rel(onLam.krSbPerS, onNu.krSbPerS)).toBeLessThan(1e-3);
          const doubled = stricklerBerg({
            absorption: spectrum(
              'absorption',
              'cm-1',
              nu,
              nu.map((v) => 2 * e(v)),
            ),
            emission: spectrum('emission', 'cm-1', nu, nu.map(F)),
            refractiveIndex: 1.4,
            bandCm: [5000, 40000],
          });
          expect(rel(doubled.krSbPerS, 2 * onNu.krSbPerS)).toBeLessThan(1e-12);
        },
      ),
      { numRuns: 15, seed: 42 },
    );
  });
});
