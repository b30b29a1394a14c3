/* constants.h — physical constants, CODATA 2018 (E. Tiesinga et al., Rev. Mod. Phys. 93,
 * 025010 (2021)).  Every derived value is computed here so that all modules agree. */
#ifndef EW_CONSTANTS_H
#define EW_CONSTANTS_H

#define EW_HBAR_JS 1.054571817e-34      /* reduced Planck constant, J s (exact) */
#define EW_E_C 1.602176634e-19          /* elementary charge, C (exact) */
#define EW_M0_KG 9.1093837015e-31       /* electron mass, kg */
#define EW_H_EVS 4.135667696e-15        /* Planck constant, eV s (exact) */
#define EW_C_MS 299792458.0             /* speed of light, m/s (exact) */
#define EW_KB_EVK 8.617333262e-5        /* Boltzmann constant, eV/K (exact) */
#define EW_EPS0_FM 8.8541878128e-12     /* vacuum permittivity, F/m */

/* pi (the one definition: M_PI is not C11) */
#define EW_PI 3.14159265358979323846

/* hbar^2 / (2 m0) in eV nm^2 = 0.0380998212 */
#define EW_HB2M0_EVNM2 (EW_HBAR_JS * EW_HBAR_JS / (2.0 * EW_M0_KG) / EW_E_C * 1e18)
/* h c in eV nm = 1239.84198 */
#define EW_HC_EVNM (EW_H_EVS * EW_C_MS * 1e9)

#endif
