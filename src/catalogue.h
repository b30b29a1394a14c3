/* catalogue.h — the material catalogue as read from materials/NAME.cfg (libconfig): the
 * parameter table, the entries (binaries, ternary alloys, quaternaries) and the queries on
 * names.  Loading and freeing are public (ew_catalogue_load / ew_catalogue_free in
 * epiwell.h); evaluating an entry at a composition is alloy.h.  Internal.
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
 *   c11, c12, c44             elastic constants, kbar = 10^8 Pa = 0.1 GPa (GaAs c11 = 1221)
 * Wurtzite only (structure = "wurtzite"; refused for zinc blende, and the zinc-blende-only
 * gamma1-3, Ep, F, a_c, a_v, b_shear, d_shear refused for wurtzite; strain_wurtzite.h):
 *   c_lattice                 lattice constant c along the hexagonal axis at 300 K, Å
 *   c13, c33                  elastic constants, kbar
 *   Delta_cr                  crystal-field splitting Δcr, eV (Δso is Delta_so above)
 *   A1 … A6                   valence-band (Rashba–Sheka–Pikus) parameters, units ħ²/2m0
 *   a1, a2                    interband deformation potentials along / across c, eV
 *   D1, D2, D3, D4            valence-band deformation potentials, eV
 *   Psp                       spontaneous polarisation along +c (metal face), C/m²
 *   e31, e33                  piezoelectric constants, C/m²
 *   (me is the electron mass along c, taken isotropic)
 *
 * Catalogue kinds: "binary" (params), "alloy" = ternary (first, second, x_is, bowing; x is
 * the fraction of the first-named binary) and "quaternary" (description, x_is, y_is,
 * scheme, binaries; no values of its own: every parameter comes from the corner binaries
 * and the bowings of the bounding ternaries found in the catalogue; schemes and formulas
 * in alloy.h).
 */
#ifndef EW_CATALOGUE_H
#define EW_CATALOGUE_H

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
  /* the [001] heavy- and light-hole masses 1/(γ1 ∓ 2γ2): derived from the Luttinger
   * parameters for binaries, and the quantities an alloy may bow (Vurgaftman 2001 give
   * hole-mass bowings, not γ bowings, e.g. for InGaAs); see ew_param_is_hole_mass */
  EW_P_MHH, EW_P_MLH,
  /* wurtzite (appended: the indices above keep their values) */
  EW_P_CLC, EW_P_C13, EW_P_C33, EW_P_DCR,
  EW_P_A1, EW_P_A2, EW_P_A3, EW_P_A4, EW_P_A5, EW_P_A6,
  EW_P_WA1, EW_P_WA2, EW_P_D1, EW_P_D2, EW_P_D3, EW_P_D4,
  EW_P_PSP, EW_P_E31, EW_P_E33,
  EW_P_COUNT
} ew_param;

/* cfg key of a parameter, e.g. "Eg_G"; its unit, e.g. "eV" */
const char *ew_param_key(ew_param p);
const char *ew_param_unit(ew_param p);

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
/* The catalogue name closest to name by the "did you mean" rule of text.h; NULL when none
 * is close enough. */
const char *ew_catalogue_nearest(const ew_catalogue *cat, const char *name);
/* Index of the catalogue entry made of the same elements as name in another order (InAlAs
 * → AlInAs, GaInAsP → InGaAsP), or -1: alloy names are written both ways in the trade, and
 * the catalogue's x then means something else, so the message must say which is which. */
long ew_catalogue_reordered(const ew_catalogue *cat, const char *name);
/* A "did you mean" hint for an unknown material name into buf: the reordered catalogue
 * spelling with what its x (and y) are, else the nearest name; "" when there is none. */
void ew_catalogue_hint(const ew_catalogue *cat, const char *name, char *buf, size_t size);
/* A composition written in the name, as the trade writes it ("Al0.3Ga0.7As",
 * "Ga0.47In0.53As", "In0.72Ga0.28As0.61P0.39", elements in any order, each mixed group's
 * fractions summing to 1): the index of the catalogue alloy made of those elements, with its
 * x (and, for a quaternary, y) read off the fractions of the elements they count.  -1 when no
 * fraction is written (an ordinary name); -2 with the reason in why when the formula is
 * wrong or names no catalogue alloy. */
long ew_catalogue_composition(const ew_catalogue *cat, const char *name, double *x, double *y,
                              char *why, size_t size);
/* Directory actually loaded. */
const char *ew_catalogue_dir(const ew_catalogue *cat);

/* ---- the entries, for the material modules (alloy.c, lattice_match.c, material_print.c) */

enum { EW_KIND_BINARY = 0, EW_KIND_ALLOY = 1, EW_KIND_QUATERNARY = 2 };
enum { EW_SCHEME_SQUARE = 0, EW_SCHEME_TRIANGLE = 1 };

#define EW_CATALOGUE_PATH_MAX 4096

typedef struct {
  char *name, *description, *x_is, *path;
  int is_alloy; /* 1 for ternary alloys and quaternaries: x is needed */
  int kind;     /* EW_KIND_* */
  int wurtzite; /* structure = "wurtzite" (alloys: their binaries'); 0 zinc blende */
  int structure_line;
  int name_line;
  /* binary: values; alloy: bowing C0 (v), C1 (per_x) */
  double v[EW_P_COUNT], per_x[EW_P_COUNT];
  int have[EW_P_COUNT];
  int line[EW_P_COUNT];
  char *source[EW_P_COUNT];
  /* alloy end binaries */
  char *first, *second;
  int first_line, second_line;
  size_t i_first, i_second;
  /* quaternary: y, scheme, corner binaries, bounding ternaries (source[] holds the
   * interpolation text of every parameter, built when the catalogue is resolved) */
  char *y_is;
  int scheme, n_corner, corners_line;
  char *corner[4];
  size_t i_corner[4];
  int n_edge;
  size_t i_edge[4];   /* the ternary on each edge */
  int edge_flip[4];   /* 1: the ternary's first binary is the edge's second corner */
} ew_cat_entry;

struct ew_catalogue {
  char dir[EW_CATALOGUE_PATH_MAX];
  ew_cat_entry *e; /* sorted by kind, then name */
  size_t n;
};

/* The Varshni parameters that belong to each gap (index 0 Γ, 1 X, 2 L). */
extern const ew_param ew_gap_param[3], ew_alpha_param[3], ew_beta_param[3];

/* 1 for parameters an alloy may not bow: the Luttinger parameters (interpolated linearly)
 * and the Varshni α, β (alloy gaps at T come from the end binaries' gaps at T). */
int ew_param_no_bowing(ew_param p);
/* 1 for the [001] hole masses: never given by a binary (derived from γ1, γ2), only bowed. */
int ew_param_is_hole_mass(ew_param p);
/* 1 for parameters only a wurtzite entry may give (EW_P_CLC … EW_P_E33); 1 for those only a
 * zinc-blende entry may give (γ1–γ3, Ep, F, a_c, a_v, b_shear, d_shear). */
int ew_param_wurtzite_only(ew_param p);
int ew_param_zincblende_only(ew_param p);
/* 1 for the Varshni α, β (no bowing, and shown for alloys for display only). */
int ew_param_is_varshni(ew_param p);

/* Citation of the quaternary interpolation form (shown in sources and by the print). */
extern const char ew_quaternary_ref[];

#endif
