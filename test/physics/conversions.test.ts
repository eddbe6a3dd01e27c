import { describe, expect, it } from 'vitest';
import {
  dipoleFromEinsteinA,
  dipoleFromIntegratedEpsLnNu,
  dipoleFromOscillatorStrength,
  einsteinAFromDipole,
  einsteinAFromOscillatorStrength,
  intrinsicFromApparentFactor,
  mediumEinsteinAFactor,
  oscillatorStrengthFromDipole,
  oscillatorStrengthFromEinsteinA,
  oscillatorStrengthFromIntegratedEps,
} from '../../src/physics/conversions.js';

const rel = (a: number, b: number) => Math.abs(a / b - 1);

// REFERENCE-VALUES §4, worked example (VERIFIED, recomputed from Hilborn's SI relations):
// ν̃ = 20000 cm⁻¹, μ = 5 D → A = 6.27237733e7 s⁻¹ (τ_rad = 15.942918 ns), f = 0.235087727.
describe('Hilborn relations', () => {
  it('give A and f for a 5 D dipole at 20000 cm⁻¹', () => {
    expect(rel(einsteinAFromDipole(20000, 5), 6.27237733e7)).toBeLessThan(1e-8);
    expect(rel(1e9 / einsteinAFromDipole(20000, 5), 15.942918)).toBeLessThan(1e-7);
    expect(rel(oscillatorStrengthFromDipole(20000, 5), 0.235087727)).toBeLessThan(1e-8);
  });
  it('go round trip A → μ → f → A', () => {
    const A = einsteinAFromDipole(20000, 5);
    expect(rel(dipoleFromEinsteinA(20000, A), 5)).toBeLessThan(1e-12);
    const f = oscillatorStrengthFromDipole(20000, 5);
    expect(rel(dipoleFromOscillatorStrength(20000, f), 5)).toBeLessThan(1e-12);
    expect(rel(einsteinAFromOscillatorStrength(20000, f), A)).toBeLessThan(1e-12);
    expect(rel(oscillatorStrengthFromEinsteinA(20000, A), f)).toBeLessThan(1e-12);
  });
  it('scale the emission rate by n (empty cavity) or n((n²+2)/3)² (Lorentz) in a medium', () => {
    // REFERENCE-VALUES §4 (VERIFIED): n = 1.3611 → 8.53733278e7 (empty cavity), 1.40794604e8 (Lorentz).
    const A = einsteinAFromDipole(20000, 5);
    expect(rel(A * mediumEinsteinAFactor(1.3611), 8.53733278e7)).toBeLessThan(1e-8);
    expect(rel(A * mediumEinsteinAFactor(1.3611, 'lorentz'), 1.40794604e8)).toBeLessThan(1e-8);
    expect(intrinsicFromApparentFactor(1.3611)).toBe(1.3611);
    // 9n/(n²+2)² (REFERENCE-VALUES §5, VERIFIED derivation): at n = 1 it is 1.
    expect(intrinsicFromApparentFactor(1, 'lorentz')).toBe(1);
  });
  it('turn a Gaussian band with ε_max = 5e4 and σ = 1000 cm⁻¹ into f = 0.541306', () => {
    // REFERENCE-VALUES §5 (VERIFIED): ∫ε dν̃ = 1.253314137e8 L mol⁻¹ cm⁻², f = 0.541306.
    expect(rel(oscillatorStrengthFromIntegratedEps(1.253314137e8), 0.541306)).toBeLessThan(1e-6);
  });
  it('take the dipole from ∫ε d ln ν̃ consistently with f at the band centre of a narrow band', () => {
    // For a narrow band ∫ε dν̃/ν̃ ≈ ∫ε dν̃/ν̃₀, so μ from either route agrees to the band's relative width².
    const dipole = dipoleFromIntegratedEpsLnNu(1.253314137e8 / 20000);
    const viaF = dipoleFromOscillatorStrength(20000, 0.541306);
    expect(rel(dipole, viaF)).toBeLessThan(2e-3);
  });
  it('return NaN outside the domain instead of throwing', () => {
    expect(einsteinAFromDipole(-1, 5)).toBeNaN();
    expect(dipoleFromEinsteinA(20000, -1)).toBeNaN();
    expect(dipoleFromIntegratedEpsLnNu(-3)).toBeNaN();
    expect(mediumEinsteinAFactor(0)).toBeNaN();
  });
});
