/* poisson.h — self-consistent Schrödinger–Poisson solve of doped stacks (poisson.c).
 *
 * ew_solve() hands a doped stack to ew_solve_self_consistent() (declared in solve.h), which
 * iterates ew_solve_potential() with the electrostatic potential energy U(z) = −eφ(z) of
 * the Poisson equation d/dz(ε0 εr dφ/dz) = −ρ until max|ΔU| < EW_SP_TOL_EV, and attaches the
 * self-consistent quantities below to the final result (struct ew_result, field sp).
 * Units inside: nm, eV, densities in nm^-3 (1 cm^-3 = 1e-21 nm^-3) and nm^-2 (1 cm^-2 =
 * 1e-14 nm^-2); everything stored here is converted to the cm units named in the fields. */
#ifndef EW_POISSON_H
#define EW_POISSON_H

#include "solve.h"

#define EW_SP_TOL_EV 1e-6     /* outer convergence: max |ΔU| between iterations, eV */
#define EW_SP_MAX_ITER 100    /* outer (Schrödinger–Poisson) iterations at most */
#define EW_SP_NEWTON_MAX 200  /* Newton iterations of one nonlinear Poisson step at most */
#define EW_SP_T_FLOOR_K 1.0   /* occupations below 1 K use 1 K (Fermi functions stay finite) */
#define EW_SP_BLEND_KT 2.0    /* subbands hand over to the continuum over 2 kT below the
                                 window top (see poisson.c, "Hand-over") */

struct ew_sp_info {
  double fermi_eV;          /* Fermi level (with a bias: of the first face), absolute eV */
  double fermi_last_eV;     /* Fermi level of the last face (= fermi_eV without bias) */
  double temperature_K;     /* temperature used for the occupations (floored at 1 K) */
  int iterations;           /* outer iterations done */
  double residual_eV;       /* max |ΔU| of the last outer iteration */
  size_t n_states;
  double *sheet_cm2;        /* [n_states] electrons (e) or holes (hh, lh) per state, cm^-2 */
  size_t n_lines;
  double *depol_eV;         /* [n_lines] depolarisation shift Ẽ − E, eV (NAN: interband) */
  size_t n;                 /* nodes */
  double *prof[EW_SP_PROFILE_COUNT]; /* [n] each: see ew_sp_profile in epiwell.h */
  double electrons_cm2, holes_cm2;   /* ∫ n dz, ∫ p dz over the stack */
  double electrons_bound_cm2, holes_bound_cm2; /* in the subbands (sum of sheet_cm2) */
  double donors_ion_cm2, acceptors_ion_cm2;    /* ∫ N_D⁺ dz, ∫ N_A⁻ dz */
};
typedef struct ew_sp_info ew_sp_info;

/* Normalised Fermi–Dirac integral of order 1/2, ℱ(η) = (2/√π) ∫0^∞ √x dx / (1 + e^(x−η))
 * (→ e^η for η → −∞), from the analytic approximation of X. Aymerich-Humet,
 * F. Serra-Mestres, J. Millán, J. Appl. Phys. 54, 2850 (1983); *deriv (may be NULL) receives
 * dℱ/dη of the same approximation (so that Newton's Jacobian matches the residual). */
double ew_fd_half(double eta, double *deriv);

#endif
