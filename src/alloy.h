/* alloy.h — a catalogue material evaluated at a composition and a temperature: binaries
 * as stored, ternary alloys by Vegard's law with bowing, quaternaries by the schemes below,
 * gaps at T by Varshni, and (on a substrate) the strain of strain.h.  Internal.
 *
 * Quaternary schemes (kind = "quaternary" in the catalogue):
 *   scheme = "square":   A(x)B(1−x)C(y)D(1−y), binaries = [AC, AD, BC, BD] at the
 *                        corners (x, y) = (1, 1), (1, 0), (0, 1), (0, 0), e.g. InGaAsP =
 *                        Ga(x)In(1−x)As(y)P(1−y) with ["GaAs", "GaP", "InAs", "InP"];
 *   scheme = "triangle": A(x)B(y)C(1−x−y)D, binaries = [AD, BD, CD] with weights x, y,
 *                        1−x−y, e.g. AlGaInAs = Al(x)Ga(y)In(1−x−y)As with
 *                        ["AlAs", "GaAs", "InAs"].
 * Interpolation (the form of I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89,
 * 5815 (2001), section on quaternaries, as recalled (from memory)): the linear
 * interpolation of the corner binaries minus the bowing of each bounding ternary weighted
 * by the product of the fractions it mixes:
 *   square:   P = xy P_AC + x(1−y) P_AD + (1−x)y P_BC + (1−x)(1−y) P_BD
 *                 − x(1−x)[y C_ABC + (1−y) C_ABD] − y(1−y)[x C_ACD + (1−x) C_BCD],
 *             each ternary's C(t) at its own composition along its edge (t = x or y);
 *   triangle: P = x P_AD + y P_BD + z P_CD − xy C_ABD(u) − yz C_BCD(v) − xz C_ACD(w),
 *             z = 1 − x − y, each C at the orthogonal projection of (x, y, z) onto its
 *             edge: u = (1 + x − y)/2 (A fraction), v = (1 + y − z)/2 (B), w = (1 + x − z)/2
 *             (A).
 * Gaps at T: the corner binaries' gaps at T (Varshni), then the same (T-independent)
 * bowings, as for ternaries.
 */
#ifndef EW_ALLOY_H
#define EW_ALLOY_H

#include "catalogue.h"

/* Parameters of one material at composition x (ignored for binaries), before temperature. */
typedef struct {
  double v[EW_P_COUNT];
  int have[EW_P_COUNT];           /* 1 when the value is known */
  const char *source[EW_P_COUNT]; /* catalogue-owned text: where the value (binary) or the
                                     bowing (alloy) comes from */
} ew_params;

/* Band parameters of a material at (x, T): what the grid needs. */
typedef struct {
  double Eg_G_eV, Eg_X_eV, Eg_L_eV; /* gaps at T (Varshni, then bowing as in Vurgaftman) */
  double Ev_eV;    /* valence-band maximum (VBO, temperature independent) */
  double Ec_eV;    /* Γ conduction edge = Ev + Eg_G(T) (+ dEc_strain_eV on a substrate): the
                      gap's T shift goes into Ec */
  double Ev_hh_eV; /* heavy-hole edge (= Ev without strain, Ev + dEhh_strain_eV with) */
  double Ev_lh_eV; /* light-hole edge (= Ev without strain, Ev + dElh_strain_eV with) */
  double me;       /* band-edge electron mass at T (and strain), m0: see me0 below */
  double mhh_z, mlh_z;     /* growth-axis hole masses 1/(γ1 ∓ 2γ2), m0 */
  double mhh_par, mlh_par; /* in-plane hole masses 1/(γ1 ± γ2), m0 */
  double eps_r;    /* static permittivity (0 if unknown) */
  double a_nm;     /* lattice constant, nm (0 if unknown) */
  int lowest_valley; /* 0 Γ, 1 X, 2 L: which conduction minimum is lowest (unstrained gaps) */
  /* added for strain and k·p users (appended: the fields above keep their layout) */
  double Ep_eV;            /* Kane energy, eV (0 if unknown) */
  double Dso_eV;           /* spin-orbit splitting Δso, eV (0 if unknown) */
  double c11_kbar, c12_kbar; /* elastic stiffness constants, kbar = 10^8 Pa (0 if unknown) */
  double eps_par, eps_perp; /* in-plane ε∥ = (a_sub − a)/a and growth-axis ε⊥ strain (0
                               unstrained); sign convention in strain.h */
  double dEc_strain_eV, dEhh_strain_eV, dElh_strain_eV; /* strain shifts already applied:
                               Ec_eV, Ev_hh_eV, Ev_lh_eV include them; Ev_eV and the gaps
                               Eg_*_eV stay the relaxed material's */
  double critical_thickness_nm; /* Matthews–Blakeslee, layer buried between two interfaces
                                   (strain.h); INFINITY when unstrained or unknown */
  /* bulk (3D) density-of-states hole masses, spherical approximation 1/(γ1 ∓ 2γ̄),
     γ̄ = (γ2 + γ3)/2, m0 (alloy.c); 0 when unknown (no γ3, user materials): poisson.c then
     uses the ellipsoid (m_z m∥²)^{1/3} */
  double mhh_dos, mlh_dos;
  /* the band-edge electron mass me follows the gap (Kane relation, alloy.c): me0 is the
     catalogue's 0 K mass at the 0 K Γ gap Eg0_G_eV (both 0 when me is not scaled: no E_P) */
  double me0, Eg0_G_eV;
  /* for the multiband k·p model (kp_hamiltonian.c; appended): the Luttinger γ3 (0 when
     unknown: user materials; the k·p model then takes γ3 = γ2) and the shear part of the
     valence strain δE_sh = b (ε⊥ − ε∥) already inside Ev_hh_eV and Ev_lh_eV (strain.h; 0
     unstrained) */
  double gamma3;
  double dE_shear_strain_eV;
  /* wurtzite layers (strain_wurtzite.h; appended): wurtzite = 1, the solver's hh and lh bands
     are the Γ9 (A) and upper Γ7 (B) valence bands (edges Ev_hh_eV, Ev_lh_eV, masses mhh_z …
     mlh_par above: growth axis = c), the crystal-field split-off band is reported only (its
     edge and masses below); eps_par = ε_xx, eps_perp = ε_zz; the polarisation along +z
     (spontaneous, and piezoelectric from the strain), C/m² */
  int wurtzite;
  double Ev_ch_eV, mch_z, mch_par;
  double Psp_C_m2, Ppz_C_m2;
  double c_nm;             /* wurtzite lattice constant c, nm (0 zinc blende or unknown) */
} ew_bands;

