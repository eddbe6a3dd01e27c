/**
 * Einstein A coefficient, absorption oscillator strength and transition dipole moment, converted into one
 * another in the units spectroscopists quote: wavenumber ν̃ in cm⁻¹, dipole μ in debye, A in s⁻¹,
 * ε in L mol⁻¹ cm⁻¹.
 *
 * SI relations (Hilborn, "Einstein coefficients, cross sections, f values, dipole moments, and all
 * that", Am. J. Phys. 50, 982 (1982); revised 2002), with ω = 2πc·ν̃:
 *   A₂₁ = ω³|μ|² / (3π ε0 ħ c³)                         (vacuum)
 *   f₁₂ = (2 m_e ω / 3ħe²)|μ|²                            (g₁ = 1)
 *   A₂₁ = (e²ω² / 2π ε0 m_e c³)·(g₁/g₂)·f₁₂
 * and from the integrated molar absorption coefficient (ε in m² mol⁻¹, ν̃ in m⁻¹ in SI):
 *   f = (4 ε0 m_e c² ln10 / N_A e²)·∫ε dν̃,   |μ|² = (3 ε0 ħ c ln10 / π N_A)·∫ε dν̃/ν̃.
 *
 * Medium: quantities derived from absorption in a medium of index n are "apparent" (uncorrected), the
 * usual convention. Intrinsic values depend on a local-field model: ×n (empty cavity) or ×9n/(n²+2)²
 * (Lorentz local field) for f and μ². An emitter's A in the medium is ×n (empty cavity) or
 * ×n·((n²+2)/3)² (Lorentz) over the vacuum value for the same intrinsic μ.
 */
import {
  AVOGADRO_PER_MOL,
  DEBYE_C_M,
  ELECTRON_MASS_KG,
  ELEMENTARY_CHARGE_C,
  HBAR_J_S,
  LITRES_PER_M3,
  SPEED_OF_LIGHT_CM_PER_S,
  SPEED_OF_LIGHT_M_PER_S,
  VACUUM_PERMITTIVITY_F_PER_M,
} from './constants.js';

const c = SPEED_OF_LIGHT_M_PER_S;
const eps0 = VACUUM_PERMITTIVITY_F_PER_M;
const me = ELECTRON_MASS_KG;
const e = ELEMENTARY_CHARGE_C;
const hbar = HBAR_J_S;
/** m⁻¹ per cm⁻¹. */
const M_PER_CM_INV = 100;
/** (m² mol⁻¹) per (L mol⁻¹ cm⁻¹): 1e-3 m³ per L over 1e-2 m per cm. */
const EPS_SI_PER_EPS = 1 / LITRES_PER_M3 / 1e-2;

/** A[s⁻¹] = K_A·ν̃³[cm⁻¹]·μ²[D²]; Hilborn prints 3.136e-7. */
export const EINSTEIN_A_PER_NU3_MU2 =
  (8 * Math.PI ** 2 * M_PER_CM_INV ** 3 * DEBYE_C_M ** 2) / (3 * eps0 * hbar);

/** f = K_f·ν̃[cm⁻¹]·μ²[D²]; Hilborn prints 4.702e-7. */
export const OSCILLATOR_STRENGTH_PER_NU_MU2 =
  (4 * Math.PI * me * c * M_PER_CM_INV * DEBYE_C_M ** 2) / (3 * hbar * e ** 2);

/** A[s⁻¹] = K·ν̃²[cm⁻¹]·(g₁/g₂)·f; Hilborn prints 0.6670. */
export const EINSTEIN_A_PER_NU2_F = (2 * Math.PI * e ** 2 * M_PER_CM_INV ** 2) / (eps0 * me * c);

/** f = K·∫ε dν̃ (ε in L mol⁻¹ cm⁻¹, ν̃ in cm⁻¹); the textbook 4.319e-9. */
export const OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS =
  ((4 * eps0 * me * c ** 2 * Math.LN10) / (AVOGADRO_PER_MOL * e ** 2)) * EPS_SI_PER_EPS * M_PER_CM_INV;

/** μ²[D²] = K·∫ε d ln ν̃ (ε in L mol⁻¹ cm⁻¹); 9.186e-3. Equals OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS / K_f. */
export const DIPOLE2_PER_INTEGRATED_EPS_LN_NU =
  (((3 * eps0 * hbar * c * Math.LN10) / (Math.PI * AVOGADRO_PER_MOL)) * EPS_SI_PER_EPS) / DEBYE_C_M ** 2;

/**
 * Strickler–Berg prefactor K = 8πc·ln10·1000/N_A (c in cm s⁻¹), so that
 * k_r = K·n²·⟨ν̃_f⁻³⟩⁻¹·(g_l/g_u)·∫ε d ln ν̃. Strickler & Berg (1962) print 2.880e-9; with current
 * constants it is 2.8809e-9. It equals EINSTEIN_A_PER_NU3_MU2 × DIPOLE2_PER_INTEGRATED_EPS_LN_NU.
 */
