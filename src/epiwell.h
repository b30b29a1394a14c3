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

/* Exported from the shared library: every function declared here, nothing else (the library
 * is built with -fvisibility=hidden; tests/exports.sh checks the exported set against this
 * header).  Defined empty for compilers without the visibility attribute. */
#if defined(__GNUC__) && __GNUC__ >= 4
#define EW_API __attribute__((visibility("default")))
#else
#define EW_API
#endif

/* Version of this header.  ew_version() gives the library's at run time; the shared
 * library's soname carries the major number (libepiwell.so.MAJOR). */
#define EW_VERSION_MAJOR 1
#define EW_VERSION_MINOR 1
#define EW_VERSION_PATCH 0
#define EW_VERSION "1.1.0"

/* Status codes.  The CLI uses them as its exit codes (documented in README.md). */
typedef enum {
  EW_OK = 0,            /* success */
  EW_ERR_USAGE = 1,     /* bad command line */
  EW_ERR_INPUT = 2,     /* the stack file is wrong; err->file and err->line say where */
  EW_ERR_CATALOGUE = 3, /* material catalogue missing, unreadable or malformed */
  EW_ERR_NOMEM = 4,     /* out of memory, or a problem too large to attempt */
  EW_ERR_IO = 5,        /* a file could not be read or written */
  EW_ERR_NUMERIC = 6,   /* a solver failed to converge or a result failed its check */
  EW_ERR_CANCELLED = 7  /* the progress callback asked to stop (the CLI: SIGINT or SIGTERM) */
} ew_status;

/* Progress of a long solve, sweep or match: called after each finished step with the steps
 * done so far (1, 2, …, each once, in order) and the steps in all (0 when not known in
 * advance: a match).  Return 0 to go on, nonzero to cancel: the call returns
 * EW_ERR_CANCELLED as soon as the steps already running have finished, and the callback is
 * not called again.  Calls are serialised (one at a time, never two at once) but, in a
 * workflow on several threads, made on whichever of its threads finished the step, which may
 * not be the caller's: the callback must not call back into the object being computed. */
typedef int (*ew_progress_fn)(void *ctx, size_t done, size_t total);

/* Error report.  file/line name the input position when one is known (line 0 otherwise). */
typedef struct {
  ew_status code;
  char file[512];
  int line;
  char message[1024];
} ew_error;

/* Format "file:line: message" (or just the message) into buf; returns buf. */
EW_API const char *ew_error_text(const ew_error *err, char *buf, size_t size);

/* ---- bands ---------------------------------------------------------------------------- */
typedef enum { EW_BAND_E = 0, EW_BAND_HH = 1, EW_BAND_LH = 2, EW_BAND_COUNT = 3 } ew_band;
/* "e", "hh", "lh" */
EW_API const char *ew_band_name(ew_band band);

/* ---- material catalogue (materials.c) ------------------------------------------------- */
typedef struct ew_catalogue ew_catalogue;

/* Load every materials/NAME.cfg in dir.  dir == NULL searches, in order: $EPIWELL_MATERIALS,
 * the directory "materials" next to the running binary and its parent, and the install
 * prefix's share/epiwell/materials.  Fails with EW_ERR_CATALOGUE naming file:line. */
EW_API ew_status ew_catalogue_load(const char *dir, ew_catalogue **out, ew_error *err);
EW_API void ew_catalogue_free(ew_catalogue *cat); /* NULL is a no-op */

/* ---- layer stack (stack.c) ------------------------------------------------------------ */
typedef struct ew_stack ew_stack;

/* Read and validate a stack file; resolves every layer's band parameters at the stack's
 * temperature from cat.  On any error nothing is returned (*out = NULL). */
EW_API ew_status ew_stack_read_file(const char *path, const ew_catalogue *cat, ew_stack **out,
                             ew_error *err);
/* Same, from text in memory; display_name is used in error messages. */
EW_API ew_status ew_stack_read_string(const char *text, const char *display_name,
                               const ew_catalogue *cat, ew_stack **out, ew_error *err);
EW_API void ew_stack_free(ew_stack *stack); /* NULL is a no-op */

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
  double line_min_strength; /* the terminal table (ew_result_write_table) leaves out the
                               intersubband lines with f below this and the interband lines
                               with overlap below it (default 1e-3: parity-forbidden lines);
                               0 lists every line.  JSON and CSV always hold every line. */
  /* Progress of ew_solve (may be NULL, the default; ctx is passed to it).  Steps: the
   * Schrödinger pass and the exciton pass (1 or 2 steps); a self-consistent solve counts
   * every outer iteration up to sp_max_iterations, the final pass and the exciton pass
   * (total sp_max_iterations + 2); converging at iteration i < sp_max_iterations, it reports
   * done = sp_max_iterations for that iteration (one jump).  Called on the
   * caller's thread.  Ignored by the workflows (sweep, match, tolerance), which report their
   * own points. */
  ew_progress_fn progress;
  void *progress_ctx;
  /* Density of states of the hole subbands (README "Doped structures"):
   * EW_HOLE_DOS_PARABOLIC (default) the in-plane mass of each subband at k∥ = 0;
   * EW_HOLE_DOS_KP the 4-band k·p dispersion of the current potential along [100] and [110]
   * (full warping, the two averaged), EW_HOLE_DOS_KP_AXIAL the same in the axial
   * approximation (one direction, about half the cost).  With either k·p choice the
   * self-consistent loop's hole sheet densities come from those dispersions and every bound
   * hole level gets its density-of-states mass (ew_state.dos_mass_m0), also in a solve
   * without doping.  Costs k·p dispersions (README); the default path computes none.
   * ew_solve: EW_ERR_USAGE for another value, EW_ERR_INPUT for a k·p choice on a wurtzite
   * stack (the model is the zinc-blende Luttinger–Kohn one). */
  int hole_dos;
} ew_options;

enum { EW_HOLE_DOS_PARABOLIC = 0, EW_HOLE_DOS_KP = 1, EW_HOLE_DOS_KP_AXIAL = 2 };
/* "parabolic", "kp", "kp-axial" (NULL for another value): the names of the CLI option
 * --hole-dos and of the JSON's "hole_dos". */
EW_API const char *ew_hole_dos_name(int hole_dos);

EW_API void ew_options_default(ew_options *opt); /* NULL is a no-op */

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
  double dos_mass_m0;   /* hole levels with ew_options.hole_dos k·p: the density-of-states
                           mass of the subband's k·p dispersion (ew_dispersion_dos_mass_m0's
                           definition at EW_DOS_MASS_WINDOW_EV), m0; 0 when not computed
                           (parabolic option, electrons), NAN when the subband stays within
                           the window up to the largest k∥ sampled */
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

/* stack and out may not be NULL (EW_ERR_USAGE, *out = NULL); opt may be NULL (the defaults of
 * ew_options_default); err may be NULL.  On failure *out is NULL.
 * Threads: the call may run parts on up to two helper threads of its own, started and joined
 * inside it (the bands, the states' and lines' numbers on large grids, the exciton lines;
 * ew_catalogue_load its files, the JSON writer the
 * continuum's energies), as many as omp_get_max_threads() allows and none inside an OpenMP
 * parallel region; the result is the same bits on any number (README "The library"). */
EW_API ew_status ew_solve(const ew_stack *stack, const ew_options *opt, ew_result **out,
                          ew_error *err);
EW_API void ew_result_free(ew_result *res); /* NULL is a no-op */

/* The ew_result_* accessors below accept NULL (and out-of-range indices and bands) and then
 * return their "no value": 0 for counts, NAN for numbers, NULL for pointers and strings. */
