/**
 * Physical constants, in one place. CODATA 2018 recommended values; c, h, e, N_A and k_B are exact
 * since the 2019 SI revision. ε0 and m_e are the measured CODATA 2018 values (the 2022 adjustment moved
 * them by ≤ 1.4e-9 relative, far below any tolerance lumirate works to).
 *
 * Every derived prefactor of the physics layer is computed here from these, never typed in, so that
 * the published rounded values (Strickler–Berg's 2.880e-9, Hilborn's 3.136e-7 …) are checks, not inputs.
 */

/** Speed of light in vacuum, m s⁻¹ (exact). */
export const SPEED_OF_LIGHT_M_PER_S = 299_792_458;
/** Speed of light in vacuum, cm s⁻¹ (exact). */
export const SPEED_OF_LIGHT_CM_PER_S = SPEED_OF_LIGHT_M_PER_S * 100;
/** Planck constant, J s (exact). */
export const PLANCK_J_S = 6.626_070_15e-34;
/** Reduced Planck constant h/2π, J s. */
export const HBAR_J_S = PLANCK_J_S / (2 * Math.PI);
/** Elementary charge, C (exact). */
export const ELEMENTARY_CHARGE_C = 1.602_176_634e-19;
/** Avogadro constant, mol⁻¹ (exact). */
export const AVOGADRO_PER_MOL = 6.022_140_76e23;
/** Boltzmann constant, J K⁻¹ (exact). */
export const BOLTZMANN_J_PER_K = 1.380_649e-23;
/** Molar gas constant N_A·k_B, J mol⁻¹ K⁻¹. */
export const GAS_CONSTANT_J_PER_MOL_K = AVOGADRO_PER_MOL * BOLTZMANN_J_PER_K;
/** Vacuum electric permittivity, F m⁻¹ (CODATA 2018, relative standard uncertainty 1.5e-10). */
export const VACUUM_PERMITTIVITY_F_PER_M = 8.854_187_8128e-12;
/** Electron mass, kg (CODATA 2018, relative standard uncertainty 3.0e-10). */
export const ELECTRON_MASS_KG = 9.109_383_7015e-31;
/** One debye, C m: 10⁻¹⁸ statC cm = 10⁻²¹/c[m s⁻¹] C m. */
export const DEBYE_C_M = 1e-21 / SPEED_OF_LIGHT_M_PER_S;
/** Litres per cubic metre, for molar absorption coefficients in L mol⁻¹ cm⁻¹. */
export const LITRES_PER_M3 = 1000;
