/* strain.h — band-edge shifts of a pseudomorphic (coherently strained) zinc-blende layer
 * grown on a (001) substrate, and its Matthews–Blakeslee critical thickness.  Pure
 * functions of the material parameters: no catalogue, no I/O.  Internal; the catalogue
 * entry point is ew_material_bands_on() in materials.h.
 *
 * Sign convention (stated once, used everywhere; energies on the electron scale, up =
 * higher electron energy):
 *
 *   ε∥ = (a_sub − a)/a          in-plane strain; < 0 compressive (a > a_sub), > 0 tensile
 *   ε⊥ = −2 (c12/c11) ε∥       growth-axis strain of a free (001) surface
 *   tr ε = 2 ε∥ + ε⊥           relative volume change
 *
 *   δEc      = a_c tr ε                      conduction edge
 *   δEv,hyd  = −a_v tr ε                     hydrostatic part of the valence edge
 *   δE_sh    = b (ε⊥ − ε∥)                   shear (Q_ε below)
 *   δE_hh    = δEv,hyd − δE_sh
 *   δE_lh    = δEv,hyd + ½[δE_sh − Δso + √(Δso² + 2 Δso δE_sh + 9 δE_sh²)]
 *   δE_so    = δEv,hyd + ½[δE_sh − Δso − √(Δso² + 2 Δso δE_sh + 9 δE_sh²)] + Δso
 *
 * a_c, a_v, b are stored with the signs of the tables of I. Vurgaftman, J. R. Meyer,
 * L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001) as this catalogue holds them (GaAs:
 * a_c = −7.17, a_v = −1.16, b = −2.0 eV; from memory).  With these signs the valence band
 * moves DOWN in absolute energy under hydrostatic compression, i.e. δEv,hyd = −a_v tr ε;
 * in the notation "a = a_c − a_v" of the gap deformation potential, the a_v there is
 * a_v' = −a_v (the positive sign used by S. L. Chuang, Physics of Photonic Devices (Wiley,
 * 2009), tables of deformation potentials), so a = a_c − a_v' = a_c + a_v = −8.33 eV for
 * GaAs.  Consequences (tested): compressive strain (ε∥ < 0) widens the gap and puts the
 * heavy hole above the light hole; tensile strain puts the light hole on top.
 *
 * The heavy/light-hole shifts are those of the Bir–Pikus strain Hamiltonian for [001]
 * biaxial strain, −P_ε ∓ Q_ε with P_ε = −a_v' tr ε and Q_ε = −(b/2)(ε_xx + ε_yy − 2ε_zz)
 * = δE_sh (G. L. Bir, G. E. Pikus, Symmetry and Strain-Induced Effects in Semiconductors
 * (Wiley, 1974); in this form Chuang 2009, strain effects on band structures, from memory).
 * The light hole includes the coupling of the strained light hole to the split-off band:
 * the eigenvalues of the 2×2 block [[−P_ε + Q_ε, √2 Q_ε], [√2 Q_ε, −P_ε − Δso]] (Chuang
 * 2009, same section; the closed form above is that block's eigenvalues, re-derived here).
 * For Δso ≫ |Q_ε| it reduces to −P_ε + Q_ε.  Effective masses are not changed by strain.
 */
#ifndef EW_STRAIN_H
#define EW_STRAIN_H

#include "epiwell.h"

/* What the strain calculation needs from a material (all at the layer's composition). */
typedef struct {
  double a_nm;            /* relaxed lattice constant, nm (the catalogue's is at 300 K) */
  double c11_kbar, c12_kbar; /* elastic stiffness constants, kbar = 10^8 Pa (only their ratio enters) */
  double a_c_eV, a_v_eV, b_eV; /* deformation potentials, Vurgaftman-table signs (above) */
  double Dso_eV;          /* spin-orbit splitting Δso (> 0) */
} ew_strain_input;

/* Strains and shifts of one layer (all 0 when a_sub_nm equals a_nm). */
typedef struct {
  double eps_par, eps_perp;  /* ε∥, ε⊥ */
  double dEc_eV;             /* δEc */
  double dEv_hyd_eV;         /* δEv,hyd = −a_v tr ε */
  double dE_shear_eV;        /* δE_sh = b (ε⊥ − ε∥) = Q_ε */
  double dEhh_eV, dElh_eV;   /* heavy- and light-hole edge shifts (lh with the so coupling) */
  double dElh_simple_eV;     /* δEv,hyd + δE_sh, the light hole without the so coupling */
  double dEso_eV;            /* split-off edge shift relative to the unstrained Ev − Δso */
} ew_strain_shifts;

/* Shifts of a layer pseudomorphic on a substrate of lattice constant a_sub_nm > 0.
 * Fails (EW_ERR_INPUT) on non-positive or non-finite inputs (a, c11, c12, Δso, a_sub). */
ew_status ew_strain_biaxial(const ew_strain_input *m, double a_sub_nm, ew_strain_shifts *out,
                            ew_error *err);

/* Poisson ratio of the Matthews–Blakeslee formula, ν = c12/(c11 + c12). */
double ew_strain_poisson(double c11_kbar, double c12_kbar);

/* Matthews–Blakeslee critical thickness (J. W. Matthews, A. E. Blakeslee, J. Cryst.
 * Growth 27, 118 (1974)), force balance on a 60° dislocation (α = λ = 60°, Burgers vector
 * b_d = a/√2):
 *
 *   h_c = n · b_d (1 − ν cos²α) / (8π f (1 + ν) cos λ) · (ln(h_c/b_d) + 1),  f = |ε∥|,
 *
 * n = 1 for a single strained layer on a thick substrate with a free surface (one misfit
 * segment), n = 2 for a strained layer buried between two interfaces (a capped quantum
 * well, or one layer of MB's multilayers: two misfit segments).  For n = 2 this is MB's
 * multilayer result h_c = (b_d/(2π f_MB)) (1 − ν cos²α)/((1 + ν) cos λ) (ln(h_c/b_d) + 1)
 * with f_MB = 2|ε∥| the misfit between the two layer materials of a symmetric multilayer
 * (each layer strained by f_MB/2) — our reading of the paper, from memory.
 * Solved by the fixed point h ← A (ln(h/b_d) + 1) from h = A (ln(A/b_d) + 1), which
 * converges to the larger (physical) root.  Returns INFINITY for f = 0 and 0 when no root
 * exists (A < b_d: strain too large for any coherent layer); NAN on invalid input. */
double ew_mb_critical_thickness_nm(double a_nm, double eps_par, double nu, int n_interfaces);

#endif