/* One monolayer along the growth axis, nm: half the strained growth-axis lattice constant,
 * a (1 + ε⊥)/2 for [001] zinc blende, c (1 + ε_zz)/2 for c-plane wurtzite (two atomic
 * bilayers per c); 0 when the lattice constant is unknown. */
double ew_bands_monolayer_nm(const ew_bands *b);

/* Parameters at composition x in [0,1].  Fails (EW_ERR_INPUT) for an unknown name, x out
 * of range, or a quaternary (which needs y: ew_material_params2). */
ew_status ew_material_params(const ew_catalogue *cat, const char *name, double x,
                             ew_params *out, ew_error *err);
/* Band parameters at composition x and temperature T_K >= 0, unstrained (strain fields 0,
 * critical_thickness_nm INFINITY).  Quaternaries fail (EW_ERR_INPUT): use
 * ew_material_bands_on. */
ew_status ew_material_bands(const ew_catalogue *cat, const char *name, double x, double T_K,
                            ew_bands *out, ew_error *err);

/* As ew_material_params with the second composition y (quaternaries; ignored for binaries
 * and ternaries).  x, y in [0, 1]; for a "triangle" quaternary also x + y <= 1. */
ew_status ew_material_params2(const ew_catalogue *cat, const char *name, double x, double y,
                              ew_params *out, ew_error *err);
/* Band parameters at (x, y, T) of a layer grown pseudomorphically on (001) on a substrate
 * of lattice constant a_sub_nm (nm); a_sub_nm <= 0: unstrained (= ew_material_bands).
 * Strain shifts Ec_eV, Ev_hh_eV, Ev_lh_eV and fills eps_par … critical_thickness_nm
 * (formulas and sign convention in strain.h).  Lattice constants are the catalogue's 300 K
 * values at every T (no thermal expansion).  Fails (EW_ERR_CATALOGUE) when a strained
 * layer lacks a_lattice, c11, c12, a_c, a_v, b_shear or Delta_so. */
ew_status ew_material_bands_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, ew_bands *out, ew_error *err);
/* Relaxed lattice constant at (x, y), nm (the catalogue's a_lattice, 300 K; Vegard with
 * any bowing the catalogue gives).  y is ignored except for quaternaries. */
ew_status ew_lattice_nm(const ew_catalogue *cat, const char *name, double x, double y,
                        double *a_nm, ew_error *err);
/* Varshni: Eg(T) = Eg0 − αT²/(T + β), α in meV/K (Y. P. Varshni, Physica 34, 149 (1967)). */
double ew_varshni(double Eg0_eV, double alpha_meV_K, double beta_K, double T_K);

/* ---- for the other material modules (lattice_match.c, material_print.c) ------------- */

/* Find name and check (x, y, T), as every evaluation does (EW_ERR_INPUT with a "did you
 * mean" hint for an unknown name).  with_y = 0: the caller has no y, so a quaternary is
 * refused; with_y = 1: y is checked for quaternaries, ignored otherwise. */
ew_status ew_material_lookup(const ew_catalogue *cat, const char *name, double x, double y,
                             int with_y, double T_K, const ew_cat_entry **e, ew_error *err);
/* Parameter p (g < 0) or gap g (0 Γ, 1 X, 2 L) at T of entry e at (x, y): 1 and *out,
 * or 0 when the catalogue lacks a value it needs. */
int ew_entry_value(const ew_catalogue *cat, const ew_cat_entry *e, int p, int g, double x,
                   double y, double T_K, double *out);

/* Band-edge electron mass at gap Eg from the 0 K mass me0 at Eg0 by the Kane relation
 * (alloy.c cites it); me0 unchanged without E_P.  Used for the bands and for the caveat
 * on the relation's temperature shift (stack_caveats.c). */
double ew_kane_edge_mass(double me0, double Ep, double Dso, double Eg0, double Eg);

#endif
