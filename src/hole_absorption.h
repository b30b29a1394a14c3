/* hole_absorption.h — intersubband absorption between the hole subbands of a p-type well
 * with TE and TM components, from the multiband k·p eigenvectors.  Internal definition of
 * the public ew_hole_absorption.
 *
 * Model (S. L. Chuang, Physics of Photonic Devices (Wiley, 2009), ch. 9 (intersubband
 * absorption, from memory); Y.-C. Chang, R. B. James, Phys. Rev. B 39, 12672 (1989) for the
 * valence-band case (from memory)):
 *   α(ħω) = π e² / (n_r c ε0 ħω ħ² L_w) Σ_{u<l} ∫ d²k/(2π)² |M_ul(k)|² (f_u − f_l) L(E_u − E_l − ħω)
 * in 1/cm: the absorption per pass of one well divided by L_w (the thickness of the layer
 * holding hh1, or the first hole subband), i.e. the coefficient of a wave travelling in the
 * plane, normal incidence in the material for TE, the z component alone for TM (no Brewster
 * or 45° geometry factor).  M = ħ ê·v with the velocity operator of the k·p Hamiltonian:
 *   TE: ħ v_x = ∂H/∂k_x (and ∂H/∂k_y), |M|² = (|M_x|² + |M_y|²)/2, the average over the
 *       in-plane direction of ê relative to k∥ (axial approximation: isotropic in the plane);
 *   TM: ħ v_z = i [H, z], on the grid M = x_u^H H (Z x_l) − (Z x_u)^H H x_l (pencil H, B and
 *       Z diagonal), equal to the dipole form (E_l − E_u) ⟨u|z|l⟩ for exact eigenvectors (kept
 *       as a consistency check, dipole_tm).
 * ∂H/∂k is the central difference of the pencil at k ± δ: exact because H is quadratic in k.
 * u, l run over the Kramers pairs (sums over both branches of each pair, basis independent
 * for degenerate pairs; pair-mean energies), f the hole occupations at the quasi-Fermi level
 * of the given sheet density (root of the k·p subbands' density, gain_fermi.c), T the
 * stack's temperature.  The k∥ integral is exact per segment on which E_u − E_l is linear in
 * k² (as gain_spectrum.c), with the hyperbolic secant (default) or Lorentzian lineshape of
 * FWHM Γ.  Artefacts: the Lorentzian's 1/x² tails absorb far from every line (including at
 * ħω → 0); both lines are symmetric; subbands not bound at k∥ = 0 (the continuum of a
 * bound-to-continuum detector) are not in the sum. */
#ifndef EW_HOLE_ABSORPTION_H
#define EW_HOLE_ABSORPTION_H

#include <complex.h>

#include "epiwell.h"

struct ew_hole_absorption {
  ew_hole_absorption_options o; /* as computed (defaults filled in) */
  double temperature_K, well_nm, fermi_eV;
  size_t ns, nk;               /* hole subbands (Kramers pairs), k∥ points */
  char (*label)[16];           /* [ns] */
  double *k_inv_nm;            /* [nk] */
  double *h_eV;                /* [ns × nk] pair means, absolute eV */
  double *br_eV;               /* [2 ns × nk] the branches (densities) */
  size_t nt;                   /* transitions u < l: ns (ns − 1) / 2 */
  size_t *t_u, *t_l;           /* [nt] */
  double *te2, *tm2, *dip2;    /* [nt × nk] |M|², eV² nm² (TE, TM commutator, TM dipole) */
  size_t np;
  double *energy_eV, *alpha_te, *alpha_tm; /* [np] */
};

ew_status ew_hole_absorption_run(ew_hole_absorption *h, const ew_stack *st,
                                 const ew_hole_absorption_options *o, ew_error *err);
void ew_hole_absorption_clear(ew_hole_absorption *h);
/* the spectra once the matrix elements and the Fermi level are set (hole_absorption_spectrum.c) */
void ew_hole_absorption_spectra(ew_hole_absorption *h);

#endif
