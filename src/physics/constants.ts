/**
 * Physical constants, in one place (SI). CODATA 2018 (E. Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021);
 * NIST SP 961 (2019)); h, k_B exact in the SI since 2019.
 */

/** Planck constant h (J s), exact. */
export const PLANCK = 6.62607015e-34;
/** Reduced Planck constant ħ = h/2π (J s). */
export const HBAR = PLANCK / (2 * Math.PI);
/** Boltzmann constant k_B (J/K), exact. */
export const BOLTZMANN = 1.380649e-23;
/** Bohr magneton μ_B (J/T), CODATA 2018. */
export const BOHR_MAGNETON = 9.2740100783e-24;
/** μ_B/h (Hz/T), CODATA 2018. */
export const MU_B_OVER_H = 1.39962449361e10;
/** Atomic mass constant m_u = m(¹²C)/12 (kg), CODATA 2018: 1.660 539 066 60(50)e-27. */
export const ATOMIC_MASS_KG = 1.6605390666e-27;
