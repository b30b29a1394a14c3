/* poisson.h — the electrostatics of doped stacks (poisson.c): the electrostatic potential
 * energy U(z) = −eφ(z) of the Poisson equation d/dz(ε0 εr dφ/dz) = −ρ with the carriers of
 * the last Schrödinger pass, the Fermi level, contacts, and the self-consistent quantities
 * of a final result (struct ew_sp_info in result.h).  The loop that alternates Schrödinger
 * passes and Poisson updates until max|ΔU| < EW_SP_TOL_EV is self_consistent.c.
 * Units inside: nm, eV, densities in nm^-3 (1 cm^-3 = 1e-21 nm^-3) and nm^-2 (1 cm^-2 =
 * 1e-14 nm^-2); everything stored here is converted to the cm units named in the fields. */
#ifndef EW_POISSON_H
#define EW_POISSON_H

#include "result.h"

#define EW_SP_TOL_EV 1e-6     /* outer convergence: max |ΔU| between iterations, eV */
#define EW_SP_MAX_ITER 100    /* outer (Schrödinger–Poisson) iterations at most */
#define EW_SP_NEWTON_MAX 200  /* Newton iterations of one nonlinear Poisson step at most */
#define EW_SP_T_FLOOR_K 1.0   /* occupations below 1 K use 1 K (Fermi functions stay finite) */
#define EW_SP_BLEND_KT 2.0    /* subbands hand over to the continuum over 2 kT below the
                                 window top (see poisson.c, "Hand-over") */

/* Normalised Fermi–Dirac integral of order 1/2, ℱ(η) = (2/√π) ∫0^∞ √x dx / (1 + e^(x−η))
 * (→ e^η for η → −∞), from the rational approximations of H. M. Antia, Astrophys. J. Suppl.
 * 84, 101 (1993) (relative error ~1e-12); *deriv (may be NULL) receives dℱ/dη = ℱ_{−1/2}(η)
 * from the same paper's approximation of order −1/2. */
double ew_fd_half(double eta, double *deriv);

/* Bulk density-of-states masses of the heavy [0] and light [1] holes of bands b, m0 (the
 * spherical approximation of alloy.c, or the ellipsoid (m_z m∥²)^{1/3} without γ3). */
void ew_hole_dos_masses(const ew_bands *b, double mdos[2]);
/* Effective valence-band density of states N_v = 2 (kT/2πħ²)^{3/2} (m_hh^{3/2} + m_lh^{3/2})
 * at T_K, cm^-3 (what the continuum holes of the Poisson solve use). */
double ew_valence_nv_cm3(const ew_bands *b, double T_K);

/* The iteration's state: the static model of the stack on grid g (which must outlive it;
 * the fine grid of the Schrödinger passes) at temperature T_K (floored already), the
 * potential U and the Fermi level, starting from flat bands at global neutrality (with a
 * bias: linear between the contacts). */
typedef struct ew_poisson ew_poisson;
/* EW_ERR_INPUT (file:line) when a layer has no static permittivity. */
ew_status ew_poisson_check_stack(const ew_stack *st, ew_error *err);
ew_status ew_poisson_new(const ew_stack *st, const ew_grid *g, double T_K, ew_poisson **out,
                         ew_error *err);
void ew_poisson_free(ew_poisson *p); /* NULL is a no-op */
/* Replace the first guess by U_eV[n] (n the grid's nodes) and the Fermi level fermi_eV, e.g.
 * a neighbouring point's converged pair (a warm start); any pair (U + c, E_F + c) converges
 * to the same gauge, which every update re-imposes.  Call before the first update. */
void ew_poisson_start(ew_poisson *p, const double *U_eV, double fermi_eV);
/* The current potential U[n] on the grid's nodes (eV). */
const double *ew_poisson_potential(const ew_poisson *p);
/* One Poisson update from the states of a Schrödinger pass r at the current U (the
 * predictor–corrector step; outer numbers the outer iteration for messages): the new U and
 * Fermi level, *dU_eV = max|ΔU|. */
ew_status ew_poisson_update(ew_poisson *p, const ew_result *r, int outer, double *dU_eV,
                            ew_error *err);
/* The Fermi level of the current iterate (of the first face), eV. */
double ew_poisson_fermi_eV(const ew_poisson *p);
/* Subband densities of states other than the parabolic one (hole_dos_kp.h): fn(ctx, j) gives
 * the sheet-density table of hole state j of the results later passed to ew_poisson_update
 * and ew_poisson_attach, or NULL (parabolic: the default, also with fn NULL). */
struct ew_sheet_table;
typedef const struct ew_sheet_table *(*ew_subband_dos_fn)(const void *ctx, size_t state);
void ew_poisson_set_subband_dos(ew_poisson *p, ew_subband_dos_fn fn, const void *ctx);
/* Attach the self-consistent quantities (r->sp, and a warning for a temperature below the
 * floor) to the final pass r, solved at the current U. */
ew_status ew_poisson_attach(const ew_poisson *p, ew_result *r, int iterations,
                            double residual_eV, ew_error *err);

#endif
