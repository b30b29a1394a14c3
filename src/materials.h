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
  double Ec_eV;    /* Γ conduction edge = Ev + Eg_G(T): the gap's T shift goes into Ec */
  double Ev_hh_eV; /* heavy-hole edge (= Ev without strain) */
  double Ev_lh_eV; /* light-hole edge (= Ev without strain) */
  double me;       /* electron mass, m0 */
  double mhh_z, mlh_z;     /* growth-axis hole masses 1/(γ1 ∓ 2γ2), m0 */
  double mhh_par, mlh_par; /* in-plane hole masses 1/(γ1 ± γ2), m0 */
  double eps_r;    /* static permittivity (0 if unknown) */
  double a_nm;     /* lattice constant, nm (0 if unknown) */
  int lowest_valley; /* 0 Γ, 1 X, 2 L: which conduction minimum is lowest */
} ew_bands;

/* Number of catalogue entries and their names / kinds. */
size_t ew_catalogue_count(const ew_catalogue *cat);
const char *ew_catalogue_name(const ew_catalogue *cat, size_t i);
/* 1 if an alloy (needs x), 0 binary; -1 unknown name */
int ew_catalogue_is_alloy(const ew_catalogue *cat, const char *name);
/* One line of text: for alloys what x is ("Al fraction"), else a description. */
const char *ew_catalogue_description(const ew_catalogue *cat, size_t i);
/* index of name (exact match, case-sensitive) or -1 */
long ew_catalogue_find(const ew_catalogue *cat, const char *name);
/* The catalogue name closest to name (edit distance), for "did you mean" messages. */
const char *ew_catalogue_nearest(const ew_catalogue *cat, const char *name);
/* Directory actually loaded. */
const char *ew_catalogue_dir(const ew_catalogue *cat);

/* Parameters at composition x in [0,1].  Fails (EW_ERR_INPUT) for an unknown name or x out
 * of range. */
ew_status ew_material_params(const ew_catalogue *cat, const char *name, double x,
                             ew_params *out, ew_error *err);
/* Band parameters at composition x and temperature T_K >= 0. */
ew_status ew_material_bands(const ew_catalogue *cat, const char *name, double x, double T_K,
                            ew_bands *out, ew_error *err);
/* Print the parameters at (x, T) with units and sources, and the derived band parameters,
 * as the `epiwell materials NAME --x X --temperature T` command shows them. */
ew_status ew_material_print(const ew_catalogue *cat, const char *name, double x, double T_K,
                            FILE *out, ew_error *err);
/* Print the catalogue list (`epiwell materials`). */
void ew_catalogue_print(const ew_catalogue *cat, FILE *out);

/* Varshni: Eg(T) = Eg0 − αT²/(T + β), α in meV/K (Y. P. Varshni, Physica 34, 149 (1967)). */
double ew_varshni(double Eg0_eV, double alpha_meV_K, double beta_K, double T_K);

#endif
