import { describe, expect, it } from 'vitest';
import * as K from '../../src/physics/constants.js';
import {
  DIPOLE2_PER_INTEGRATED_EPS_LN_NU,
  EINSTEIN_A_PER_NU2_F,
  EINSTEIN_A_PER_NU3_MU2,
  OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS,
  OSCILLATOR_STRENGTH_PER_NU_MU2,
  STRICKLER_BERG_K,
} from '../../src/physics/conversions.js';

// CODATA 2018 / SI 2019 values typed in here independently of src/physics/constants.ts
// (REFERENCE-VALUES §3: c, h, e, N_A, k_B exact, VERIFIED against the CODATA table;
// ε0 = 8.8541878128e-12 and m_e = 9.1093837015e-31 are the CODATA 2018 values, FROM MEMORY,
// consistent with α(2018) and R∞ to 1e-11).
const c = 299792458;
const h = 6.62607015e-34;
const hbar = h / (2 * Math.PI);
const e = 1.602176634e-19;
const NA = 6.02214076e23;
const kB = 1.380649e-23;
const eps0 = 8.8541878128e-12;
const me = 9.1093837015e-31;
const debye = 3.33564095198e-30; // 1 D = 1e-21/c C m (REFERENCE-VALUES §3, VERIFIED)

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe('constants', () => {
  it('hold the exact SI 2019 values and the CODATA 2018 measured ones', () => {
    expect(K.SPEED_OF_LIGHT_M_PER_S).toBe(c);
    expect(K.PLANCK_J_S).toBe(h);
    expect(K.ELEMENTARY_CHARGE_C).toBe(e);
    expect(K.AVOGADRO_PER_MOL).toBe(NA);
    expect(K.BOLTZMANN_J_PER_K).toBe(kB);
    expect(K.VACUUM_PERMITTIVITY_F_PER_M).toBe(eps0);
    expect(K.ELECTRON_MASS_KG).toBe(me);
  });
  it('derive ħ, R and the debye as CODATA lists them', () => {
    // REFERENCE-VALUES §3 (VERIFIED): ħ = 1.05457181765e-34 J s, R = 8.31446261815 J mol⁻¹ K⁻¹.
    expect(rel(K.HBAR_J_S, 1.05457181765e-34)).toBeLessThan(1e-11);
    expect(rel(K.GAS_CONSTANT_J_PER_MOL_K, 8.31446261815)).toBeLessThan(1e-11);
    expect(rel(K.DEBYE_C_M, debye)).toBeLessThan(1e-11);
  });
});

describe('prefactors recomputed from CODATA constants', () => {
  it('Strickler–Berg K = 8πc·ln10·1000/N_A is 2.8809e-9 (the 1962 paper prints 2.880e-9)', () => {
    const Ktest = (8 * Math.PI * c * 100 * Math.log(10) * 1000) / NA;
    expect(rel(STRICKLER_BERG_K, Ktest)).toBeLessThan(1e-12);
    // REFERENCE-VALUES §6, VERIFIED: 2.88088120e-9.
    expect(rel(STRICKLER_BERG_K, 2.8808812e-9)).toBeLessThan(1e-8);
    // Strickler & Berg, J. Chem. Phys. 37, 814 (1962), printed value: agrees to the 0.03 % the constants moved.
    expect(rel(STRICKLER_BERG_K, 2.88e-9)).toBeLessThan(4e-4);
  });
  it('the oscillator-strength factor f = k·∫ε dν̃ is 4.319e-9', () => {
    // SI form 4ε0 m_e c² ln10/(N_A e²), ×10 for ε in M⁻¹ cm⁻¹ and ν̃ in cm⁻¹ (REFERENCE-VALUES §5, VERIFIED).
    const k = ((4 * eps0 * me * c * c * Math.log(10)) / (NA * e * e)) * 10;
    expect(rel(OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS, k)).toBeLessThan(1e-12);
    expect(rel(OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS, 4.31899918e-9)).toBeLessThan(1e-8);
    // Textbook value (e.g. Lakowicz 2006; FROM MEMORY): 4.319e-9.
    expect(rel(OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS, 4.319e-9)).toBeLessThan(1e-4);
  });
  it("Hilborn's A = 3.136e-7·ν̃³μ², f = 4.702e-7·ν̃μ² and A = 0.6670·ν̃²f", () => {
    // Recomputed from A = ω³μ²/(3πε0ħc³), f = 2m_eωμ²/(3ħe²), A = e²ω²f/(2πε0 m_e c³), ω = 2πc·100ν̃.
    const w = 2 * Math.PI * c * 100; // ω per cm⁻¹
    const kA = (w ** 3 * debye ** 2) / (3 * Math.PI * eps0 * hbar * c ** 3);
    const kf = (2 * me * w * debye ** 2) / (3 * hbar * e * e);
    const kAf = (e * e * w * w) / (2 * Math.PI * eps0 * me * c ** 3);
    expect(rel(EINSTEIN_A_PER_NU3_MU2, kA)).toBeLessThan(1e-12);
    expect(rel(OSCILLATOR_STRENGTH_PER_NU_MU2, kf)).toBeLessThan(1e-12);
    expect(rel(EINSTEIN_A_PER_NU2_F, kAf)).toBeLessThan(1e-12);
    // Hilborn, Am. J. Phys. 50, 982 (1982), printed to four digits; REFERENCE-VALUES §4 (VERIFIED to 1e-8).
    expect(rel(EINSTEIN_A_PER_NU3_MU2, 3.136e-7)).toBeLessThan(1e-4);
    expect(rel(OSCILLATOR_STRENGTH_PER_NU_MU2, 4.702e-7)).toBeLessThan(1e-4);
    expect(rel(EINSTEIN_A_PER_NU2_F, 0.667)).toBeLessThan(1e-4);
    expect(rel(EINSTEIN_A_PER_NU3_MU2, 3.13618867e-7)).toBeLessThan(1e-8);
    expect(rel(OSCILLATOR_STRENGTH_PER_NU_MU2, 4.70175455e-7)).toBeLessThan(1e-8);
    expect(rel(EINSTEIN_A_PER_NU2_F, 0.667025178)).toBeLessThan(1e-8);
  });
  it('μ² = 9.186e-3·∫ε d ln ν̃, and K is the product of the dipole and Einstein-A factors', () => {
    // REFERENCE-VALUES §4 (VERIFIED): 9.18593077e-3 D² per M⁻¹ cm⁻¹; §6: K = k_A·k_μ.
    // SI: μ² = (3ε0ħc·ln10/πN_A)·∫ε d ln ν̃ with ε in m² mol⁻¹; 1 L mol⁻¹ cm⁻¹ = 0.1 m² mol⁻¹ (d ln ν̃ has no unit).
    const kmu = (((3 * eps0 * hbar * c * Math.log(10)) / (Math.PI * NA)) * 0.1) / debye ** 2;
    expect(rel(DIPOLE2_PER_INTEGRATED_EPS_LN_NU, kmu)).toBeLessThan(1e-12);
    expect(rel(DIPOLE2_PER_INTEGRATED_EPS_LN_NU, 9.18593077e-3)).toBeLessThan(1e-8);
    expect(rel(EINSTEIN_A_PER_NU3_MU2 * DIPOLE2_PER_INTEGRATED_EPS_LN_NU, STRICKLER_BERG_K)).toBeLessThan(
      1e-12,
    );
    expect(rel(OSCILLATOR_STRENGTH_PER_INTEGRATED_EPS / OSCILLATOR_STRENGTH_PER_NU_MU2, kmu)).toBeLessThan(
      1e-12,
    );
  });
});