EW_API size_t ew_result_state_count(const ew_result *res);
EW_API const ew_state *ew_result_state(const ew_result *res, size_t i);
/* Wavefunction of state i on the grid nodes: ψ (1/sqrt(nm)), normalised ∫|ψ|² dz = 1. */
EW_API const double *ew_result_wavefunction(const ew_result *res, size_t i);
EW_API size_t ew_result_line_count(const ew_result *res);
EW_API const ew_line *ew_result_line(const ew_result *res, size_t i);
/* The PL peak of an interband line as a wavelength, hc/pl_peak_eV in nm (what the table, JSON
 * and CSV print as pl_peak_nm); NAN for NULL or without a positive peak. */
EW_API double ew_line_pl_peak_nm(const ew_line *line);

/* Grid and profile on the nodes (n values each). */
EW_API size_t ew_result_node_count(const ew_result *res);
EW_API const double *ew_result_z_nm(const ew_result *res);
/* band edge (potential energy, absolute eV) and growth-axis mass of a band at the nodes */
EW_API const double *ew_result_edge_eV(const ew_result *res, ew_band band);
EW_API const double *ew_result_mass(const ew_result *res, ew_band band);
EW_API double ew_result_grid_step_nm(const ew_result *res);
/* bound states per band: the certified (Sturm inertia) count of eigenvalues in the window,
 * less the box states dropped in a field */
EW_API size_t ew_result_band_count(const ew_result *res, ew_band band);
/* upper end of the bound-state window of a band (absolute eV) */
EW_API double ew_result_window_eV(const ew_result *res, ew_band band);
/* How far state i lies below the top of its band's bound window (the lower outer barrier
 * edge; in a field the rule of bound.c), eV, positive for a bound state: window − E for
 * electrons, E − window for holes (the window's valence edge).  A bound-to-quasi-bound
 * design reads it off e2.  NaN for a bad index. */
EW_API double ew_result_state_below_top_eV(const ew_result *res, size_t i);
/* Warnings: what the model leaves out for this stack (indirect layers, dropped box states,
 * failed residual checks, strain beyond the critical thickness, …). */
#define EW_WARNING_MAX 400
EW_API size_t ew_result_warning_count(const ew_result *res);
/* One line naming the band model used (parabolic or Kane non-parabolic electrons). */
EW_API const char *ew_result_model(const ew_result *res);
EW_API const char *ew_result_warning(const ew_result *res, size_t i);
/* The stable machine-readable code of warning i (kebab-case, e.g. "critical-thickness";
 * README "Warnings" lists every code); NULL when i is out of range. */
EW_API const char *ew_result_warning_code(const ew_result *res, size_t i);

/* ---- self-consistent Schrödinger–Poisson results (poisson.c) ---------------------------
 * ew_solve() solves doped stacks self-consistently (see README "Doped structures").  These
 * accessors return NAN / 0 / NULL for a result that is not self-consistent. */
/* Fermi level, absolute eV (with a bias: the Fermi level of the first face). */
EW_API double ew_result_fermi_energy_eV(const ew_result *res);
/* Fermi level of the last face (= ew_result_fermi_energy_eV unless a bias is applied). */
EW_API double ew_result_fermi_energy_last_eV(const ew_result *res);
/* Outer (Schrödinger–Poisson) iterations done, 0 when not self-consistent. */
EW_API int ew_result_sp_iterations(const ew_result *res);
/* max |ΔU| of the last outer iteration, eV (converged: < 1e-6 eV). */
EW_API double ew_result_sp_residual_eV(const ew_result *res);
/* Sheet density of state i (electrons for e states, holes for hh/lh states), cm^-2. */
EW_API double ew_result_state_sheet_density_cm2(const ew_result *res, size_t i);
/* Depolarisation shift Ẽ − E of intersubband line j, eV (NAN for interband lines). */
EW_API double ew_result_line_depolarization_eV(const ew_result *res, size_t j);
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
EW_API const double *ew_result_sp_profile(const ew_result *res, ew_sp_profile which);


/* ==== Library API for scripts and the command line (src/api_*.c) =========================
 * What the `epiwell` command itself uses; it includes no other project header.  Rules for
 * every function below unless it says otherwise:
 *   - A pointer argument may not be NULL unless "may be NULL" is said; given NULL where not
 *     allowed, a function returning ew_status returns EW_ERR_USAGE (and fills err when err
 *     is not NULL); an accessor returns its documented "no value" (0, NAN, NULL or -1).
 *   - err may always be NULL.  Strings passed in are copied when kept; strings returned are
 *     owned by the object they came from and stay valid until it is freed.
 *   - Objects are freed by their ew_..._free (NULL is a no-op); an object is not shared by
 *     two threads at once.
 *   - Error messages of the parsers name the command-line option they serve (--vary,
 *     --line, --target, --tolerance, --plot, --spectra), because the command shows them. */

/* ---- threads -------------------------------------------------------------------------- */
/* 1 when the library was built with OpenMP (threads > 1 have an effect), else 0. */
EW_API int ew_wf_have_openmp(void);

/* ---- catalogue and materials (api_materials.c) ---------------------------------------- */
/* Materials in the catalogue (0 for NULL) and the name of material i (NULL when cat is NULL
 * or i is out of range; valid while cat lives). */
EW_API size_t ew_catalogue_material_count(const ew_catalogue *cat);
EW_API const char *ew_catalogue_material_name(const ew_catalogue *cat, size_t i);
/* 1 when name (in) is an alloy of the catalogue (it needs a composition x), 0 for a binary,
 * -1 when it is not in the catalogue or an argument is NULL. */
EW_API int ew_material_is_alloy(const ew_catalogue *cat, const char *name);
/* Lattice constant at 300 K of name at composition (x, y), nm, into *a_nm (out).
 * EW_ERR_INPUT for an unknown name (the message suggests the nearest) or a bad composition. */
EW_API ew_status ew_material_lattice_nm(const ew_catalogue *cat, const char *name, double x,
                                 double y, double *a_nm, ew_error *err);
/* Composition (*x, *y; out) of alloy name lattice-matched to substrate (a binary, or an
 * alloy at substrate_x).  target_gap_eV: NaN for ternaries (the match alone), else the Γ gap
 * at T_K the composition must have (quaternaries: selects the point of the matched line).
 * EW_ERR_INPUT when no composition fits (the message says why). */
EW_API ew_status ew_material_lattice_match(const ew_catalogue *cat, const char *name,
                                    const char *substrate, double substrate_x,
                                    double target_gap_eV, double T_K, double *x, double *y,
                                    ew_error *err);
/* Write material name at (x, y, T_K) to out: parameters with units and sources, derived band
 * parameters; with a_sub_nm > 0 also its strain on a substrate of that lattice constant
 * (what `epiwell materials NAME` prints).  EW_ERR_INPUT for an unknown name or composition,
 * EW_ERR_IO when out has a write error. */
EW_API ew_status ew_material_write(const ew_catalogue *cat, const char *name, double x, double y,
                            double T_K, double a_sub_nm, FILE *out, ew_error *err);
/* Write the list of the catalogue's materials to out (what `epiwell materials` prints). */
EW_API ew_status ew_catalogue_write(const ew_catalogue *cat, FILE *out, ew_error *err);

/* ---- layers of a stack (api_stack.c) ---------------------------------------------------
 * Layers are indexed 0 … count−1 in growth order.  Out of range or NULL: NULL / NAN. */
