/* materials.h — the material catalogue: binaries and alloys read from materials/NAME.cfg
 * (libconfig), interpolated in composition (Vegard's law with bowing) and evaluated at a
 * temperature (Varshni).  Internal; the public face is in epiwell.h.
 *
 * Parameter table (key in the .cfg file, unit):
 *   Eg_G, Eg_X, Eg_L          band gaps at 0 K to the Γ, X, L conduction minima, eV
 *   alpha_G, alpha_X, alpha_L Varshni alpha, meV/K
 *   beta_G, beta_X, beta_L    Varshni beta, K
 *   VBO                       valence-band maximum on the common absolute scale, eV
 *   Delta_so                  spin-orbit splitting, eV
 *   me                        Γ electron mass, m0
 *   gamma1, gamma2, gamma3    Luttinger parameters, dimensionless
 *   eps_static                static relative permittivity
 *   a_lattice                 lattice constant at 300 K, Å
 *   Ep, F                     Kane energy (eV) and remote-band parameter F
 *   a_c, a_v, b_shear, d_shear deformation potentials, eV (sign convention of Vurgaftman 2001)
 *   c11, c12, c44             elastic constants, GPa
 *
 * Catalogue kinds: "binary" (params), "alloy" = ternary (first, second, x_is, bowing; x is
 * the fraction of the first-named binary) and "quaternary" (description, x_is, y_is,
 * scheme, binaries; no values of its own: every parameter comes from the corner binaries
 * and the bowings of the bounding ternaries found in the catalogue):
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
#ifndef EW_MATERIALS_H
#define EW_MATERIALS_H

#include "epiwell.h"

typedef enum {
  EW_P_EG_G, EW_P_ALPHA_G, EW_P_BETA_G,
  EW_P_EG_X, EW_P_ALPHA_X, EW_P_BETA_X,
  EW_P_EG_L, EW_P_ALPHA_L, EW_P_BETA_L,
  EW_P_VBO, EW_P_DSO, EW_P_ME,
  EW_P_GAMMA1, EW_P_GAMMA2, EW_P_GAMMA3,
  EW_P_EPS_S, EW_P_ALC,
  EW_P_EP, EW_P_F, EW_P_AC, EW_P_AV, EW_P_B, EW_P_D,
  EW_P_C11, EW_P_C12, EW_P_C44,
  EW_P_COUNT
} ew_param;

/* cfg key of a parameter, e.g. "Eg_G"; its unit, e.g. "eV" */
const char *ew_param_key(ew_param p);
const char *ew_param_unit(ew_param p);

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
  double me;       /* electron mass, m0 */
  double mhh_z, mlh_z;     /* growth-axis hole masses 1/(γ1 ∓ 2γ2), m0 */
  double mhh_par, mlh_par; /* in-plane hole masses 1/(γ1 ± γ2), m0 */
  double eps_r;    /* static permittivity (0 if unknown) */
  double a_nm;     /* lattice constant, nm (0 if unknown) */
  int lowest_valley; /* 0 Γ, 1 X, 2 L: which conduction minimum is lowest (unstrained gaps) */
  /* added for strain and k·p users (appended: the fields above keep their layout) */
  double Ep_eV;            /* Kane energy, eV (0 if unknown) */
  double Dso_eV;           /* spin-orbit splitting Δso, eV (0 if unknown) */
  double c11_GPa, c12_GPa; /* elastic stiffness constants, GPa (0 if unknown) */
  double eps_par, eps_perp; /* in-plane ε∥ = (a_sub − a)/a and growth-axis ε⊥ strain (0
                               unstrained); sign convention in strain.h */
  double dEc_strain_eV, dEhh_strain_eV, dElh_strain_eV; /* strain shifts already applied:
                               Ec_eV, Ev_hh_eV, Ev_lh_eV include them; Ev_eV and the gaps
                               Eg_*_eV stay the relaxed material's */
  double critical_thickness_nm; /* Matthews–Blakeslee, layer buried between two interfaces
                                   (strain.h); INFINITY when unstrained or unknown */
} ew_bands;

