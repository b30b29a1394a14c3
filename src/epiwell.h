/* epiwell.h — public API of the epiwell library.
 *
 * epiwell turns a III–V layer stack into its confined electron, heavy-hole and light-hole
 * levels, wavefunctions and transition lines by solving the BenDaniel–Duke effective-mass
 * equation with finite differences (position-dependent mass) and a SuperLU shift-invert
 * eigen-solver.  Typical use:
 *
 *     ew_catalogue *cat; ew_stack *st; ew_result *res; ew_error err;
 *     ew_catalogue_load(NULL, &cat, &err);          // NULL: search the default places
 *     ew_stack_read_file("well.cfg", cat, &st, &err);
 *     ew_options opt; ew_options_default(&opt);
 *     ew_solve(st, &opt, &res, &err);
 *     ... ew_result_state(res, i), ew_result_line(res, j) ...
 *     ew_result_free(res); ew_stack_free(st); ew_catalogue_free(cat);
 *
 * Conventions: energies in eV on the catalogue's common absolute scale (hole levels lie below
 * their band edge), lengths in nm, masses in units of the free-electron mass m0, z grows in
 * growth order from the first layer's outer face (z = 0).  Every function that can fail
 * returns an ew_status and, when err is not NULL, fills it; no function exits the process.
 * No mutable global state: distinct objects may be used from distinct threads.
 */
#ifndef EPIWELL_H
#define EPIWELL_H

#include <stddef.h>
#include <stdio.h>