EW_API size_t ew_stack_layer_count(const ew_stack *st);              /* 0 for NULL */
EW_API const char *ew_stack_layer_name(const ew_stack *st, size_t i);     /* valid while st lives */
EW_API const char *ew_stack_layer_material(const ew_stack *st, size_t i); /* valid while st lives */
EW_API double ew_stack_layer_thickness_nm(const ew_stack *st, size_t i);
EW_API double ew_stack_layer_start_nm(const ew_stack *st, size_t i); /* z of its first face */
/* Composition x (y) as the stack file gives it; NAN for a layer that gives none (a binary,
 * a user material, or a graded layer, whose grade sets x). */
EW_API double ew_stack_layer_x(const ew_stack *st, size_t i);
EW_API double ew_stack_layer_y(const ew_stack *st, size_t i);
/* Index (out) of the layer called name: EW_ERR_INPUT when there is none. */
EW_API ew_status ew_stack_layer_index(const ew_stack *st, const char *name, size_t *index,
                               ew_error *err);
EW_API double ew_stack_temperature_K(const ew_stack *st); /* NAN for NULL */
EW_API double ew_stack_total_nm(const ew_stack *st);      /* sum of the thicknesses; NAN for NULL */

/* ---- writing a result (api_write.c) ------------------------------------------------------
 * Stream writers write to out (an open stream the caller keeps; memory streams work) and
 * return EW_ERR_IO when the stream reports an error afterwards.  File writers write their
 * file(s) atomically: under a temporary name, renamed into place only when complete. */
/* The terminal tables: layers, levels, lines (what `epiwell solve` prints). */
EW_API ew_status ew_result_write_table(const ew_result *res, FILE *out, ew_error *err);
/* One JSON object (README "Output reference"; `epiwell solve --json`). */
EW_API ew_status ew_result_write_json(const ew_result *res, FILE *out, ew_error *err);
/* profile.csv, levels.csv, lines.csv, wavefunctions.csv into dir (created when missing),
 * gzip-compressed when gzip is 1, or when gzip is −1 and the table is large; all four
 * appear together or none does. */
EW_API ew_status ew_result_write_csv_dir(const ew_result *res, const char *dir, int gzip,
                                  ew_error *err);
/* Band diagram picture at path (.svg or .png, see ew_plot_format); or as SVG text to out. */
EW_API ew_status ew_result_write_band_diagram(const ew_result *res, const char *path, ew_error *err);
EW_API ew_status ew_result_write_band_diagram_svg(const ew_result *res, FILE *out, ew_error *err);
/* The band diagram with the lowest levels_per_band levels of each band drawn (<= 0: every
 * level); the two above and the report draw EW_PLOT_LEVELS_DEFAULT. */
#define EW_PLOT_LEVELS_DEFAULT 8
EW_API ew_status ew_result_write_band_diagram_levels(const ew_result *res, const char *path,
                                              int levels_per_band, ew_error *err);
/* dir/report.html, or dir itself when it ends in .html: one self-contained page (cat may
 * be NULL: no material table). */
EW_API ew_status ew_result_write_report(const ew_result *res, const ew_catalogue *cat,
                                 const char *dir, ew_error *err);

/* ---- output paths, checked before any work (api_write.c) ------------------------------ */
/* Picture format from a file name: 's' for .svg, 'p' for .png (case-insensitive), 0 otherwise
 * (NULL: 0).  In plot.c. */
EW_API int ew_plot_format(const char *path);
/* EW_OK when dir is a writable directory, or missing with a writable parent (not created). */
EW_API ew_status ew_output_dir_check(const char *dir, ew_error *err);
/* EW_OK when path (.svg/.png) can be written; EW_ERR_USAGE for another extension. */
EW_API ew_status ew_plot_path_check(const char *path, ew_error *err);
/* EW_OK when a data file can be written at path (its directory is writable, path is not a
 * directory); messages name opt_name (in; may be NULL: "output"). */
EW_API ew_status ew_data_path_check(const char *path, const char *opt_name, ew_error *err);
/* The companion picture name FILE-SUFFIX.ext of FILE.ext into out[size] (suffix "" or NULL:
 * path itself).  EW_ERR_USAGE, naming opt_name (may be NULL: "--plot"), when path does not
 * end in .svg/.png or out is too small. */
EW_API ew_status ew_plot_companion_name(const char *path, const char *suffix, const char *opt_name,
                                 char *out, size_t size, ew_error *err);

/* ---- one output file written atomically (api_output_file.c) ----------------------------
 * open → write to ew_output_file_stream → commit (renamed into place) or abort (removed).
 * The temporary lives in the target's directory; both commit and abort free the object. */
typedef struct ew_output_file ew_output_file;
EW_API ew_status ew_output_file_open(const char *path, ew_output_file **out, ew_error *err);
/* The stream to write (owned by f; valid until commit/abort); NULL for NULL. */
EW_API FILE *ew_output_file_stream(ew_output_file *f);
/* Close and rename into place; EW_ERR_IO (nothing left behind) when a write failed. */
EW_API ew_status ew_output_file_commit(ew_output_file *f, ew_error *err);
EW_API void ew_output_file_abort(ew_output_file *f); /* NULL is a no-op */

/* ---- all outputs of one run, committed together (api_output_file.c) -------------------
 * create → stage every target before the work (the checks and the directory lock happen
 * here) → write each output at the staged name given → commit (all put in place) or abort
 * (none; the previous outputs stay as they were).
 * A directory (ew_output_set_dir, `-o DIR`) appears all at once: it is written into a sibling
 * temporary directory and swapped in with one rename.  DIR is locked from staging to commit
 * (".DIR.lock" beside it): a second run on it fails at once, naming the first one's PID.
 * Files of a previous DIR that this run does not write are kept, except the CSV set's own
 * names (profile.csv, levels.csv, lines.csv, wavefunctions.csv and .csv.gz); a DIR holding a
 * subdirectory is refused.  Single files (ew_output_set_file) are written in private
 * staging directories beside their targets and renamed in at commit.  What a killed run left
 * behind is removed by the next run on the same targets.  README "Output files" says more. */
typedef struct ew_output_set ew_output_set;
EW_API ew_status ew_output_set_create(ew_output_set **out, ew_error *err);
/* Stage dir as a whole (once per set); the directory to write it into into work[size] (out;
 * ew_output_set_write_csv writes the CSV set there).  EW_ERR_IO naming dir when it cannot be
 * used or another run holds it. */
EW_API ew_status ew_output_set_dir(ew_output_set *s, const char *dir, char *work, size_t size,
                                   ew_error *err);
/* Stage the file path (make_dir: create its directory when missing, as `--report DIR`
 * does); the name to write instead into work[size] (out): a path ending in path's own base
 * name, so a writer that takes a directory is given work's directory part.  A file in the
 * staged directory joins its set.  EW_ERR_IO naming path when it exists and is not a regular
 * file (a FIFO, a device, a directory) or its directory is missing or not writable. */
EW_API ew_status ew_output_set_file(ew_output_set *s, const char *path, int make_dir, char *work,
                             size_t size, ew_error *err);
/* The CSV set of res (as ew_result_write_csv_dir writes it) into the staged directory. */
EW_API ew_status ew_output_set_write_csv(ew_output_set *s, const ew_result *res, int gzip,
                                  ew_error *err);
/* After a writer failed: staged names in err (file and message) rewritten to the targets. */
EW_API void ew_output_set_explain(const ew_output_set *s, ew_error *err);
/* Put every output in place and free s; EW_ERR_IO when that failed (what was not put in
 * place is removed). */
