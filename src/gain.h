/* gain.h — TE and TM material gain and spontaneous emission of an undoped quantum well with
 * injected carriers (equal sheet densities of electrons and holes).  Internal definition of
 * the public ew_gain.
 *
 * Model (S. L. Chuang, Physics of Optoelectronic Devices (Wiley, 1995), ch. 9 and Physics of
 * Photonic Devices (Wiley, 2009), ch. 10):
 *   g(ħω) = (π e² ħ Ep / (2 n_r c ε0 m0 L_w ħω)) Σ_{n,b} ∫ k dk/(2π) F_nb(k) (f_c − f_v)
 *           × L(E_nb(k) − ħω),
 * with |ê·p|² = P² F, P² = m0 Ep / 2 (Ep the Kane energy of the well material), F the
 * dimensionless squared overlap of the electron envelope with the hole spinor turned into
 * the X,Y,Z ⊗ spin basis (summed over the electron spin; TE: (|x|² + |y|²)/2, TM: |z|²), n
 * the electron subbands (single-band, the solver's energies and in-plane masses, parabolic in
 * k∥), b the hole Kramers branches of the k·p dispersion (axial approximation: isotropic in
 * the plane, so the k∥ integral is one-dimensional), L_w the thickness of the layer that
 * holds e1, f_c, f_v Fermi functions at the quasi-Fermi levels.  The lineshape L is the
 * hyperbolic secant (default) or the Lorentzian, integrated exactly over each k∥ segment on
 * which E_nb is linear in k² (so no sampling ripple even for narrow lines). */
#ifndef EW_GAIN_H
#define EW_GAIN_H

#include <complex.h>

#include "epiwell.h"

struct ew_gain {
  ew_gain_options o;       /* as computed (the defaults filled in) */
  double temperature_K;
  double well_nm, Ep_eV, refractive_index;
  char well_layer[64];
  /* electrons: ne subbands, parabolic in k∥ */
  size_t ne;
  double *e_eV, *e_mass;   /* [ne] edge (absolute eV), in-plane mass (m0) */
  /* holes: nb = 2 × subbands Kramers branches on nk points of k∥ */
  size_t nb, nk;
  double *k_inv_nm;        /* [nk] */
  double *h_eV;            /* [nb × nk] absolute electron-scale energies */
  double *f_te, *f_tm;     /* [(ne × nb) × nk] F of pair (n, b) at point i */
  double edge_eV;          /* lowest transition at k∥ = 0: min over n, b of E_n − E_b(0) */
  /* spectra */
  size_t nd, ne_pts;       /* densities, photon energies */
  double *density_cm2, *fermi_c_eV, *fermi_v_eV;   /* [nd] */
  double *energy_eV;                               /* [ne_pts] */
  double *gain_te, *gain_tm, *spont;               /* [nd × ne_pts], 1/cm, 1/(s cm³ eV) */
  double *peak_te, *peak_te_eV, *peak_tm;          /* [nd] */
  double transparency_cm2;                         /* NAN when not reached */
};

/* The electron and hole densities (cm^-2) at quasi-Fermi levels Fc, Fv (eV). */
double ew_gain_electron_density(const ew_gain *g, double Fc_eV);
double ew_gain_hole_density(const ew_gain *g, double Fv_eV);
/* Quasi-Fermi levels of sheet density N (cm^-2) by bisection of the density integrals to
 * 1e-12 eV. */
ew_status ew_gain_fermi_levels(const ew_gain *g, double N_cm2, double *Fc, double *Fv,
                               ew_error *err);
/* The transparency density: where Fc − Fv reaches edge_eV (cm^-2; NAN when not in
 * [1e8, 1e15]). */
double ew_gain_transparency(const ew_gain *g);
/* The spectra at density index d (Fermi levels already set). */
void ew_gain_spectra(ew_gain *g, size_t d);

/* Compute g (cleared first; on failure left empty) for stack st with options o (checked
 * here: EW_ERR_USAGE). */
/* The checks the k·p optics passes (gain, hole absorption) share: linewidth (0, 200] meV,
 * refractive index 1 to 10, kmax (0, 10] /nm with 2 to 2000 k points, grid step >= 0. */
ew_status ew_kp_optics_check(double linewidth_meV, double refractive_index, double kmax_inv_nm,
                             size_t k_points, double grid_step_nm, ew_error *err);
ew_status ew_gain_run(ew_gain *g, const ew_stack *st, const ew_gain_options *o, ew_error *err);
void ew_gain_clear(ew_gain *g);
/* ln(1 + e^u) without overflow */
double ew_gain_softplus(double u);

#endif