#ifdef __cplusplus
extern "C" {
#endif

#define EW_VERSION "0.1.0"

/* Status codes.  The CLI uses them as its exit codes (documented in README.md). */
typedef enum {
  EW_OK = 0,            /* success */
  EW_ERR_USAGE = 1,     /* bad command line */
  EW_ERR_INPUT = 2,     /* the stack file is wrong; err->file and err->line say where */
  EW_ERR_CATALOGUE = 3, /* material catalogue missing, unreadable or malformed */
  EW_ERR_NOMEM = 4,     /* out of memory, or a problem too large to attempt */
  EW_ERR_IO = 5,        /* a file could not be read or written */
  EW_ERR_NUMERIC = 6    /* a solver failed to converge or a result failed its check */
} ew_status;

/* Error report.  file/line name the input position when one is known (line 0 otherwise). */
typedef struct {
  ew_status code;
  char file[512];
  int line;
  char message[1024];
} ew_error;

/* Format "file:line: message" (or just the message) into buf; returns buf. */
const char *ew_error_text(const ew_error *err, char *buf, size_t size);

/* ---- bands ---------------------------------------------------------------------------- */
typedef enum { EW_BAND_E = 0, EW_BAND_HH = 1, EW_BAND_LH = 2, EW_BAND_COUNT = 3 } ew_band;
/* "e", "hh", "lh" */
const char *ew_band_name(ew_band band);

/* ---- material catalogue (materials.c) ------------------------------------------------- */
typedef struct ew_catalogue ew_catalogue;

/* Load every materials/NAME.cfg in dir.  dir == NULL searches, in order: $EPIWELL_MATERIALS,
 * the directory "materials" next to the running binary and its parent, and the install
 * prefix's share/epiwell/materials.  Fails with EW_ERR_CATALOGUE naming file:line. */
ew_status ew_catalogue_load(const char *dir, ew_catalogue **out, ew_error *err);
void ew_catalogue_free(ew_catalogue *cat); /* NULL is a no-op */

/* ---- layer stack (stack.c) ------------------------------------------------------------ */
typedef struct ew_stack ew_stack;

/* Read and validate a stack file; resolves every layer's band parameters at the stack's
 * temperature from cat.  On any error nothing is returned (*out = NULL). */
ew_status ew_stack_read_file(const char *path, const ew_catalogue *cat, ew_stack **out,
                             ew_error *err);
/* Same, from text in memory; display_name is used in error messages. */
ew_status ew_stack_read_string(const char *text, const char *display_name,
                               const ew_catalogue *cat, ew_stack **out, ew_error *err);
void ew_stack_free(ew_stack *stack); /* NULL is a no-op */

/* ---- solving (solve.c) ---------------------------------------------------------------- */
typedef struct {
  double grid_step_nm; /* > 0 overrides the stack's grid_step; 0 = stack's or default;
                          negative or NaN is refused (EW_ERR_USAGE) */
  int lowest_levels;   /* lines start from the lowest K levels of each band; 0 = all pairs */
  int error_estimate;  /* 1: Richardson estimate from a second grid of step 2h (default) */
  double residual_tol; /* relative residual ||Hψ − EBψ|| / (||H|| ||ψ||) above which a
                          state is flagged (default 1e-8) */
  int excitons;        /* 1: exciton binding and PL peak of every interband line (default);
                          0 skips them (sweeps that report no PL peaks) */
  int sp_max_iterations; /* doped stacks: outer Schrödinger–Poisson iterations at most before
                            EW_ERR_NUMERIC; <= 0 means the default, 100 */
} ew_options;

void ew_options_default(ew_options *opt);

typedef struct {
  char label[16];       /* e1, e2, …, hh1, …, lh1, … */
  ew_band band;
  int n;                /* 1-based index within its band, counted from the band edge */
  double energy_eV;     /* absolute energy (Richardson-extrapolated when estimated) */
  double error_eV;      /* numerical error estimate (>= 0); -1 when not estimated */
  double edge_eV;       /* local band edge of the layer where the state is most probable */
  double depth_eV;      /* confinement energy: |energy − edge| */
  size_t layer;         /* index of that layer */
  double layer_probability; /* ∫|ψ|² over that layer */
  double residual;      /* relative residual of the fine-grid eigenpair */
  int flagged;          /* 1 when residual > residual_tol */
  double inplane_mass;  /* in-plane mass of the subband at k∥ = 0, m0 (README "In-plane mass") */
} ew_state;

typedef enum { EW_LINE_INTERSUBBAND = 0, EW_LINE_INTERBAND = 1 } ew_line_kind;

typedef struct {
  ew_line_kind kind;
  size_t upper, lower;       /* state indices into the result */
  double energy_eV;          /* E(upper) − E(lower), > 0 */
  double wavelength_nm;      /* hc / energy */
  double dipole_nm;          /* intersubband: |<upper|z|lower>| */
  double oscillator_strength;/* intersubband: see README "Oscillator strength" */
  double overlap;            /* interband: |<e|h>|^2 */
  int allowed;               /* interband: overlap >= 1e-3 (see README) */
  double exciton_binding_eV; /* interband: exciton binding energy (> 0), 0 if not computed */
  double pl_peak_eV;         /* interband: energy_eV − exciton_binding_eV */
  double te_strength;        /* interband: relative strength for TE light (in-plane E) */
  double tm_strength;        /* interband: relative strength for TM light (E along z) */
} ew_line;

typedef struct ew_result ew_result;

ew_status ew_solve(const ew_stack *stack, const ew_options *opt, ew_result **out,
                   ew_error *err);
void ew_result_free(ew_result *res); /* NULL is a no-op */

size_t ew_result_state_count(const ew_result *res);
const ew_state *ew_result_state(const ew_result *res, size_t i);
/* Wavefunction of state i on the grid nodes: ψ (1/sqrt(nm)), normalised ∫|ψ|² dz = 1. */
const double *ew_result_wavefunction(const ew_result *res, size_t i);
size_t ew_result_line_count(const ew_result *res);
const ew_line *ew_result_line(const ew_result *res, size_t i);

/* Grid and profile on the nodes (n values each). */
size_t ew_result_node_count(const ew_result *res);
const double *ew_result_z_nm(const ew_result *res);
/* band edge (potential energy, absolute eV) and growth-axis mass of a band at the nodes */
const double *ew_result_edge_eV(const ew_result *res, ew_band band);
const double *ew_result_mass(const ew_result *res, ew_band band);
double ew_result_grid_step_nm(const ew_result *res);
/* bound states per band: the certified (Sturm inertia) count of eigenvalues in the window,
 * less the box states dropped in a field */
size_t ew_result_band_count(const ew_result *res, ew_band band);
/* upper end of the bound-state window of a band (absolute eV) */
double ew_result_window_eV(const ew_result *res, ew_band band);
/* Warnings: what the model leaves out for this stack (indirect layers, dropped box states,
 * failed residual checks, strain beyond the critical thickness, …). */
#define EW_WARNING_MAX 400
size_t ew_result_warning_count(const ew_result *res);
/* One line naming the band model used (parabolic or Kane non-parabolic electrons). */
const char *ew_result_model(const ew_result *res);
const char *ew_result_warning(const ew_result *res, size_t i);
/* The stable machine-readable code of warning i (kebab-case, e.g. "critical-thickness";
 * README "Warnings" lists every code); NULL when i is out of range. */
const char *ew_result_warning_code(const ew_result *res, size_t i);

/* ---- self-consistent Schrödinger–Poisson results (poisson.c) ---------------------------
 * ew_solve() solves doped stacks self-consistently (see README "Doped structures").  These
 * accessors return NAN / 0 / NULL for a result that is not self-consistent. */
/* Fermi level, absolute eV (with a bias: the Fermi level of the first face). */
double ew_result_fermi_energy_eV(const ew_result *res);
/* Fermi level of the last face (= ew_result_fermi_energy_eV unless a bias is applied). */
double ew_result_fermi_energy_last_eV(const ew_result *res);
/* Outer (Schrödinger–Poisson) iterations done, 0 when not self-consistent. */
int ew_result_sp_iterations(const ew_result *res);
/* max |ΔU| of the last outer iteration, eV (converged: < 1e-6 eV). */
double ew_result_sp_residual_eV(const ew_result *res);
/* Sheet density of state i (electrons for e states, holes for hh/lh states), cm^-2. */
double ew_result_state_sheet_density_cm2(const ew_result *res, size_t i);
/* Depolarisation shift Ẽ − E of intersubband line j, eV (NAN for interband lines). */
double ew_result_line_depolarization_eV(const ew_result *res, size_t j);
/* Profiles on the nodes (ew_result_node_count values), NULL when not self-consistent. */
typedef enum {
  EW_SP_POTENTIAL_EV = 0,   /* U = −eφ, the electrostatic potential energy of an electron */
  EW_SP_CHARGE_CM3 = 1,     /* net charge density ρ/e = p − n + N_D⁺ − N_A⁻ */
  EW_SP_N_CM3 = 2,          /* free electrons (subbands and continuum) */
  EW_SP_P_CM3 = 3,          /* free holes (heavy and light, subbands and continuum) */
  EW_SP_DONORS_ION_CM3 = 4, /* ionised donors (delta layers spread over their node's cell) */
  EW_SP_ACCEPTORS_ION_CM3 = 5,
  EW_SP_PROFILE_COUNT = 6
} ew_sp_profile;
const double *ew_result_sp_profile(const ew_result *res, ew_sp_profile which);

#ifdef __cplusplus
}
#endif
#endif