EW_API ew_status ew_output_set_commit(ew_output_set *s, ew_error *err);
EW_API void ew_output_set_abort(ew_output_set *s); /* removes every staged file, frees s; NULL no-op */

/* ---- absorption spectra of a result (api_spectra.c) ----------------------------------- */
#define EW_WF_DEFAULT_ANGLE_DEG 45.0 /* internal angle of a 45° polished facet */
/* GaAs near 10 µm, from memory (the GaAs refractive index falls from ~3.6 at 0.9 µm to ~3.3
 * in the mid-infrared): the intersubband default. */
#define EW_WF_DEFAULT_INDEX 3.3
typedef struct ew_spectra ew_spectra;
/* Interband and intersubband spectra of res at internal angle theta_deg ∈ [0, 90) and
 * refractive index n_refr > 0 (EW_ERR_USAGE otherwise).  *out keeps no pointer into res. */
EW_API ew_status ew_spectra_compute(const ew_result *res, double theta_deg, double n_refr,
                             ew_spectra **out, ew_error *err);
EW_API void ew_spectra_free(ew_spectra *sp); /* also removes temporaries not committed */
/* Why spectrum which (0 interband, 1 intersubband) is absent; "" when present; NULL for bad
 * arguments.  Valid while sp lives. */
EW_API const char *ew_spectra_note(const ew_spectra *sp, int which);
/* CSV "E_eV,interband_rel,intersubband_fraction" to out. */
EW_API ew_status ew_spectra_write_csv(const ew_spectra *sp, FILE *out, ew_error *err);
/* Terminal summary of the peaks of both spectra to out. */
EW_API ew_status ew_spectra_write_peaks(const ew_spectra *sp, FILE *out, ew_error *err);
/* Write the CSV at csv_path and the pictures at plot_path (FILE the interband chart,
 * FILE-intersubband.ext the intersubband one) under temporary names; either path may be
 * NULL.  written[k] (out; may be NULL) is 1 for each picture drawn.  Nothing appears until
 * ew_spectra_commit_files(sp, 1, …); ok = 0 removes the temporaries. */
EW_API ew_status ew_spectra_stage_files(ew_spectra *sp, const char *csv_path, const char *plot_path,
                                 int written[2], ew_error *err);
EW_API ew_status ew_spectra_commit_files(ew_spectra *sp, int ok, ew_error *err);

/* ---- parameter sweeps (api_sweep.c) ----------------------------------------------------
 * create → vary (once or twice) → open the stack → compute → [stage/commit plots] → free.
 * Columns, rows, shards: see `epiwell sweep` in README.md. */
typedef struct ew_sweep ew_sweep;
typedef struct {
  int threads;             /* 0: every core */
  size_t shard_k, shard_n; /* part K (1-based) of N; N = 0 or 1: all points */
  int header;              /* CSV header: 1 always, 0 never, -1 part 1 only (default) */
  size_t min_levels;       /* columns for at least this many levels per band */
  int keep_table;          /* 1: keep the rows in memory for ew_sweep_stage_plots */
  /* may be NULL: after each point of this part (done = points finished, total = the part's
   * points), from whichever sweep thread finished it (ew_progress_fn); nonzero cancels:
   * ew_sweep_compute returns EW_ERR_CANCELLED and writes no row after the last chunk it
   * had written (rows are written in chunks of 64 points per thread). */
  ew_progress_fn progress;
  void *progress_ctx;
} ew_sweep_options;
EW_API void ew_sweep_options_default(ew_sweep_options *o);
EW_API ew_status ew_sweep_create(ew_sweep **out, ew_error *err);
EW_API void ew_sweep_free(ew_sweep *sw); /* also removes staged pictures not committed */
/* Add a varied key "KEY=FROM:TO:STEP" (at most two: a grid, the first the outer loop). */
EW_API ew_status ew_sweep_vary(ew_sweep *sw, const char *spec, ew_error *err);
EW_API size_t ew_sweep_key_count(const ew_sweep *sw); /* 0 for NULL */
/* Read stack_path (errors with file:line) with cat (must outlive sw) and solver options opt
 * (may be NULL: defaults).  Keys are checked against the stack by ew_sweep_compute. */
EW_API ew_status ew_sweep_open(ew_sweep *sw, const char *stack_path, const ew_catalogue *cat,
                        const ew_options *opt, ew_error *err);
/* Solve every point; CSV to csv and/or JSON to json (either may be NULL); o may be NULL
 * (defaults).  On an error the streams hold partial output. */
EW_API ew_status ew_sweep_compute(ew_sweep *sw, const ew_sweep_options *o, FILE *csv, FILE *json,
                           ew_error *err);
/* The pictures of a computed sweep (keep_table set), k < EW_SWEEP_PLOT_FILES:
 * ew_sweep_plot_suffix(k) is "", "interband", "intersubband" (the companion names of
 * path); written[k] (out; may be NULL) is 0 for a chart with no line to draw (not written).
 * Staged under temporary names; commit with ok = 1 puts them in place, ok = 0 removes them. */
#define EW_SWEEP_PLOT_FILES 3
EW_API const char *ew_sweep_plot_suffix(int k); /* NULL out of range */
EW_API ew_status ew_sweep_stage_plots(ew_sweep *sw, const char *path,
                               int written[EW_SWEEP_PLOT_FILES], ew_error *err);
EW_API ew_status ew_sweep_commit_plots(ew_sweep *sw, int ok, ew_error *err);

/* Join the parts of a sweep computed with --shard K/N on several machines into exactly the
 * output of one machine (byte for byte), in point order whatever the order of paths (n of
 * them; every part JSON, or every part CSV).  JSON parts say which part they are; CSV parts
 * do not, so sw (may be NULL for JSON parts) must hold the sweep's ranges (ew_sweep_vary, as
 * the sweep had them; no stack needs to be opened): the rows are placed by their values.
 * Nothing is written to out unless every part checks: EW_ERR_INPUT naming the part for a
 * part missing, given twice, of another sweep (stack, keys, columns, point count) or cut
 * short; EW_ERR_IO when a part cannot be read or out written. */
EW_API ew_status ew_sweep_merge(const ew_sweep *sw, size_t n, const char *const *paths, FILE *out,
                                ew_error *err);

/* ---- inverse matching (api_match.c) ----------------------------------------------------
 * Which value of one key (or pair of values of two keys) puts one line (two lines) at a
 * target: create → vary, line, target (once each per unknown) [→ tolerance] → compute. */
typedef struct ew_match ew_match;
EW_API ew_status ew_match_create(ew_match **out, ew_error *err);
EW_API void ew_match_free(ew_match *mt);
EW_API ew_status ew_match_vary(ew_match *mt, const char *spec, ew_error *err); /* KEY=FROM:TO[:STEP] */
/* A line "A-B" (levels of one band or an electron and a hole level) or "A-B:pl". */
EW_API ew_status ew_match_line(ew_match *mt, const char *line, ew_error *err);
/* A target quantity with its unit: "9.0um", "1.548eV", "154meV", "800nm". */
EW_API ew_status ew_match_target(ew_match *mt, const char *quantity, ew_error *err);
/* One unknown only: also solve at target ± tolerance (may be "0eV"). */
EW_API ew_status ew_match_tolerance(ew_match *mt, const char *quantity, ew_error *err);
/* Solve with the stack at stack_path, cat, options opt (may be NULL), threads (0: every
 * core) and samples per range (0: the default).  No solution is not an error. */
EW_API ew_status ew_match_compute(ew_match *mt, const char *stack_path, const ew_catalogue *cat,
                           const ew_options *opt, int threads, size_t samples, ew_error *err);