/* Number of catalogue entries and their names / kinds. */
size_t ew_catalogue_count(const ew_catalogue *cat);
const char *ew_catalogue_name(const ew_catalogue *cat, size_t i);
/* 1 if an alloy or a quaternary (needs x), 0 binary; -1 unknown name */
int ew_catalogue_is_alloy(const ew_catalogue *cat, const char *name);
/* 1 if a quaternary (needs x and y), 0 binary or ternary alloy; -1 unknown name */
int ew_catalogue_needs_y(const ew_catalogue *cat, const char *name);
/* One line of text: for alloys what x is ("Al fraction"), for quaternaries the formula
 * ("In(1-x)Ga(x)As(y)P(1-y)"), else a description. */
const char *ew_catalogue_description(const ew_catalogue *cat, size_t i);
/* What x and y are for entry i ("Ga fraction", "As fraction"); NULL when not applicable
 * (x: binaries; y: binaries and ternaries). */
const char *ew_catalogue_x_is(const ew_catalogue *cat, size_t i);
const char *ew_catalogue_y_is(const ew_catalogue *cat, size_t i);
/* index of name (exact match, case-sensitive) or -1 */
long ew_catalogue_find(const ew_catalogue *cat, const char *name);
/* The catalogue name closest to name (edit distance), for "did you mean" messages. */
const char *ew_catalogue_nearest(const ew_catalogue *cat, const char *name);
/* Index of the catalogue entry made of the same elements as name in another order (InAlAs
 * → AlInAs, GaInAsP → InGaAsP), or -1: alloy names are written both ways in the trade, and
 * the catalogue's x then means something else, so the message must say which is which. */
long ew_catalogue_reordered(const ew_catalogue *cat, const char *name);
/* A "did you mean" hint for an unknown material name into buf: the reordered catalogue
 * spelling with what its x (and y) are, else the nearest name; "" when there is none. */
void ew_catalogue_hint(const ew_catalogue *cat, const char *name, char *buf, size_t size);
/* Directory actually loaded. */
const char *ew_catalogue_dir(const ew_catalogue *cat);

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
/* Composition of alloy `name` lattice-matched to `substrate` (a binary, or a ternary at
 * substrate_x) at 300 K lattice constants.
 *   ternary:    *x solves a(x) = a_sub; *y = 0.  A finite target_gap_eV must be that
 *               composition's Γ gap at T_K to EW_MATCH_GAP_TOL_EV, else EW_ERR_INPUT (the
 *               message gives x and its gap); NaN asks for the lattice match alone.
 *   quaternary: (*x, *y) on the lattice-matched line with Γ gap Eg_G(x, y, T_K) =
 *               target_gap_eV: the line is followed in y (square scheme; x solved for each
 *               y) or in x (triangle; y solved for each x) and the gap root bracketed on a
 *               400-point scan then bisected.  Fails (EW_ERR_INPUT) when no composition is
 *               matched, the gap is out of the line's range (the message gives the range)
 *               or several compositions give it (the message lists them).
 * Relative mismatch of the result |a − a_sub|/a_sub <= 1e-12. */
#define EW_MATCH_GAP_TOL_EV 1e-3
ew_status ew_lattice_match(const ew_catalogue *cat, const char *name, const char *substrate,
                           double substrate_x, double target_gap_eV, double T_K, double *x,
                           double *y, ew_error *err);
/* Print the parameters at (x, T) with units and sources, and the derived band parameters,
 * as the `epiwell materials NAME --x X --temperature T` command shows them. */
ew_status ew_material_print(const ew_catalogue *cat, const char *name, double x, double T_K,
                            FILE *out, ew_error *err);
/* As ew_material_print at (x, y, T); y shown for quaternaries; with a_sub_nm > 0 also
 * the strain results (strains, shifts, strained edges and gaps, critical thickness), as
 * `epiwell materials NAME --x X --y Y --substrate SUB` is to show them.  ew_material_print
 * is this with y unused and no substrate (and fails for quaternaries). */
ew_status ew_material_print_on(const ew_catalogue *cat, const char *name, double x, double y,
                               double T_K, double a_sub_nm, FILE *out, ew_error *err);
/* Print the catalogue list (`epiwell materials`). */
void ew_catalogue_print(const ew_catalogue *cat, FILE *out);

/* Varshni: Eg(T) = Eg0 − αT²/(T + β), α in meV/K (Y. P. Varshni, Physica 34, 149 (1967)). */
double ew_varshni(double Eg0_eV, double alpha_meV_K, double beta_K, double T_K);

#endif