export const STRICKLER_BERG_K =
  (8 * Math.PI * SPEED_OF_LIGHT_CM_PER_S * Math.LN10 * LITRES_PER_M3) / AVOGADRO_PER_MOL;

/** Einstein A (s⁻¹) in vacuum from wavenumber (cm⁻¹) and transition dipole (D). NaN outside the domain. */
export function einsteinAFromDipole(wavenumberCm: number, dipoleDebye: number): number {
  if (!(wavenumberCm > 0)) return NaN;
  return EINSTEIN_A_PER_NU3_MU2 * wavenumberCm ** 3 * dipoleDebye ** 2;
}

/** Transition dipole (D) from the vacuum Einstein A (s⁻¹) at wavenumber ν̃ (cm⁻¹). */
export function dipoleFromEinsteinA(wavenumberCm: number, einsteinAPerS: number): number {
  if (!(wavenumberCm > 0) || !(einsteinAPerS >= 0)) return NaN;
  return Math.sqrt(einsteinAPerS / (EINSTEIN_A_PER_NU3_MU2 * wavenumberCm ** 3));
}

/** Absorption oscillator strength (g₁ = 1) from wavenumber (cm⁻¹) and transition dipole (D). */
export function oscillatorStrengthFromDipole(wavenumberCm: number, dipoleDebye: number): number {
  if (!(wavenumberCm > 0)) return NaN;
  return OSCILLATOR_STRENGTH_PER_NU_MU2 * wavenumberCm * dipoleDebye ** 2;
}

/** Transition dipole (D) from the absorption oscillator strength at wavenumber ν̃ (cm⁻¹). */
export function dipoleFromOscillatorStrength(wavenumberCm: number, oscillatorStrength: number): number {
  if (!(wavenumberCm > 0) || !(oscillatorStrength >= 0)) return NaN;
  return Math.sqrt(oscillatorStrength / (OSCILLATOR_STRENGTH_PER_NU_MU2 * wavenumberCm));
}

/**
 * Vacuum Einstein A (s⁻¹) of the downward transition from the absorption oscillator strength f₁₂.
 * `degeneracyRatio` is g₁/g₂ (lower over upper). Default 1.
 */
export function einsteinAFromOscillatorStrength(
  wavenumberCm: number,
  oscillatorStrength: number,
  degeneracyRatio = 1,
): number {
  if (!(wavenumberCm > 0) || !(degeneracyRatio > 0)) return NaN;
  return EINSTEIN_A_PER_NU2_F * wavenumberCm ** 2 * degeneracyRatio * oscillatorStrength;
}

/** Absorption oscillator strength f₁₂ from the vacuum Einstein A; inverse of the above. */
export function oscillatorStrengthFromEinsteinA(
  wavenumberCm: number,
  einsteinAPerS: number,
  degeneracyRatio = 1,
): number {
  if (!(wavenumberCm > 0) || !(degeneracyRatio > 0)) return NaN;
  return einsteinAPerS / (EINSTEIN_A_PER_NU2_F * wavenumberCm ** 2 * degeneracyRatio);
}

/** Apparent oscillator strength from ∫ε dν̃ (L mol⁻¹ cm⁻²). */
export function oscillatorStrengthFromIntegratedEps(integratedEpsNu: number): number {
  return OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS * integratedEpsNu;
}

/** Apparent transition dipole (D) from ∫ε d ln ν̃ (L mol⁻¹ cm⁻¹). NaN for a negative integral. */
export function dipoleFromIntegratedEpsLnNu(integratedEpsLnNu: number): number {
  if (!(integratedEpsLnNu >= 0)) return NaN;
  return Math.sqrt(DIPOLE2_PER_INTEGRATED_EPS_LN_NU * integratedEpsLnNu);
}

/** How a medium of index n is modelled around the molecule. */
export type LocalFieldModel = 'emptyCavity' | 'lorentz';

/**
 * Factor by which a medium of index n multiplies the vacuum Einstein A for the same intrinsic dipole:
 * n (empty cavity) or n·((n²+2)/3)² (Lorentz local field).
 */
export function mediumEinsteinAFactor(
  refractiveIndex: number,
  model: LocalFieldModel = 'emptyCavity',
): number {
  if (!(refractiveIndex > 0)) return NaN;
  const n = refractiveIndex;
  return model === 'lorentz' ? n * ((n * n + 2) / 3) ** 2 : n;
}

/**
 * Factor that turns an apparent (uncorrected) oscillator strength or μ² measured in a medium of index n
 * into an intrinsic one: n (empty cavity) or 9n/(n²+2)² (Lorentz local field).
 */
export function intrinsicFromApparentFactor(
  refractiveIndex: number,
  model: LocalFieldModel = 'emptyCavity',
): number {
  if (!(refractiveIndex > 0)) return NaN;
  const n = refractiveIndex;
  return model === 'lorentz' ? (9 * n) / (n * n + 2) ** 2 : n;
}