/* Progress of ew_match_compute (fn may be NULL: none): one step per solve, total 0 (the
 * solves a match needs depend on what it finds); nonzero cancels (EW_ERR_CANCELLED). */
EW_API ew_status ew_match_progress(ew_match *mt, ew_progress_fn fn, void *ctx, ew_error *err);
EW_API size_t ew_match_solution_count(const ew_match *mt); /* 0 for NULL or before compute */
/* Value of unknown k (0 or 1) in solution i; NAN out of range. */
EW_API double ew_match_solution_value(const ew_match *mt, size_t i, size_t k);
/* With no solution: what the range reaches ("no value … reaches …"); "" otherwise. */
EW_API const char *ew_match_message(const ew_match *mt);
EW_API ew_status ew_match_write_table(const ew_match *mt, FILE *out, ew_error *err);
EW_API ew_status ew_match_write_json(const ew_match *mt, FILE *out, ew_error *err);
/* Compute only part k of n (1 ≤ k ≤ n; n ≤ 1: the whole match, the default) of the match's
 * sample scan, so that n machines share one match (README "Sweeps on a cluster"): 1D, the
 * k-th contiguous run of the intervals between samples; 2D, of the rows of grid cells.  After
 * compute, ew_match_write_json writes the part (one line, every number at full precision) and
 * ew_match_write_table refuses (EW_ERR_USAGE); ew_match_merge joins the parts.  Before
 * compute; EW_ERR_USAGE for k outside 1..n. */
EW_API ew_status ew_match_shard(ew_match *mt, size_t k, size_t n, ew_error *err);
/* Join the parts (files written by ew_match_write_json of a sharded match, any order) into
 * exactly the JSON of the whole match, to out.  Nothing is written unless every part checks:
 * EW_ERR_INPUT naming the part for a part missing, given twice, of another match or cut
 * short; EW_ERR_IO when a part cannot be read or out written; EW_ERR_USAGE for n == 0. */
EW_API ew_status ew_match_merge(size_t n, const char *const *paths, FILE *out, ew_error *err);

/* ---- growth tolerances and the monolayer ladder (api_tolerance.c) ---------------------- */
typedef struct ew_tolerance ew_tolerance;
/* Shifts of every level and main line for ±1 monolayer of every layer and ±dx (0 < dx ≤ 0.5)
 * of every alloy's composition (ladder == NULL), or the monolayer ladder of layer ladder
 * (its main lines at −2 … +2 monolayers). */
EW_API ew_status ew_tolerance_compute(const char *stack_path, const ew_catalogue *cat,
                               const ew_options *opt, double dx, const char *ladder,
                               int threads, ew_tolerance **out, ew_error *err);
EW_API void ew_tolerance_free(ew_tolerance *t);
EW_API ew_status ew_tolerance_write_table(const ew_tolerance *t, FILE *out, ew_error *err);
EW_API ew_status ew_tolerance_write_json(const ew_tolerance *t, FILE *out, ew_error *err);
/* The growth-rate uncertainty (percent, 0 ≤ p ≤ 50; all thicknesses scaled together) that the
 * writers' spread of the lines adds to the ±1 ML of every layer and ±dx of every alloy
 * (README "Sweeps, matching and tolerances": "Spread").  Before a write; tolerance runs only
 * (a ladder gives EW_ERR_USAGE). */
EW_API ew_status ew_tolerance_set_growth_rate(ew_tolerance *t, double percent, ew_error *err);

/* ---- hole subband dispersion in the multiband k·p model (api_dispersion.c) ------------
 * 4-band (heavy and light holes) or 6-band (with the split-off band) Luttinger–Kohn model on
 * the solve's grid, or the 8-band model with the Γ conduction band (Foreman-rescaled Kane
 * energy; electron subbands first, then holes: README "Eight bands"), Burt–Foreman operator
 * ordering, Bir–Pikus strain; subband energies
 * against k∥ along [100] or [110], certified at every k∥ by a block LDLᴴ inertia count
 * (README "Hole dispersion").  create → compute (again with other options if wanted) →
 * accessors / writers → free. */
typedef struct {
  int model;           /* 4 (4band, default), 6 (6band) or 8 (8band) */
  int direction;       /* 100 (default) or 110: in-plane direction of k∥ */
  int axial;           /* 1: axial approximation (γ2, γ3 → (γ2 + γ3)/2 in the in-plane
                          warping terms); 0: full warping (default) */
  double kmax_inv_nm;  /* largest k∥, 1/nm, in (0, 10] (default 0.5) */
  size_t points;       /* k∥ samples from 0 to kmax, 2 … 10000 (default 51) */
  double grid_step_nm; /* > 0 overrides the stack's grid_step; 0 = stack's or the solve's
                          default (the same grid as ew_solve) */
  int symmetrised;     /* 1: symmetrised operator ordering instead of Burt–Foreman (default
                          0; for comparison) */
} ew_dispersion_options;
EW_API void ew_dispersion_options_default(ew_dispersion_options *o); /* NULL is a no-op */
typedef struct ew_dispersion ew_dispersion;
EW_API ew_status ew_dispersion_create(ew_dispersion **out, ew_error *err);
EW_API void ew_dispersion_free(ew_dispersion *d); /* NULL is a no-op */
/* Compute the dispersion of stack with options o (may be NULL: the defaults).  EW_ERR_USAGE
 * for bad options, EW_ERR_INPUT when no subband is bound (or a 6- or 8-band layer lacks
 * Delta_so), EW_ERR_NUMERIC when a count disagrees with the computed levels. */
EW_API ew_status ew_dispersion_compute(ew_dispersion *d, const ew_stack *stack,
                                       const ew_dispersion_options *o, ew_error *err);
EW_API size_t ew_dispersion_point_count(const ew_dispersion *d);
EW_API double ew_dispersion_k_inv_nm(const ew_dispersion *d, size_t i); /* NAN out of range */
/* Subbands (Kramers pairs) followed: those bound at k∥ = 0. */
EW_API size_t ew_dispersion_subband_count(const ew_dispersion *d);
/* "hh1", "lh1", "so1", "e1" (8band), …: character at k∥ = 0 and index within it; NULL out
 * of range. */
EW_API const char *ew_dispersion_label(const ew_dispersion *d, size_t j);
/* "hh", "lh", "so" or "e" (8band); NULL out of range. */
EW_API const char *ew_dispersion_band(const ew_dispersion *d, size_t j);
/* Energy of subband j at point i, absolute eV: the mean of its two Kramers branches. */
EW_API double ew_dispersion_energy_eV(const ew_dispersion *d, size_t j, size_t i);
/* Branch 0 or 1 of subband j at point i, absolute eV (they differ only without inversion
 * symmetry). */
EW_API double ew_dispersion_branch_eV(const ew_dispersion *d, size_t j, int branch, size_t i);
/* Eigenvalues the inertia certified at point i (2 × subbands on success). */
EW_API size_t ew_dispersion_certified(const ew_dispersion *d, size_t i);
/* "4band", "6band" or "8band"; "100" or "110" (NULL before compute). */
EW_API const char *ew_dispersion_model(const ew_dispersion *d);
EW_API const char *ew_dispersion_direction(const ew_dispersion *d);
/* Weight (0 … 1) of character c (0 hh, 1 lh, 2 so, 3 e: 8band) in subband j at k∥ = 0; NAN
 * out of range. */
EW_API double ew_dispersion_weight(const ew_dispersion *d, size_t j, int c);
/* JSON {"model":…,"direction":…,"k_inv_nm":[…],"subbands":[{"label":…,"band":…,
 * "energy_eV":[…],"dos_mass_m0":…},…]}; CSV k_inv_nm,LABEL… (one row per k∥); the picture. */
