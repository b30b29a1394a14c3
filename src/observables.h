/* observables.h — matrix elements between eigenvectors on a grid.  Integrals are the box
 * quadrature that B defines: ∫ f g dz ≈ Σ w_i f_i g_i, so B-orthonormal vectors are
 * normalised (∫|ψ|² dz = 1) and mutually orthogonal exactly in this quadrature. */
#ifndef EW_OBSERVABLES_H
#define EW_OBSERVABLES_H

#include "grid.h"

/* ∫ a b dz */
double ew_obs_overlap(const ew_grid *g, const double *a, const double *b);
/* ∫ a z b dz, nm */
double ew_obs_dipole(const ew_grid *g, const double *a, const double *b);
/* Discrete ⟨a| m0/m(z) |a⟩ = Σ_cells (h_c² / ∫_c m dz) a_{c−1} a_c.  With it the discrete
 * Thomas–Reiche–Kuhn sum Σ_j (E_j − E_i) |z_ij|² = (ħ²/2m0) ⟨i|m0/m|i⟩ holds exactly (the
 * double commutator [[H, z], z] = −ħ²/m(z)); see M. Helm, Semicond. Semimet. 62, 1 (2000). */
double ew_obs_inverse_mass(const ew_grid *g, ew_band band, const double *a);
/* The same with given cell mass integrals M[n+1] (energy-dependent masses). */
double ew_obs_inverse_mass_M(const ew_grid *g, const double *M, const double *a);
/* Oscillator strength f_ij = 2 m_i (E_j − E_i) |z_ij|² / ħ², with m_i = m0 / ⟨i|m0/m|i⟩ the
 * state's mean mass, so that Σ_j f_ij = 1 for any m(z) (= 2m*ΔE|z|²/ħ² for constant mass). */
double ew_obs_oscillator_strength(double dE_eV, double dipole_nm, double inverse_mass);

#endif