/* Density-of-states mass (m0) of subband j within energy_eV (> 0) of its k∥ = 0 energy:
 * 2π ħ² N(ε)/ε with N the states per area and spin within ε (dos_mass.c; a parabolic band
 * gives its mass); NAN out of range or when the subband is still within ε at kmax.  The JSON
 * prints it at EW_DOS_MASS_WINDOW_EV as "dos_mass_m0". */
#define EW_DOS_MASS_WINDOW_EV 0.025 /* ≈ kT at 290 K */
EW_API double ew_dispersion_dos_mass_m0(const ew_dispersion *d, size_t j, double energy_eV);
EW_API ew_status ew_dispersion_write_json(const ew_dispersion *d, FILE *out, ew_error *err);
EW_API ew_status ew_dispersion_write_csv(const ew_dispersion *d, FILE *out, ew_error *err);
EW_API ew_status ew_dispersion_write_plot(const ew_dispersion *d, const char *path, ew_error *err);

/* ---- minibands of an infinite superlattice (api_minibands.c) ----------------------------
 * The stack is one period d.  The Bloch condition ψ(z + d) = e^{iqd} ψ(z) on the solve's
 * grid gives E_n(q), q in [0, π/d], per band (e, hh, lh) with the growth-axis masses of the
 * single-well solve (the Kane electron mass where it applies), every value certified by an
 * inertia count (README "Minibands").  Followed: the minibands
 * whose bottom lies below the band's bound window top as the single-well solve of the same
 * stack has it (the lower edge of the two outer layers).  create → compute → accessors /
 * writers → free.  Energies are absolute eV; a miniband's "bottom" is its edge nearest its
 * band edge (for holes the higher energy), width = |top − bottom|. */
typedef struct ew_minibands ew_minibands;
EW_API ew_status ew_minibands_create(ew_minibands **out, ew_error *err);
EW_API void ew_minibands_free(ew_minibands *mb); /* NULL is a no-op */
/* points: q samples from 0 to π/d inclusive, 2 … 10000; grid_step_nm > 0 overrides the
 * stack's step, 0 the stack's or the solve's default.  EW_ERR_USAGE for bad arguments,
 * EW_ERR_INPUT for a stack with an applied field or with no miniband below any window top,
 * EW_ERR_NUMERIC when a count does not certify a value, EW_ERR_NOMEM. */
EW_API ew_status ew_minibands_compute(ew_minibands *mb, const ew_stack *stack, size_t points,
                                      double grid_step_nm, ew_error *err);
EW_API double ew_minibands_period_nm(const ew_minibands *mb);    /* NAN before compute */
EW_API double ew_minibands_grid_step_nm(const ew_minibands *mb); /* NAN before compute */
EW_API size_t ew_minibands_point_count(const ew_minibands *mb);
EW_API double ew_minibands_q_inv_nm(const ew_minibands *mb, size_t i); /* NAN out of range */
/* Minibands followed: electrons first, then heavy and light holes, each from its band edge. */
EW_API size_t ew_minibands_count(const ew_minibands *mb);
EW_API const char *ew_minibands_band(const ew_minibands *mb, size_t j);  /* "e", "hh", "lh" (k·p: "so") */
EW_API const char *ew_minibands_label(const ew_minibands *mb, size_t j); /* "e1", "hh2", … */
EW_API int ew_minibands_index(const ew_minibands *mb, size_t j); /* 1-based; 0 out of range */
/* Absolute eV (NAN out of range); mass at the bottom in m0, from the curvature there. */
EW_API double ew_minibands_bottom_eV(const ew_minibands *mb, size_t j);
EW_API double ew_minibands_top_eV(const ew_minibands *mb, size_t j);
EW_API double ew_minibands_width_eV(const ew_minibands *mb, size_t j);
EW_API double ew_minibands_mass_m0(const ew_minibands *mb, size_t j);
EW_API double ew_minibands_energy_eV(const ew_minibands *mb, size_t j, size_t i);
/* The largest certified |E − E_exact(grid)| bound of miniband j over its points (the
 * eigenvalue of the discrete problem, not the grid error). */
EW_API double ew_minibands_bound_eV(const ew_minibands *mb, size_t j);
/* Window top of band (absolute eV) that chose the minibands (k·p models: the period's highest
 * conduction edge for EW_BAND_E, NAN without the conduction band, and its lowest valence top
 * for the hole bands). */
EW_API double ew_minibands_window_top_eV(const ew_minibands *mb, ew_band band);
/* Warnings of the computation (code "miniband-doping-ignored": the stack is doped, the
 * minibands are flat-band).  warning(i): the code, NULL out of range; warning_text(i): one
 * sentence. */
EW_API size_t ew_minibands_warning_count(const ew_minibands *mb);
EW_API const char *ew_minibands_warning(const ew_minibands *mb, size_t i);
EW_API const char *ew_minibands_warning_text(const ew_minibands *mb, size_t i);
/* "kane" when electrons take the Kane energy-dependent mass (exactly when ew_solve would:
 * the stack's nonparabolic setting and layers with E_P), else "parabolic"; NULL before
 * compute. */
EW_API const char *ew_minibands_electron_mass(const ew_minibands *mb);
/* JSON {"period_nm":…,"grid_step_nm":…,"electron_mass":"kane"|"parabolic","warnings":[…],
 * "minibands":[{"band":"e","index":1,"label":"e1","bottom_eV":…,"top_eV":…,"width_eV":…,
 * "mass_m0":…,"bound_eV":…,"q_inv_nm":[…],"energy_eV":[…]},…]};
 * CSV q_inv_nm,LABEL_eV… (one row per q); the picture E(q) (.svg/.png). */
EW_API ew_status ew_minibands_write_json(const ew_minibands *mb, FILE *out, ew_error *err);
EW_API ew_status ew_minibands_write_csv(const ew_minibands *mb, FILE *out, ew_error *err);
EW_API ew_status ew_minibands_write_plot(const ew_minibands *mb, const char *path, ew_error *err);
/* The multiband k·p minibands of the same period (README "Minibands", "Eight bands"): the
 * 4-, 6- or 8-band (bands = 4, 6, 8) Hamiltonian of the dispersion (Burt–Foreman ordering,
 * Foreman's Ep rescaling) on one period with the Bloch condition; E(q) at k∥ = 0 on points q
 * samples (as ew_minibands_compute) and E(k∥) at q = 0 on kpoints samples from 0 to
 * kmax_inv_nm (1/nm, along [100]; kpoints 0: none).  8-band: the electron minibands (e1 …,
 * bottoms below the period's highest conduction edge, 1 to 4) and the hole minibands (tops
 * above its lowest valence top, 1 to 8, labelled hh/lh/so by their q = 0 character); 4/6-band:
 * the hole minibands.  Each miniband is a Kramers pair, printed as the pair's mean; every
 * window certified by inertia counts, and (8-band) no state inside the gap at any point.
 * Errors as ew_minibands_compute (EW_ERR_INPUT also for a layer the model cannot take). */
EW_API ew_status ew_minibands_compute_kp(ew_minibands *mb, const ew_stack *stack, int bands,
                                         size_t points, double grid_step_nm,
                                         double kmax_inv_nm, size_t kpoints, ew_error *err);
/* "1band" (ew_minibands_compute), "4band", "6band", "8band"; NULL before compute. */
EW_API const char *ew_minibands_model(const ew_minibands *mb);
/* 8-band: the superlattice gap, min over q of e1 − max over q of the top hole miniband, eV
 * (negative: semimetal); NAN otherwise. */
EW_API double ew_minibands_gap_eV(const ew_minibands *mb);
/* The in-plane samples at q = 0 (k·p models; 0 otherwise), k∥ in 1/nm and miniband j's
 * energy there (absolute eV; NAN out of range). */
EW_API size_t ew_minibands_k_count(const ew_minibands *mb);
EW_API double ew_minibands_k_inv_nm(const ew_minibands *mb, size_t i);
EW_API double ew_minibands_energy_k_eV(const ew_minibands *mb, size_t j, size_t i);
/* k·p JSON additions (after "minibands"): "model":"8band","gap_eV":…,"k_inv_nm":[…], and in
 * each miniband "energy_k_eV":[…]; every JSON ends with "model".  CSV of E(k∥) at q = 0:
 * k_inv_nm,LABEL_eV… (one row per k∥); EW_ERR_USAGE without in-plane samples. */
EW_API ew_status ew_minibands_write_csv_k(const ew_minibands *mb, FILE *out, ew_error *err);
/* ---- material gain of an undoped well with injected carriers (api_gain.c) --------------
 * TE and TM material gain (1/cm) and the spontaneous-emission spectrum at each sheet carrier
 * density (equal electrons and holes): electrons from the solver's subbands (parabolic in
 * k∥ with their in-plane masses), holes from the 4- or 6-band k·p dispersion (axial
 * approximation), momentum matrix elements from the k·p eigenvectors and the electron
 * envelopes, quasi-Fermi levels by root finding of the density integrals (README "Gain").
 * create → compute → accessors / writers → free. */
typedef struct {
  int model;                 /* 4 (default) or 6: the hole k·p model */
  double density_from_cm2;   /* sheet densities from, to, step (cm^-2; default 1e12, 5e12, */
  double density_to_cm2;     /* 1e12); from > 0, to >= from, step > 0, at most 1000 */
  double density_step_cm2;
  double linewidth_meV;      /* FWHM of the lineshape, (0, 200] (default 10) */
  int lorentzian;            /* 1: Lorentzian lineshape; 0: hyperbolic secant (default) */
  double refractive_index;   /* background index n_r (default 3.6; the catalogue has none) */
  double energy_from_eV;     /* photon energies, absolute eV; from = to = 0 (default): the */
  double energy_to_eV;       /* lowest transition − 0.1 eV to + 0.2 eV */
  double energy_step_eV;     /* default 0.001; at most 20000 energies */
  double kmax_inv_nm;        /* hole dispersion to kmax (default 0.8 /nm), k_points samples */
  size_t k_points;           /* (default 65; 2 … 2000; the k·p solve follows the subbands
                                reliably at steps up to ~0.0125 /nm) */
  double grid_step_nm;       /* as ew_options (0: the stack's or the default) */
} ew_gain_options;
EW_API void ew_gain_options_default(ew_gain_options *o); /* NULL is a no-op */
typedef struct ew_gain ew_gain;
EW_API ew_status ew_gain_create(ew_gain **out, ew_error *err);
EW_API void ew_gain_free(ew_gain *g); /* NULL is a no-op */
/* Compute the spectra of stack with options o (may be NULL: the defaults).  EW_ERR_USAGE for
 * bad options; EW_ERR_INPUT for a doped stack, no bound electron or hole subband, or a well
 * material without a Kane energy Ep (user materials); EW_ERR_NUMERIC from the k·p solve. */
EW_API ew_status ew_gain_compute(ew_gain *g, const ew_stack *stack, const ew_gain_options *o,
                                 ew_error *err);
EW_API size_t ew_gain_density_count(const ew_gain *g);
EW_API size_t ew_gain_energy_count(const ew_gain *g);
EW_API double ew_gain_density_cm2(const ew_gain *g, size_t d);       /* NAN out of range */
EW_API double ew_gain_fermi_electron_eV(const ew_gain *g, size_t d); /* absolute eV */
EW_API double ew_gain_fermi_hole_eV(const ew_gain *g, size_t d);
EW_API double ew_gain_fermi_separation_eV(const ew_gain *g, size_t d);
EW_API double ew_gain_energy_eV(const ew_gain *g, size_t i);
/* TE, TM gain (1/cm, negative: absorption) and spontaneous emission (1/(s cm³ eV)) at
 * density d and photon energy i. */
EW_API double ew_gain_te_cm(const ew_gain *g, size_t d, size_t i);
EW_API double ew_gain_tm_cm(const ew_gain *g, size_t d, size_t i);
EW_API double ew_gain_spontaneous(const ew_gain *g, size_t d, size_t i);
/* Largest TE gain over the spectrum at density d (1/cm), its photon energy (eV); largest TM. */
EW_API double ew_gain_peak_te_cm(const ew_gain *g, size_t d);
EW_API double ew_gain_peak_te_energy_eV(const ew_gain *g, size_t d);
EW_API double ew_gain_peak_tm_cm(const ew_gain *g, size_t d);
/* Density at which Fc − Fv reaches the lowest transition energy (cm^-2; NAN if not reached
 * in 1e8 … 1e15); that lowest transition (e_n − hole branch at k∥ = 0, eV). */
EW_API double ew_gain_transparency_density_cm2(const ew_gain *g);
EW_API double ew_gain_edge_eV(const ew_gain *g);
/* Well width L_w (nm) and Kane energy Ep (eV) used; the lineshape "sech" or "lorentzian". */
EW_API double ew_gain_well_nm(const ew_gain *g);
EW_API double ew_gain_Ep_eV(const ew_gain *g);
EW_API const char *ew_gain_lineshape(const ew_gain *g);
/* JSON {"model":…,…,"transparency_density_cm2":…,"densities":[{"density_cm2":…,
 * "fermi_separation_eV":…,"energy_eV":[…],"gain_te_cm":[…],"gain_tm_cm":[…],
 * "spontaneous":[…],…},…]}; CSV one row per density and energy; the TE gain picture. */
EW_API ew_status ew_gain_write_json(const ew_gain *g, FILE *out, ew_error *err);
EW_API ew_status ew_gain_write_csv(const ew_gain *g, FILE *out, ew_error *err);
EW_API ew_status ew_gain_write_plot(const ew_gain *g, const char *path, ew_error *err);

/* ---- hole intersubband absorption with TE and TM components (api_hole_absorption.c) ----
 * The absorption α(ħω) (1/cm: per pass of one well divided by the thickness L_w of the layer
 * holding the first hole subband, no geometry factor) of transitions between the hole
 * subbands of a well holding a given hole sheet density, from the 4- or 6-band k·p
 * eigenvectors (axial approximation): matrix elements of the k·p velocity operator, ∂H/∂k∥
 * (TE) and i[H, z] (TM), summed over k∥ with Fermi occupations at the quasi-Fermi level of
 * the density at the stack's temperature, broadened by a hyperbolic secant or a Lorentzian
 * (README "Hole intersubband absorption").  create → compute → accessors / writers → free. */
typedef struct {
  int model;               /* 4 (default) or 6: the hole k·p model */
  double density_cm2;      /* hole sheet density per well, cm^-2, in (0, 1e15] (no default:
                              0 is refused) */
  double linewidth_meV;    /* FWHM, (0, 200] (default 10) */
  int lorentzian;          /* 1: Lorentzian; 0: hyperbolic secant (default) */
  double refractive_index; /* n_r (default 3.3: GaAs in the mid infrared, from memory) */
  double energy_from_eV;   /* photon energies; from = to = 0 (default): 0.005 eV to the */
  double energy_to_eV;     /* largest k∥ = 0 transition + 0.1 eV */
  double energy_step_eV;   /* default 0.001; at most 20000 energies */
  double kmax_inv_nm;      /* k∥ to kmax (default 0.8 /nm), k_points samples (default 65, */
  size_t k_points;         /* 2 … 2000) */
  double grid_step_nm;     /* as ew_options (0: the stack's or the default) */
} ew_hole_absorption_options;
EW_API void ew_hole_absorption_options_default(ew_hole_absorption_options *o); /* NULL no-op */
typedef struct ew_hole_absorption ew_hole_absorption;
EW_API ew_status ew_hole_absorption_create(ew_hole_absorption **out, ew_error *err);
EW_API void ew_hole_absorption_free(ew_hole_absorption *h); /* NULL is a no-op */
/* EW_ERR_USAGE for bad options; EW_ERR_INPUT for a doped stack (give the density instead),
 * no temperature, fewer than two bound hole subbands; EW_ERR_NUMERIC from the k·p solve. */
EW_API ew_status ew_hole_absorption_compute(ew_hole_absorption *h, const ew_stack *stack,
                                            const ew_hole_absorption_options *o, ew_error *err);
EW_API double ew_hole_absorption_density_cm2(const ew_hole_absorption *h); /* NAN before */
EW_API double ew_hole_absorption_fermi_eV(const ew_hole_absorption *h);    /* absolute eV */
EW_API double ew_hole_absorption_well_nm(const ew_hole_absorption *h);
EW_API const char *ew_hole_absorption_lineshape(const ew_hole_absorption *h); /* sech|lorentzian */
EW_API size_t ew_hole_absorption_energy_count(const ew_hole_absorption *h);
EW_API double ew_hole_absorption_energy_eV(const ew_hole_absorption *h, size_t i); /* NAN out */
EW_API double ew_hole_absorption_te_cm(const ew_hole_absorption *h, size_t i);
EW_API double ew_hole_absorption_tm_cm(const ew_hole_absorption *h, size_t i);
/* Hole subbands (k·p labels "hh1", "lh1", …) and their energies (absolute eV) on the k∥ grid. */
EW_API size_t ew_hole_absorption_subband_count(const ew_hole_absorption *h);
EW_API const char *ew_hole_absorption_label(const ew_hole_absorption *h, size_t j);
EW_API size_t ew_hole_absorption_point_count(const ew_hole_absorption *h);
EW_API double ew_hole_absorption_k_inv_nm(const ew_hole_absorption *h, size_t i);
EW_API double ew_hole_absorption_subband_eV(const ew_hole_absorption *h, size_t j, size_t i);
/* Transitions t (every pair of subbands u < l, the hole going from u to the deeper l):
 * from, to (subband indices), energy E_u − E_l at k∥ = 0 (eV), and at point i the squared
 * matrix elements |M|² = |ħ ê·v|² summed over both Kramers branches of each subband
 * (eV² nm²): TE, TM (commutator form) and TM from the dipole (E_l − E_u) ⟨u|z|l⟩. */
EW_API size_t ew_hole_absorption_transition_count(const ew_hole_absorption *h);
EW_API size_t ew_hole_absorption_transition_from(const ew_hole_absorption *h, size_t t);
EW_API size_t ew_hole_absorption_transition_to(const ew_hole_absorption *h, size_t t);
EW_API double ew_hole_absorption_transition_eV(const ew_hole_absorption *h, size_t t);
EW_API double ew_hole_absorption_te_eV2nm2(const ew_hole_absorption *h, size_t t, size_t i);
EW_API double ew_hole_absorption_tm_eV2nm2(const ew_hole_absorption *h, size_t t, size_t i);
EW_API double ew_hole_absorption_dipole_tm_eV2nm2(const ew_hole_absorption *h, size_t t,
                                                  size_t i);
/* Peak of α_TE / α_TM over the spectrum: photon energy (eV). */
EW_API double ew_hole_absorption_peak_te_eV(const ew_hole_absorption *h);
EW_API double ew_hole_absorption_peak_tm_eV(const ew_hole_absorption *h);
/* JSON {"model":…,"temperature_K":…,"density_cm2":…,"fermi_eV":…,"well_nm":…,
 * "linewidth_meV":…,"lineshape":…,"energy_eV":[…],"absorption_te_cm":[…],
 * "absorption_tm_cm":[…],"transitions":[{"from":"hh1","to":"hh2","energy_eV":…,
 * "te_eV2nm2":…,"tm_eV2nm2":…},…]} (matrix elements at k∥ = 0); CSV energy_eV,
 * absorption_te_cm,absorption_tm_cm; the picture of both (.svg/.png). */
EW_API ew_status ew_hole_absorption_write_json(const ew_hole_absorption *h, FILE *out,
                                               ew_error *err);
EW_API ew_status ew_hole_absorption_write_csv(const ew_hole_absorption *h, FILE *out,
                                              ew_error *err);
EW_API ew_status ew_hole_absorption_write_plot(const ew_hole_absorption *h, const char *path,
                                               ew_error *err);

/* ==== Version, struct sizes and stacks with settings (api_version.c) ====================
 * A program built against one version of this header may run with another shared library.
 * ew_version() is the library's "MAJOR.MINOR.PATCH" (a static string).  The *_size()
 * functions return sizeof of each public struct as the library was compiled: a caller
 * compares them with its own sizeof (or EW_ABI_CHECK()) before passing any such struct, and
 * a language binding checks its own layouts with them.  A mismatch means the header and the
 * library disagree: rebuild against the installed header. */
EW_API const char *ew_version(void);
EW_API size_t ew_error_size(void);
EW_API size_t ew_options_size(void);
EW_API size_t ew_state_size(void);
EW_API size_t ew_line_size(void);
EW_API size_t ew_sweep_options_size(void);
EW_API size_t ew_dispersion_options_size(void);
EW_API size_t ew_gain_options_size(void);
EW_API size_t ew_hole_absorption_options_size(void);
/* 1 when every public struct has the size this header gives it, else 0. */
#define EW_ABI_CHECK()                                                                     \
  (ew_error_size() == sizeof(ew_error) && ew_options_size() == sizeof(ew_options) &&        \
   ew_state_size() == sizeof(ew_state) && ew_line_size() == sizeof(ew_line) &&              \
   ew_sweep_options_size() == sizeof(ew_sweep_options) &&                                    \
   ew_dispersion_options_size() == sizeof(ew_dispersion_options) &&                        \
   ew_gain_options_size() == sizeof(ew_gain_options) &&                                    \
   ew_hole_absorption_options_size() == sizeof(ew_hole_absorption_options))

/* Read a stack from text (as ew_stack_read_string) with keys[i] set to values[i], i < nkeys
 * (keys as in `epiwell sweep --vary`: "temperature", "grid_step", "well.thickness",
 * "barrier.x", "well.doping.donors", …; a setting absent from the text is added).  keys and
 * values may be NULL when nkeys is 0.  Errors: EW_ERR_INPUT with the display_name and line
 * of the offending setting (the message names the keys set); EW_ERR_USAGE for a key that
 * names no numeric setting or a value that is not finite.  *out (owned by the caller, freed
 * with ew_stack_free) keeps no pointer into text, keys, values or cat. */
EW_API ew_status ew_stack_read_string_set(const char *text, const char *display_name,
                                          const ew_catalogue *cat, size_t nkeys,
                                          const char *const *keys, const double *values,
                                          ew_stack **out, ew_error *err);

#ifdef __cplusplus
}
#endif
#endif
